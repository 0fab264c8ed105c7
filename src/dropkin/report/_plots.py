"""Paper-ready figures of one analysis: radius, local exponent, residuals, overlays.

The figures are drawn from the records of the analysis, the
:class:`~dropkin.series.RadiusSeries` and the
:class:`~dropkin.scaling.RegimeVerdict`, in the style of :mod:`._style`.
"""

from __future__ import annotations

import math
import warnings
from pathlib import Path

import numpy as np

from .._atomic import completed_files
from ._angles import plot_contact_angles
from ._curves import _candidate_curve, _dominant, _window, dominant_curve, fit_times
from ._dense import draw_points
from ._jobs import run_jobs
from ._legend import place_legend
from ._local import plot_local_exponent
from ._origin import series_arrays, time_origin
from ._residuals import plot_residuals as _plot_residuals
from ._style import (
    _CYCLE,
    _DASHES,
    _GREY,
    _RC,
    _WIDTH_IN,
    OKABE_ITO,
    PLOT_FORMATS,
    _exponent_text,
    _finite,
    _import_matplotlib,
    _log_axis,
    _new_figure,
    _num,
    _save,
)

__all__ = ["write_plots", "figure_makers", "PLOT_NAMES", "dominant_curve", "fit_times"]

_STATUS_MARKERS = {
    "unresolved": "v",
    "not-found": "x",
    "at-edge": "s",
    "before-contact": "^",
    "after-growth": "d",
}

#: Stems of the figures that `write_plots` can write (each in the formats asked for).
PLOT_NAMES = ("radius", "local_exponent", "residuals", "contact_angle", "overlays")


def _plot_points(ax, tau, r, err, status, good):
    """The ok frames with their error bars; the others in grey, a marker per status.

    Returns the (τ in ms, r in mm) of every marker drawn and of its error
    bar's ends, for the legend's corner, and whether a group was binned.
    """
    look = {"ms": 2.5, "mfc": "none", "mew": 0.6}
    ok = good & (status == "ok")
    drawn, binned = draw_points(
        ax,
        tau[ok],
        r[ok],
        err=err[ok],
        label="ok",
        scale=1e3,
        marker="o",
        elinewidth=0.5,
        color=OKABE_ITO["blue"],
        zorder=3,
        **look,
    )
    for name, marker in _STATUS_MARKERS.items():
        sel = good & (status == name)
        if sel.any():
            points, grouped = draw_points(
                ax, tau[sel], r[sel], label=name, scale=1e3, marker=marker, color=_GREY, **look
            )
            drawn, binned = drawn + points, binned or grouped
    return drawn, binned


def _plot_laws(ax, series, verdict):
    """The dominant free fit (solid) and every consistent candidate's law (dashed)."""
    dom = _dominant(verdict)
    win = _window(dom)
    if win is not None:
        t = np.geomspace(*win, 100)
        curve = dominant_curve(verdict, t)
        if curve is not None:
            n = _num(dom.exponent_fit)
            label = f"{dom.key}, fit n = {n:.3f}" if _finite(n) else dom.key
            ax.plot(t * 1e3, curve * 1e3, "-", color=OKABE_ITO["black"], lw=1.4, label=label)
    k = 0
    for cand in verdict.candidates:
        cwin = _window(cand)
        if not cand.consistent or cwin is None or _num(cand.prefactor_fit) is None:
            continue
        t = np.geomspace(*cwin, 100)
        curve = _candidate_curve(cand, verdict, series, t)
        label = cand.key
        if not cand.regime.logarithmic:
            label += f" law, n = {_exponent_text(_num(cand.exponent_theory))}"
        else:
            label += " law (log)"
        ax.plot(
            t * 1e3,
            curve * 1e3,
            ls=_DASHES[k % len(_DASHES)],
            color=OKABE_ITO[_CYCLE[k % len(_CYCLE)]],
            label=label,
            zorder=4,
        )
        k += 1


def _plot_crossovers(ax, verdict):
    for j, cross in enumerate(verdict.crossovers if verdict else ()):
        tc = _num(cross.time)
        if not (_finite(tc) and tc > 0):
            continue
        ax.axvline(tc * 1e3, color=OKABE_ITO["reddish purple"], ls=":", lw=0.9)
        ax.annotate(
            f"{cross.early} → {cross.late}",
            xy=(tc * 1e3, 0.04 + 0.08 * j),
            xycoords=("data", "axes fraction"),
            xytext=(2, 0),
            textcoords="offset points",
            rotation=90,
            fontsize=6.5,
            va="bottom",
            color=OKABE_ITO["reddish purple"],
        )


def _plot_radius(series, verdict):
    tau, r, err, status = series_arrays(series, verdict)
    good = np.isfinite(tau) & np.isfinite(r) & (tau > 0) & (r > 0)
    fig = _new_figure(2.6)
    ax = fig.add_subplot()
    drawn, binned = _plot_points(ax, tau, r, err, status, good)
    _plot_laws(ax, series, verdict)
    _plot_crossovers(ax, verdict)
    if good.any():
        ax.set_xscale("log")
        ax.set_yscale("log")
        _log_axis(ax.xaxis)
        _log_axis(ax.yaxis)
    else:
        ax.text(0.5, 0.5, "no radius after contact", transform=ax.transAxes, ha="center")
    ax.set_xlabel(time_origin(series, verdict).axis_label)
    ax.set_ylabel("radius r (mm)")
    if ax.get_legend_handles_labels()[0]:
        place_legend(ax, drawn, binned=binned, handlelength=2.2)
    return fig


def _read_frame(path):
    """An overlay frame as an array: 8-bit RGB(A) as it is stored (matplotlib's own reader
    turns a PNG into floats, which take longer to read and to draw, for the same pixels)."""
    from PIL import Image

    with Image.open(path) as image:
        if image.mode in ("RGB", "RGBA"):
            return np.asarray(image)
    import matplotlib.image as mpimg

    return mpimg.imread(path)


def _plot_overlays(files):
    cols = min(3, len(files))
    rows = math.ceil(len(files) / cols)
    images = [_read_frame(path) for path in files]
    aspect = images[0].shape[0] / max(images[0].shape[1], 1)
    fig = _new_figure(max(1.0, rows * (_WIDTH_IN / cols) * aspect + 0.2 * rows))
    for k, (path, image) in enumerate(zip(files, images, strict=True)):
        ax = fig.add_subplot(rows, cols, k + 1)
        ax.imshow(image, cmap="gray" if image.ndim == 2 else None, interpolation="nearest")
        ax.set_axis_off()
        ax.set_title(path.stem.replace("_", " "), fontsize=6.5, pad=2)
    return fig


def figure_makers(series, verdict, overlay_files=()) -> dict:
    """The figures that apply to an analysis, by stem, each as a function that draws it
    (see :func:`write_plots`); ``overlays`` only with `overlay_files`."""
    label = time_origin(series, verdict).axis_label
    figures = {"radius": lambda: _plot_radius(series, verdict)}
    if verdict and verdict.local:
        figures["local_exponent"] = lambda: plot_local_exponent(verdict, series, label)
    if _dominant(verdict):
        figures["residuals"] = lambda: _plot_residuals(series, verdict)
    if series.angles is not None and np.isfinite(np.asarray(series.angles, float)).any():
        figures["contact_angle"] = lambda: plot_contact_angles(series, verdict)
    if overlay_files:
        figures["overlays"] = lambda: _plot_overlays(overlay_files)
    return figures


def _saver(draw, plots_dir: Path, stem: str, formats):
    """A job that draws one figure and saves it in each of `formats`; it returns the files."""
    return lambda: _save(draw(), plots_dir, stem, formats)


def write_plots(out_dir, *, series, verdict, overlays_dir=None, formats=("png",)) -> list[Path]:
    """Write the analysis figures into ``out_dir/plots/``, as PNG unless asked otherwise.

    Parameters
    ----------
    out_dir : path
        The analysis folder; figures go to its ``plots/`` subfolder.
    series : RadiusSeries
        The radius series (with its contact angles, for a spreading drop seen
        from the side).
    verdict : RegimeVerdict
        The regime verdict; a failed one still gets the radius plot.
    overlays_dir : path, optional
        The annotated frames for the montage (default ``out_dir/overlays``).
    formats : sequence of str
        File formats, each of :data:`PLOT_FORMATS` (``png``, ``svg``,
        ``pdf``); each figure is laid out once and saved in each.

    Returns
    -------
    list of pathlib.Path
        The files written: ``radius`` always; ``local_exponent`` when the
        verdict has one; ``residuals`` when it has a dominant regime;
        ``contact_angle`` when the series has contact angles; ``overlays``
        when there are overlay frames, each in every format asked for. A figure
        of an earlier run that does not apply any more, or a format not
        asked for, is removed.

    Notes
    -----
    Every time axis is τ from the one origin of :func:`~dropkin.report._origin.time_origin`
    (the fitted t₀), named in its label.

    - ``radius``: r against τ, log-log; ok frames with error bars, the other
      statuses in grey with their own markers; the dominant free fit as a solid
      line over its window; every consistent candidate's law (theoretical
      exponent, fitted prefactor) dashed; crossovers as vertical dotted lines.
    - ``local_exponent``: d ln r / d ln τ with its band, a horizontal guide at
      each power law's exponent and the log laws' own local exponent as a
      curve, named in a legend below the axes.
    - ``residuals``: r / fit − 1 of the dominant fit for the ok frames.
    - ``contact_angle``: the apparent contact angles, left and right.
    - ``overlays``: a montage of the annotated frames.

    A group of points of more than :data:`~dropkin.report._dense.MAX_DRAWN`
    rows is drawn binned (:func:`~dropkin.report._dense.draw_points`): the
    medians of log-spaced τ bins with their 16–84 % spread, said in the
    legend. Each legend sits in the corner it covers least, or below the axes
    (:func:`~dropkin.report._legend.place_legend`).

    Each file is written atomically. On Linux with two free cores the
    figures are shared with a forked child process
    (:func:`~dropkin.report._jobs.run_jobs`), with the same files as
    when they are drawn one after the other.
    """
    matplotlib = _import_matplotlib(formats)
    out_dir = Path(out_dir)
    plots_dir = out_dir / "plots"
    plots_dir.mkdir(parents=True, exist_ok=True)
    files = completed_files(Path(overlays_dir or out_dir / "overlays"), "*.png")
    figures = figure_makers(series, verdict, files)
    with matplotlib.rc_context(_RC), warnings.catch_warnings(), np.errstate(all="ignore"):
        # data spanning hundreds of decades overflow matplotlib's transforms or
        # make it adjust a log axis itself, with a warning (attributed to the
        # caller); the figure is still drawn, and the numbers are in the files
        warnings.simplefilter("ignore", UserWarning)
        warnings.simplefilter("ignore", RuntimeWarning)
        # the montage, the longest to draw, first (see run_jobs)
        stems = sorted(figures, key=lambda stem: stem != "overlays")
        saved = run_jobs([_saver(figures[stem], plots_dir, stem, formats) for stem in stems])
        by_stem = dict(zip(stems, saved, strict=True))
        written = [path for stem in figures for path in by_stem[stem]]
    for stem in set(PLOT_NAMES) - set(figures):
        for ext in PLOT_FORMATS:
            (plots_dir / f"{stem}.{ext}").unlink(missing_ok=True)
    return written
