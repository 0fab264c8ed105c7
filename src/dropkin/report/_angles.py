"""The figure of the apparent contact angles of a spreading drop (side view)."""

from __future__ import annotations

import numpy as np

from ._dense import draw_points
from ._legend import place_legend
from ._origin import time_origin
from ._style import OKABE_ITO, _log_axis, _new_figure

__all__ = ["plot_contact_angles"]

#: Each side's colour and marker (open for the left, filled for the right),
#: so the two stay apart in grey-scale print.
_SIDES = (
    ("left contact point", "vermillion", "<", "none"),
    ("right contact point", "bluish green", ">", None),
)


def plot_contact_angles(series, verdict):
    """θ at the left and right contact points against τ (log τ when all τ > 0)."""
    origin = time_origin(series, verdict)
    tau = origin.tau(series.time)
    angles = np.asarray(series.angles, dtype=float).reshape(len(series), 2)
    fig = _new_figure(2.2)
    ax = fig.add_subplot()
    shown = np.isfinite(tau) & (tau > 0) & np.isfinite(angles).any(axis=1)
    drawn, binned = [], False
    for side, (label, colour, marker, face) in enumerate(_SIDES):
        sel = shown & np.isfinite(angles[:, side])
        if sel.any():
            points, grouped = draw_points(
                ax,
                tau[sel],
                angles[sel, side],
                label=label,
                marker=marker,
                ms=3,
                mew=0.7,
                color=OKABE_ITO[colour],
                mfc=face if face else OKABE_ITO[colour],
            )
            drawn, binned = drawn + points, binned or grouped
    if shown.any():
        ax.set_xscale("log")
        _log_axis(ax.xaxis)
        place_legend(ax, drawn, binned=binned)
    else:
        ax.text(0.5, 0.5, "no contact angle after contact", transform=ax.transAxes, ha="center")
    ax.set_xlabel(origin.axis_label)
    ax.set_ylabel("apparent contact angle θ (°)")
    return fig
