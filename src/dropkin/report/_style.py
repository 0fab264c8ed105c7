"""The figures' style and the number helpers the figures and the page share.

Every figure is one journal column wide (3.4 in), fonts of 8 pt, written as a
300 dpi PNG (at zlib level 1; and, on request, as SVG or PDF). Colours
come from the Okabe–Ito palette, which colour-blind readers can tell apart;
each series also has its own line style
or marker, so the figures survive a grey-scale print.

matplotlib is imported inside the functions (the command line stays fast) and
only through `matplotlib.figure.Figure`, without pyplot, so no global state is
touched beyond a temporary `matplotlib.rc_context`.
"""

from __future__ import annotations

import math
from pathlib import Path

from .._atomic import atomic_path

__all__ = ["OKABE_ITO", "PLOT_FORMATS"]

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
_GREY = "#9A9A9A"

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
    # the constrained layout is computed once per figure (:func:`_save`); a
    # tight bounding box would lay the figure out again for every file
    "savefig.bbox": "standard",
}

#: The formats a figure can be saved in; PNG is the default, the others on request.
PLOT_FORMATS = ("png", "svg", "pdf")
_METADATA = {"png": {"Software": None}, "svg": {"Date": None}, "pdf": {"CreationDate": None}}


def _finite(value) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)


def _num(value) -> float | None:
    """A number of a record as a float; None where it is None or not finite.

    The records hold NaN or None where there is no value, as their files hold
    null: the figures and the page treat both alike.
    """
    if value is None:
        return None
    value = float(value)
    return value if math.isfinite(value) else None


def _exponent_text(n) -> str:
    for num, den in ((1, 2), (1, 3), (2, 3), (1, 4), (1, 8), (1, 10), (1, 7)):
        if _finite(n) and abs(n - num / den) < 1e-9:
            return f"{num}/{den}"
    return f"{n:.3g}" if _finite(n) else "?"


#: Mantissas of the labelled ticks of a log axis, coarsest first; the coarsest
#: that labels at least :data:`_MIN_LABELS` ticks inside the view is used.
_LOG_SUBS = ((1.0,), (1.0, 2.0, 5.0), (1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0))
_MIN_LABELS = 3


def _log_ticks(lo: float, hi: float) -> list[float]:
    """Tick values for a log axis over [lo, hi]: at least three where the span allows.

    One decade or more gets 1 (and 2, 5) × 10^k; a shorter span every
    mantissa 1…9; a span too short even for that gets linear ticks.
    """
    import numpy as np

    if not (_finite(lo) and _finite(hi) and 0 < lo < hi):
        return []
    for subs in _LOG_SUBS:
        # 10.0**k exists as a float for k up to 308 (Python raises beyond it)
        decades = range(math.floor(math.log10(lo)) - 1, min(math.ceil(math.log10(hi)) + 1, 309))
        ticks = sorted(
            v
            for k in decades
            for m in subs
            if lo * (1 - 1e-9) <= (v := float(f"{m * 10.0**k:.12g}")) <= hi * (1 + 1e-9)
        )
        if len(ticks) >= _MIN_LABELS:
            return ticks
    from matplotlib.ticker import MaxNLocator

    ticks = MaxNLocator(nbins=4, steps=[1, 2, 2.5, 5, 10]).tick_values(lo, hi)
    return [float(f"{v:.12g}") for v in np.asarray(ticks) if lo <= v <= hi and v > 0]


def _log_axis(axis):
    """Label at least three ticks of a log axis (plain numbers, no minor labels).

    Call it once the data are drawn: the ticks are chosen for the view then.
    """
    from matplotlib.ticker import FixedLocator, FuncFormatter, NullFormatter

    axis.axes.autoscale_view()
    lo, hi = sorted(float(v) for v in axis.get_view_interval())
    ticks = _log_ticks(lo, hi)
    if ticks:
        axis.set_major_locator(FixedLocator(ticks))
    axis.set_major_formatter(FuncFormatter(lambda v, _pos: f"{v:g}"))
    axis.set_minor_formatter(NullFormatter())


#: The matplotlib module that writes each format (imported by savefig on first use).
_BACKENDS = {"png": "backend_agg", "svg": "backend_svg", "pdf": "backend_pdf"}


def _import_matplotlib(formats=("png",)):
    """matplotlib, with what drawing and saving in `formats` needs imported now: once,
    before :func:`~dropkin.report._jobs.run_jobs` forks, not in each process."""
    import importlib

    import matplotlib
    import matplotlib.figure  # noqa: F401

    for ext in formats:
        if ext in _BACKENDS:  # another format fails where it is saved, as it did
            importlib.import_module(f"matplotlib.backends.{_BACKENDS[ext]}")
    return matplotlib


def _new_figure(height):
    from matplotlib.figure import Figure

    return Figure(figsize=(_WIDTH_IN, height), dpi=_DPI, layout="constrained")


#: zlib level of the PNG figures: at 1, matplotlib's flat colours and the montage's
#: photographs are packed in 5-25 ms less a figure than at Pillow's default 6 (the
#: montage's was 3), into files 9-17 % larger (measured on a 2,000-frame analysis).
_PNG_LEVEL = 1


def _save(fig, plots_dir: Path, stem: str, formats=("png",)) -> list[Path]:
    """Write `fig` as ``stem.<format>`` for each of `formats`; the files written.

    A PNG is packed at zlib level :data:`_PNG_LEVEL`.

    The figure is laid out once (its constrained layout, then frozen; the
    layout needs the texts' sizes only, not a drawing of every artist), so
    each format costs one rendering. The files of the other formats
    of :data:`PLOT_FORMATS` are removed: a folder never mixes figures of two
    runs.
    """
    engine = fig.get_layout_engine()
    if engine is not None:
        engine.execute(fig)
    fig.set_layout_engine("none")
    written = []
    for ext in formats:
        path = plots_dir / f"{stem}.{ext}"
        with atomic_path(path) as tmp:
            pil = {"pil_kwargs": {"compress_level": _PNG_LEVEL}} if ext == "png" else {}
            fig.savefig(tmp, format=ext, dpi=_DPI, metadata=_METADATA[ext], **pil)
        written.append(path)
    for ext in set(PLOT_FORMATS) - set(formats):
        (plots_dir / f"{stem}.{ext}").unlink(missing_ok=True)
    return written
