"""Paper-ready figures of one analysis: radius, local exponent, residuals, overlays.

The figures are drawn from the records of the analysis, the
:class:`~dropkin.series.RadiusSeries` and the
:class:`~dropkin.scaling.RegimeVerdict`, in the style of :mod:`._style`.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from .._atomic import completed_files
from ._style import (
    _CYCLE,
    _DASHES,
    _GREY,
    _RC,
    _WIDTH_IN,
    OKABE_ITO,
    _exponent_text,
    _finite,
    _log_axis,
    _new_figure,
    _num,
    _save,
)

__all__ = ["write_plots", "PLOT_NAMES", "dominant_curve", "fit_times"]

_STATUS_MARKERS = {"unresolved": "v", "not-found": "x", "at-edge": "s", "before-contact": "^"}

#: Stems of the figures that `write_plots` can write (each as .png and .svg).
PLOT_NAMES = ("radius", "local_exponent", "residuals", "overlays")


def _window(candidate):
    """A candidate's window as a pair of positive floats, or None."""
    w = candidate.window if candidate else None
    w = None if w is None or len(w) != 2 else [_num(v) for v in w]
    if not w or not all(_finite(v) for v in w) or not 0 < w[0] < w[1]:
        return None
    return float(w[0]), float(w[1])


def _dominant(verdict):
    """The dominant candidate of a successful verdict, or None."""
    return verdict.dominant if verdict else None


def fit_times(series, verdict) -> np.ndarray:
    """Time of every frame since the fitted contact instant (s); NaN where unknown.

    The fit's windows count from its own contact time ``verdict.t0`` (which
    may differ a little from the measured one); plotting against the same
    origin keeps data and laws on one axis. Without it, the series' own time
    since contact is used.
    """
    t0 = _num(verdict.t0) if verdict else None
    if t0 is not None:
        return np.asarray(series.time, dtype=float) - t0
    return np.asarray(series.since_contact, dtype=float)


def _law_radius(tau, *, exponent, prefactor, logarithmic=False, speed=None, drop_radius=None):
    """r(τ) of one law: ``C τ^n``, or the ELS law ``-(C/u) uτ ln(uτ/R)`` held at its peak."""
    tau = np.asarray(tau, dtype=float)
    if logarithmic:
        if not (_finite(speed) and _finite(drop_radius) and speed > 0 and drop_radius > 0):
            return np.full(tau.shape, np.nan)
        x = np.minimum(speed * tau / drop_radius, math.exp(-1.0))
        return prefactor / speed * x * drop_radius * -np.log(x)
    return prefactor * tau**exponent


def _candidate_curve(cand, verdict, series, tau):
    numbers = verdict.numbers
    return _law_radius(
        tau,
        exponent=_num(cand.exponent_theory),
        prefactor=_num(cand.prefactor_fit),
        logarithmic=bool(cand.regime.logarithmic),
        speed=None if numbers is None else _num(numbers.capillary_speed),
        drop_radius=_num(series.drop_radius),
    )


def dominant_curve(verdict, tau) -> np.ndarray | None:
    """The dominant regime's free fit ``r(τ)`` (m), or None without one.

    The free fit passes through its pivot point with slope ``exponent_fit``;
    without a pivot, the law at its theoretical exponent with the fitted
    prefactor is used.
    """
    dom = _dominant(verdict)
    if not dom:
        return None
    tau = np.asarray(tau, dtype=float)
    fit = getattr(dom, "fit", None)
    pivot = fit if fit is not None and hasattr(fit, "pivot_time") else None
    n = _num(dom.exponent_fit if pivot is None else pivot.exponent)
    time, radius = (None, None) if pivot is None else (pivot.pivot_time, pivot.pivot_radius)
    time, radius = _num(time), _num(radius)
    if time is not None and radius is not None and n is not None:
        return radius * (tau / time) ** n
    theory, prefactor = _num(dom.exponent_theory), _num(dom.prefactor_fit)
    if theory is not None and prefactor is not None:
        return prefactor * tau**theory
    return None


def _plot_points(ax, tau, r, err, status, good):
    """The ok frames with their error bars; the others in grey, a marker per status."""
    ok = good & (status == "ok")
    ax.errorbar(
        tau[ok] * 1e3,
        r[ok] * 1e3,
        yerr=np.where(np.isfinite(err[ok]), err[ok], 0.0) * 1e3,
        fmt="o",
        ms=2.5,
        mfc="none",
        mew=0.6,
        elinewidth=0.5,
        color=OKABE_ITO["blue"],
        label=f"ok ({int(ok.sum())})",
        zorder=3,
    )
    for name, marker in _STATUS_MARKERS.items():
        sel = good & (status == name)
        if sel.any():
            ax.plot(
                tau[sel] * 1e3,
                r[sel] * 1e3,
                ls="none",
                marker=marker,
                ms=2.5,
                mfc="none",
                mew=0.6,
                color=_GREY,
                label=f"{name} ({int(sel.sum())})",
            )


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
    tau = fit_times(series, verdict)
    r = np.asarray(series.radius, dtype=float)
    err = np.asarray(series.radius_err, dtype=float)
    status = np.asarray(series.status, dtype=object)
    good = np.isfinite(tau) & np.isfinite(r) & (tau > 0) & (r > 0)
    fig = _new_figure(2.6)
    ax = fig.add_subplot()
    _plot_points(ax, tau, r, err, status, good)
    _plot_laws(ax, series, verdict)
    _plot_crossovers(ax, verdict)
    if good.any():
        ax.set_xscale("log")
        ax.set_yscale("log")
        _log_axis(ax.xaxis)
        _log_axis(ax.yaxis)
    ax.set_xlabel("time since contact τ (ms)")
    ax.set_ylabel("radius r (mm)")
    ax.legend(loc="upper left", handlelength=2.2)
    return fig


def _exponent_guides(ax, verdict, lo, hi):
    """A horizontal line at each candidate's theoretical exponent, labelled."""
    guides: dict[float, list[str]] = {}
    for cand in verdict.candidates:
        value = _num(cand.exponent_theory)
        if _finite(value):
            guides.setdefault(round(float(value), 9), []).append(cand.key)
    for k, (value, names) in enumerate(sorted(guides.items())):
        ax.axhline(
            value,
            color=OKABE_ITO[_CYCLE[k % len(_CYCLE)]],
            ls=_DASHES[k % len(_DASHES)],
            lw=0.8,
        )
        text = f"{_exponent_text(value)}: " + ", ".join(names[:2])
        if len(names) > 2:
            text += f" +{len(names) - 2}"
        ax.annotate(
            text,
            xy=(1.0, value),
            xycoords=("axes fraction", "data"),
            xytext=(-2, 1),
            textcoords="offset points",
            ha="right",
            va="bottom",
            fontsize=6,
            color="#333333",
            annotation_clip=False,
        )
    if guides:
        values = list(guides) + ([float(np.nanmin(lo)), float(np.nanmax(hi))] if lo.size else [])
        values = [v for v in values if math.isfinite(v)]
        pad = 0.1 * max(max(values) - min(values), 0.2)
        ax.set_ylim(min(values) - pad, max(values) + pad)


def _plot_local_exponent(verdict):
    local = verdict.local if verdict and verdict.local else None
    t = np.asarray(local.time if local else [], dtype=float)
    n = np.asarray(local.exponent if local else [], dtype=float)
    lo = np.asarray(local.lower if local else [], dtype=float)
    hi = np.asarray(local.upper if local else [], dtype=float)
    fig = _new_figure(2.2)
    ax = fig.add_subplot()
    if t.size and t.size == n.size:
        if lo.size == t.size and hi.size == t.size:
            ax.fill_between(
                t * 1e3, lo, hi, color=OKABE_ITO["sky blue"], alpha=0.35, lw=0, label="band"
            )
        ax.plot(t * 1e3, n, "-", marker="o", ms=2, color=OKABE_ITO["blue"], label="d ln r/d ln τ")
        if np.all(t > 0):
            ax.set_xscale("log")
            _log_axis(ax.xaxis)
    _exponent_guides(ax, verdict, lo, hi)
    ax.set_xlabel("time since contact τ (ms)")
    ax.set_ylabel("local exponent n")
    if t.size:
        ax.legend(loc="best")
    return fig


def _plot_residuals(series, verdict):
    tau = fit_times(series, verdict)
    r = np.asarray(series.radius, dtype=float)
    err = np.asarray(series.radius_err, dtype=float)
    status = np.asarray(series.status, dtype=object)
    ok = np.isfinite(tau) & np.isfinite(r) & (tau > 0) & (status == "ok")
    fig = _new_figure(1.9)
    ax = fig.add_subplot()
    dom = _dominant(verdict)
    curve = dominant_curve(verdict, tau[ok]) if ok.any() else None
    ax.axhline(0.0, color=OKABE_ITO["black"], lw=0.7)
    if curve is not None:
        rel = r[ok] / curve - 1.0
        rel_err = np.where(np.isfinite(err[ok]), err[ok], 0.0) / curve
        win = _window(dom)
        inside = (
            np.ones(rel.shape, bool)
            if win is None
            else ((tau[ok] >= win[0] * (1 - 1e-9)) & (tau[ok] <= win[1] * (1 + 1e-9)))
        )
        if win is not None:
            ax.axvspan(win[0] * 1e3, win[1] * 1e3, color="#EEEEEE", lw=0, label="fit window")
        ax.errorbar(
            tau[ok][inside] * 1e3,
            rel[inside] * 100,
            yerr=rel_err[inside] * 100,
            fmt="o",
            ms=2.5,
            mfc="none",
            mew=0.6,
            elinewidth=0.5,
            color=OKABE_ITO["blue"],
            label="in window",
        )
        if (~inside).any():
            ax.plot(
                tau[ok][~inside] * 1e3,
                rel[~inside] * 100,
                "D",
                ms=2,
                mfc="none",
                mew=0.6,
                color=_GREY,
                label="outside",
            )
        ax.set_xscale("log")
        _log_axis(ax.xaxis)
        ax.legend(loc="best")
        ax.set_title(f"residuals of the {dom.key} fit", loc="left")
    else:
        ax.text(0.5, 0.5, "no dominant fit", transform=ax.transAxes, ha="center")
    ax.set_xlabel("time since contact τ (ms)")
    ax.set_ylabel("r / fit − 1 (%)")
    return fig


def _plot_overlays(files):
    import matplotlib.image as mpimg

    cols = min(3, len(files))
    rows = math.ceil(len(files) / cols)
    first = mpimg.imread(files[0])
    aspect = first.shape[0] / max(first.shape[1], 1)
    fig = _new_figure(max(1.0, rows * (_WIDTH_IN / cols) * aspect + 0.2 * rows))
    for k, path in enumerate(files):
        ax = fig.add_subplot(rows, cols, k + 1)
        image = mpimg.imread(path)
        ax.imshow(image, cmap="gray" if image.ndim == 2 else None, interpolation="nearest")
        ax.set_axis_off()
        ax.set_title(path.stem.replace("_", " "), fontsize=6.5, pad=2)
    return fig


def write_plots(out_dir, *, series, verdict) -> list[Path]:
    """Write the analysis figures into ``out_dir/plots/`` as PNG and SVG.

    Parameters
    ----------
    out_dir : path
        The analysis folder; figures go to its ``plots/`` subfolder, and the
        overlay montage reads ``overlays/*.png`` from it.
    series : RadiusSeries
        The radius series.
    verdict : RegimeVerdict
        The regime verdict.

    Returns
    -------
    list of pathlib.Path
        The files written: ``radius``, ``local_exponent``, ``residuals`` and,
        when there are overlay frames, ``overlays``, each as ``.png`` and ``.svg``.

    Notes
    -----
    - ``radius``: r against τ, log-log; ok frames with error bars, the other
      statuses in grey with their own markers; the dominant free fit as a solid
      line over its window; every consistent candidate's law (theoretical
      exponent, fitted prefactor) dashed; crossovers as vertical dotted lines.
    - ``local_exponent``: d ln r / d ln τ with its band, and a horizontal guide
      at each candidate's theoretical exponent.
    - ``residuals``: r / fit − 1 of the dominant fit for the ok frames.
    - ``overlays``: a montage of the annotated frames.

    Each file is written atomically.
    """
    import matplotlib

    out_dir = Path(out_dir)
    plots_dir = out_dir / "plots"
    plots_dir.mkdir(parents=True, exist_ok=True)
    written: list[Path] = []
    with matplotlib.rc_context(_RC):
        written += _save(_plot_radius(series, verdict), plots_dir, "radius")
        written += _save(_plot_local_exponent(verdict), plots_dir, "local_exponent")
        written += _save(_plot_residuals(series, verdict), plots_dir, "residuals")
        files = completed_files(out_dir / "overlays", "*.png")
        if files:
            written += _save(_plot_overlays(files), plots_dir, "overlays")
    return written
