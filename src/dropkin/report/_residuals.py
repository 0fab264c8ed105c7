"""The figure of the dominant fit's relative residuals, r / fit − 1, for the ok frames."""

from __future__ import annotations

import numpy as np

from ._curves import _dominant, _window, dominant_curve
from ._dense import draw_points
from ._legend import place_legend
from ._origin import series_arrays, time_origin
from ._style import _GREY, OKABE_ITO, _log_axis, _new_figure

__all__ = ["plot_residuals"]

#: The fit window's fill: light, but a swatch a reader can see in the legend.
_WINDOW_FILL = "#DCDCDC"


def _draw_residuals(ax, tau, rel, rel_err, inside) -> tuple[list, bool]:
    """The residuals in the window (blue, with their bars) and outside (grey):
    the points drawn, and whether a group was binned (see `draw_points`)."""
    look = {"mfc": "none", "mew": 0.6, "counted": False, "scale": 100}
    drawn, binned = draw_points(
        ax,
        tau[inside],
        rel[inside],
        err=rel_err[inside],
        label="in window",
        marker="o",
        ms=2.5,
        elinewidth=0.5,
        color=OKABE_ITO["blue"],
        **look,
    )
    if (~inside).any():
        points, grouped = draw_points(
            ax, tau[~inside], rel[~inside], label="outside", marker="D", ms=2, color=_GREY, **look
        )
        drawn, binned = drawn + points, binned or grouped
    return drawn, binned


def plot_residuals(series, verdict):
    """r / fit − 1 (%) of the ok frames against τ, the dominant fit's window shaded."""
    tau, r, err, status = series_arrays(series, verdict)
    ok = np.isfinite(tau) & np.isfinite(r) & (tau > 0) & (status == "ok")
    fig = _new_figure(1.9)
    ax = fig.add_subplot()
    dom = _dominant(verdict)
    curve = dominant_curve(verdict, tau[ok]) if ok.any() else None
    ax.axhline(0.0, color=OKABE_ITO["black"], lw=0.7)
    if curve is None:
        ax.text(0.5, 0.5, "no dominant fit", transform=ax.transAxes, ha="center")
    else:
        tau, rel = tau[ok], r[ok] / curve - 1.0
        rel_err = np.where(np.isfinite(err[ok]), err[ok], 0.0) / curve
        win = _window(dom)
        inside = np.ones(rel.shape, bool)
        if win is not None:
            inside = (tau >= win[0] * (1 - 1e-9)) & (tau <= win[1] * (1 + 1e-9))
            ax.axvspan(
                win[0] * 1e3,
                win[1] * 1e3,
                facecolor=_WINDOW_FILL,
                edgecolor=_GREY,
                lw=0.5,
                label="fit window",
            )
        drawn, binned = _draw_residuals(ax, tau, rel, rel_err, inside)
        ax.set_xscale("log")
        _log_axis(ax.xaxis)
        ax.set_title(f"residuals of the {dom.key} fit", loc="left")
        place_legend(ax, drawn, binned=binned)
    ax.set_xlabel(time_origin(series, verdict).axis_label)
    ax.set_ylabel("r / fit − 1 (%)")
    return fig
