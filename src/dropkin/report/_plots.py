"""Paper-ready figures of one analysis: radius, local exponent, residuals, overlays.

Every figure is one journal column wide (3.4 in), fonts of 8 pt, written as a
300 dpi PNG and as an SVG. Colours come from the Okabe–Ito palette, which
colour-blind readers can tell apart; each series also has its own line style
or marker, so the figures survive a grey-scale print.

matplotlib is imported inside the functions (the command line stays fast) and
only through `matplotlib.figure.Figure`, without pyplot, so no global state is
touched beyond a temporary `matplotlib.rc_context`.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from .._atomic import atomic_path, completed_files

__all__ = ["write_plots", "OKABE_ITO", "PLOT_NAMES", "dominant_curve", "fit_times"]

#: The Okabe–Ito colour-blind-safe palette (name → hex).
OKABE_ITO = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky blue": "#56B4E9",
    "bluish green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish purple": "#CC79A7",
}
_CYCLE = ("vermillion", "bluish green", "orange", "reddish purple", "sky blue")
_DASHES = ("--", (0, (5, 1.5, 1, 1.5)), ":", (0, (3, 1, 1, 1, 1, 1)), (0, (8, 2)))
_STATUS_MARKERS = {
    "unresolved": "v",
    "not-found": "x",
    "at-edge": "s",
    "before-contact": "^",
}
_GREY = "#9A9A9A"

#: Stems of the figures that `write_plots` can write (each as .png and .svg).
PLOT_NAMES = ("radius", "local_exponent", "residuals", "overlays")

_WIDTH_IN = 3.4
_DPI = 300
_RC = {
    "font.size": 8,
    "axes.labelsize": 8,
    "axes.titlesize": 8,
    "legend.fontsize": 7,
    "xtick.labelsize": 7,
    "ytick.labelsize": 7,
    "lines.linewidth": 1.2,
    "axes.linewidth": 0.6,
    "xtick.major.width": 0.6,
    "ytick.major.width": 0.6,
    "legend.frameon": False,
    "svg.hashsalt": "dropkin",
    "savefig.bbox": "tight",
    "savefig.pad_inches": 0.02,
}


def _finite(value) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)


def _window(entry):
    """A candidate's ``window_s`` as a pair of positive floats, or None."""
    w = entry.get("window_s") if entry else None
    if not w or len(w) != 2 or not all(_finite(v) for v in w) or not 0 < w[0] < w[1]:
        return None
    return float(w[0]), float(w[1])


def fit_times(series: dict, fit: dict) -> np.ndarray:
    """Time of every frame since the fitted contact instant (s); NaN where unknown.

    The fit's windows count from its own contact time ``fit["contact"]["t0_s"]``
    (which may differ a little from the measured one); plotting against the same
    origin keeps data and laws on one axis. Without it, the CSV's
    ``since_contact_s`` is used.
    """
    t0 = (fit.get("contact") or {}).get("t0_s")
    if _finite(t0):
        return np.asarray(series["time_s"], dtype=float) - float(t0)
    return np.asarray(series["since_contact_s"], dtype=float)


def _law_radius(tau, *, exponent, prefactor, logarithmic=False, speed=None, drop_radius=None):
    """r(τ) of one law: ``C τ^n``, or the ELS law ``-(C/u) uτ ln(uτ/R)`` held at its peak."""
    tau = np.asarray(tau, dtype=float)
    if logarithmic:
        if not (_finite(speed) and _finite(drop_radius) and speed > 0 and drop_radius > 0):
            return np.full(tau.shape, np.nan)
        x = np.minimum(speed * tau / drop_radius, math.exp(-1.0))
        return prefactor / speed * x * drop_radius * -np.log(x)
    return prefactor * tau**exponent


def _candidate_curve(cand, fit, measure_info, tau):
    return _law_radius(
        tau,
        exponent=cand.get("exponent_theory"),
        prefactor=cand.get("prefactor_fit"),
        logarithmic=bool(cand.get("logarithmic")),
        speed=(fit.get("numbers") or {}).get("capillary_speed_m_per_s"),
        drop_radius=measure_info.get("drop_radius_m"),
    )


def dominant_curve(fit: dict, tau) -> np.ndarray | None:
    """The dominant regime's free fit ``r(τ)`` (m), or None without one.

    The free fit passes through the pivot point ``fit["pivot"]`` with slope
    ``exponent_fit``; without a pivot, the law at its theoretical exponent with
    the fitted prefactor is used.
    """
    dom = fit.get("dominant")
    if not dom:
        return None
    tau = np.asarray(tau, dtype=float)
    pivot = fit.get("pivot") or {}
    n = pivot.get("exponent", dom.get("exponent_fit"))
    if _finite(pivot.get("time_s")) and _finite(pivot.get("radius_m")) and _finite(n):
        return pivot["radius_m"] * (tau / pivot["time_s"]) ** n
    if _finite(dom.get("exponent_theory")) and _finite(dom.get("prefactor_fit")):
        return dom["prefactor_fit"] * tau ** dom["exponent_theory"]
    return None


def _exponent_text(n) -> str:
    for num, den in ((1, 2), (1, 3), (2, 3), (1, 4), (1, 8), (1, 10), (1, 7)):
        if _finite(n) and abs(n - num / den) < 1e-9:
            return f"{num}/{den}"
    return f"{n:.3g}" if _finite(n) else "?"


def _log_axis(axis):
    """Log scale with plain tick labels at 1, 2, 5 × 10^k (no minor labels)."""
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

    axis.set_major_locator(LogLocator(base=10, subs=(1.0, 2.0, 5.0)))
    axis.set_major_formatter(FuncFormatter(lambda v, _pos: f"{v:g}"))
    axis.set_minor_formatter(NullFormatter())


def _new_figure(height):
    from matplotlib.figure import Figure

    return Figure(figsize=(_WIDTH_IN, height), dpi=_DPI, layout="constrained")


def _save(fig, plots_dir: Path, stem: str) -> list[Path]:
    written = []
    for ext in ("png", "svg"):
        path = plots_dir / f"{stem}.{ext}"
        meta = {"Software": None} if ext == "png" else {"Date": None}
        with atomic_path(path) as tmp:
            fig.savefig(tmp, format=ext, dpi=_DPI, metadata=meta)
        written.append(path)
    return written


def _plot_radius(series, measure_info, fit):
    tau = fit_times(series, fit)
    r = np.asarray(series["radius_m"], dtype=float)
    err = np.asarray(series["radius_err_m"], dtype=float)
    status = np.asarray(series["status"], dtype=object)
    good = np.isfinite(tau) & np.isfinite(r) & (tau > 0) & (r > 0)
    fig = _new_figure(2.6)
    ax = fig.add_subplot()
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
    dom = fit.get("dominant") or {}
    win = _window(dom)
    if win is not None:
        t = np.geomspace(*win, 100)
        curve = dominant_curve(fit, t)
        if curve is not None:
            n = dom.get("exponent_fit")
            label = f"{dom.get('regime')}, fit n = {n:.3f}" if _finite(n) else dom.get("regime")
            ax.plot(t * 1e3, curve * 1e3, "-", color=OKABE_ITO["black"], lw=1.4, label=label)
    k = 0
    for cand in fit.get("candidates") or []:
        cwin = _window(cand)
        if not cand.get("consistent") or cwin is None or not _finite(cand.get("prefactor_fit")):
            continue
        t = np.geomspace(*cwin, 100)
        curve = _candidate_curve(cand, fit, measure_info, t)
        label = cand.get("regime", "?")
        if not cand.get("logarithmic"):
            label += f" law, n = {_exponent_text(cand.get('exponent_theory'))}"
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
    for j, cross in enumerate(fit.get("crossovers") or []):
        tc = cross.get("time_s")
        if not (_finite(tc) and tc > 0):
            continue
        ax.axvline(tc * 1e3, color=OKABE_ITO["reddish purple"], ls=":", lw=0.9)
        ax.annotate(
            f"{cross.get('from')} → {cross.get('to')}",
            xy=(tc * 1e3, 0.04 + 0.08 * j),
            xycoords=("data", "axes fraction"),
            xytext=(2, 0),
            textcoords="offset points",
            rotation=90,
            fontsize=6.5,
            va="bottom",
            color=OKABE_ITO["reddish purple"],
        )
    if good.any():
        ax.set_xscale("log")
        ax.set_yscale("log")
        _log_axis(ax.xaxis)
        _log_axis(ax.yaxis)
    ax.set_xlabel("time since contact τ (ms)")
    ax.set_ylabel("radius r (mm)")
    ax.legend(loc="upper left", handlelength=2.2)
    return fig


def _plot_local_exponent(fit):
    local = fit.get("local_exponent") or {}
    t = np.asarray(local.get("time_s") or [], dtype=float)
    n = np.asarray(local.get("exponent") or [], dtype=float)
    lo = np.asarray(local.get("lower") or [], dtype=float)
    hi = np.asarray(local.get("upper") or [], dtype=float)
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
    guides: dict[float, list[str]] = {}
    for cand in fit.get("candidates") or []:
        value = cand.get("exponent_theory")
        if _finite(value):
            guides.setdefault(round(float(value), 9), []).append(cand.get("regime", "?"))
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
    ax.set_xlabel("time since contact τ (ms)")
    ax.set_ylabel("local exponent n")
    if t.size:
        ax.legend(loc="best")
    return fig


def _plot_residuals(series, fit):
    tau = fit_times(series, fit)
    r = np.asarray(series["radius_m"], dtype=float)
    err = np.asarray(series["radius_err_m"], dtype=float)
    status = np.asarray(series["status"], dtype=object)
    ok = np.isfinite(tau) & np.isfinite(r) & (tau > 0) & (status == "ok")
    fig = _new_figure(1.9)
    ax = fig.add_subplot()
    dom = fit.get("dominant") or {}
    curve = dominant_curve(fit, tau[ok]) if ok.any() else None
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
        ax.set_title(f"residuals of the {dom.get('regime')} fit", loc="left")
    else:
        ax.text(0.5, 0.5, "no dominant fit", transform=ax.transAxes, ha="center")
    ax.set_xlabel("time since contact τ (ms)")
    ax.set_ylabel("r / fit − 1 (%)")
    return fig


def _overlay_files(out_dir: Path) -> list[Path]:
    return completed_files(Path(out_dir) / "overlays", "*.png")


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


def write_plots(out_dir, *, series: dict, measure_info: dict, fit: dict) -> list[Path]:
    """Write the analysis figures into ``out_dir/plots/`` as PNG and SVG.

    Parameters
    ----------
    out_dir : path
        The analysis folder; figures go to its ``plots/`` subfolder, and the
        overlay montage reads ``overlays/*.png`` from it.
    series : dict
        The radius series, as `dropkin.series.read_radius_csv` returns it.
    measure_info : dict
        The contents of ``measure.json``.
    fit : dict
        The contents of ``fit.json``.

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
        written += _save(_plot_radius(series, measure_info, fit), plots_dir, "radius")
        written += _save(_plot_local_exponent(fit), plots_dir, "local_exponent")
        written += _save(_plot_residuals(series, fit), plots_dir, "residuals")
        files = _overlay_files(out_dir)
        if files:
            written += _save(_plot_overlays(files), plots_dir, "overlays")
    return written
