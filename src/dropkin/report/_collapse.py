"""The figure of a master curve: every recording on its regime's own scales."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from .._words import count
from ._style import _RC, OKABE_ITO, _exponent_text, _log_axis, _new_figure, _save

__all__ = ["write_master_curve"]

_COLOURS = ("blue", "vermillion", "bluish green", "orange", "reddish purple", "sky blue")
_MARKERS = ("o", "s", "^", "D", "v", "P", "X", "<", ">", "h")
_LEGEND_MAX = 10


def write_master_curve(curve, dest, formats=("png",)) -> list[Path]:
    """Write ``collapse-<regime>.png`` (and the other `formats`) into `dest`; their paths."""
    from matplotlib import rc_context

    with rc_context(_RC):
        fig = _new_figure(2.9)
        ax = fig.add_subplot()
        xs = [m.x[m.x > 0] for m in curve.members if np.any(m.x > 0)]
        lo = min(float(x.min()) for x in xs)
        hi = max(float(x.max()) for x in xs)
        if curve.logarithmic:
            hi = min(hi, np.exp(-1.0) * 0.999)
        grid = np.geomspace(lo, hi, 200)
        unit = -grid * np.log(grid) if curve.logarithmic else grid**curve.exponent
        c_lo, c_hi = curve.pooled.ci
        ax.fill_between(grid, c_lo * unit, c_hi * unit, color="#D0D0D0", lw=0, zorder=1)
        if curve.logarithmic:
            law = "−C x ln x"
        elif curve.exponent == 1:
            law = "C x"
        else:
            law = f"C x^{_exponent_text(curve.exponent)}"
        ax.plot(
            grid,
            curve.pooled.value * unit,
            color=OKABE_ITO["black"],
            zorder=3,
            label=f"{law}, C = {curve.pooled.value:.3g} [{c_lo:.3g}, {c_hi:.3g}]",
        )
        many = len(curve.members) > _LEGEND_MAX
        for i, m in enumerate(curve.members):
            colour = OKABE_ITO[_COLOURS[i % len(_COLOURS)]]
            marker = _MARKERS[i % len(_MARKERS)]
            label = None if many and m.collapses else m.label
            if not m.collapses:
                label = f"{m.label} (off the curve)"
            ax.plot(
                m.x,
                m.y,
                linestyle="none",
                marker=marker,
                markersize=3.0,
                markeredgewidth=0.7,
                markerfacecolor=colour if m.collapses else "none",
                markeredgecolor=colour,
                alpha=0.9,
                zorder=2,
                label=label,
            )
        ax.set_xscale("log")
        ax.set_yscale("log")
        _log_axis(ax.xaxis)
        _log_axis(ax.yaxis)
        ax.set_xlabel("t / τ")
        ax.set_ylabel("r / R")
        ax.set_title(f"{curve.regime}: {count(len(curve.members), 'recording')}")
        ax.legend(loc="upper left", fontsize=6, handlelength=1.5)
        return _save(fig, Path(dest), f"collapse-{curve.regime}", formats)
