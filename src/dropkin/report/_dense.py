"""Points of a figure, and long series drawn as a faithful summary.

A figure one column wide shows a few thousand markers at most before they
merge into a band; drawing every row of a series of 10⁵ or 10⁶ frames costs
minutes and shows nothing more. A group of points (the ok frames, the frames
of one other status, the residuals in the fit window, ...) of more than
:data:`MAX_DRAWN` rows is therefore summarised: its rows are put in
:data:`BINS` bins spaced evenly in log τ over the rows' own range, and each
bin that holds rows is drawn as one marker at the median τ and the median
value of its rows, with a bar from the 16th to the 84th percentile of the
values (the central 68 %, the spread a Gaussian's ± 1 σ would cover). The
legend says so and gives the fewest and most rows in a bin. Shorter groups
are drawn row by row, as they always were.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Binned", "bin_log", "draw_points", "MAX_DRAWN", "BINS", "BINNED_TITLE"]

#: Rows of one group drawn one by one; a longer group is binned.
MAX_DRAWN = 3000
#: Log-spaced bins of a binned group.
BINS = 150
#: The percentiles a binned point's bar spans.
SPREAD = (16.0, 84.0)
#: The legend's title of a figure with binned points.
BINNED_TITLE = "median of each log-τ bin, bar 16–84 %"
#: The opacity of a binned point's bar (its marker is opaque).
_BAR_ALPHA = 0.45


@dataclass(frozen=True)
class Binned:
    """The rows of one group summarised in log-spaced bins of τ.

    Attributes
    ----------
    edges : (B + 1,) ndarray
        The bins' edges (geometric steps from the least to the largest τ);
        each bin holds ``edges[i] <= τ < edges[i + 1]``, the last one also its
        right edge (as :func:`numpy.histogram`).
    tau : (K,) ndarray
        The median τ of the rows of each bin that holds rows (K ≤ B).
    value : (K,) ndarray
        The median value of those rows.
    lower, upper : (K,) ndarray
        The 16th and 84th percentiles of the values (numpy's linear rule).
    rows : (K,) ndarray of int
        The rows in each of those bins.
    """

    edges: np.ndarray
    tau: np.ndarray
    value: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    rows: np.ndarray


def bin_log(tau, value, *, bins: int = BINS) -> Binned:
    """Medians and 16–84 % spread of `value` in `bins` log-spaced bins of `tau`.

    Parameters
    ----------
    tau, value : (N,) array_like
        Positive, finite τ and finite values, N ≥ 1.
    bins : int
        The number of bins between the least and the largest τ.

    Returns
    -------
    Binned
        One entry per bin that holds rows.

    Examples
    --------
    >>> b = bin_log([1.0, 2.0, 3.0, 100.0], [1.0, 3.0, 2.0, 9.0], bins=2)
    >>> b.value.tolist(), b.rows.tolist()
    ([2.0, 9.0], [3, 1])
    """
    tau = np.asarray(tau, dtype=float)
    value = np.asarray(value, dtype=float)
    if tau.ndim != 1 or tau.shape != value.shape or tau.size == 0:
        raise ValueError(f"tau and value must be 1-D of one length ≥ 1, not {tau.shape}")
    if not (np.all(tau > 0) and np.all(np.isfinite(tau)) and np.all(np.isfinite(value))):
        raise ValueError("tau must be positive and finite, value finite")
    if np.any(np.diff(tau) < 0):  # a series' rows come in time order: no sort then
        order = np.argsort(tau, kind="stable")
        tau, value = tau[order], value[order]
    lo, hi = float(tau[0]), float(tau[-1])
    edges = np.geomspace(lo, hi, bins + 1) if hi > lo else np.array([lo, lo])
    # bin i holds edges[i] <= τ < edges[i + 1]; the last one also τ = its right edge
    bounds = np.concatenate(([0], np.searchsorted(tau, edges[1:-1], side="left"), [tau.size]))
    held = [(a, b) for a, b in zip(bounds[:-1], bounds[1:], strict=True) if b > a]
    stats = np.array(
        [
            (np.median(tau[a:b]), *np.percentile(value[a:b], (50.0, *SPREAD)), b - a)
            for a, b in held
        ]
    )
    return Binned(
        edges=edges,
        tau=stats[:, 0],
        value=stats[:, 1],
        lower=stats[:, 2],
        upper=stats[:, 3],
        rows=stats[:, 4].astype(int),
    )


def _binned_label(label: str, rows: int, binned: Binned) -> str:
    least, most = int(binned.rows.min()), int(binned.rows.max())
    per = f"{least}" if least == most else f"{least}–{most}"
    return f"{label} ({rows}, {per} a bin)"


def _errorbar(ax, x, y, low, high, *, label, marker, ecolor=None, elinewidth=0.5, **style):
    """Markers at (x, y) with vertical bars from `low` to `high`, as ``ax.errorbar``
    draws them (the same legend entry), but the bars as one path of line
    pieces: a collection of a segment per point is transformed segment by
    segment, about half a second per 10⁴ points on a log axis (measured with
    cProfile on a 2,000-frame analysis).
    """
    from matplotlib.collections import LineCollection
    from matplotlib.container import ErrorbarContainer

    colour = style.get("color")
    ecolor = colour if ecolor is None else ecolor
    nan = np.full(np.shape(x), np.nan)
    bar_x = np.column_stack((x, x, nan)).ravel()
    bar_y = np.column_stack((low, high, nan)).ravel()
    zorder = style.pop("zorder", 2)  # as ax.errorbar: the bars at it, the markers above
    (points,) = ax.plot(
        x, y, ls="none", marker=marker, label="_nolegend_", zorder=zorder + 0.1, **style
    )
    ax.plot(
        bar_x,
        bar_y,
        color=ecolor,
        lw=elinewidth,
        solid_capstyle="butt",
        zorder=zorder,
        label="_nolegend_",
    )
    # the legend draws a bar beside the marker in the style of this (undrawn) collection
    legend_bar = LineCollection([], colors=[ecolor], linewidths=elinewidth)
    ax.add_container(ErrorbarContainer((points, (), (legend_bar,)), has_yerr=True, label=label))


def draw_points(
    ax, tau, value, *, err=None, label: str, counted: bool = True, scale: float = 1.0, **style
) -> tuple[list, bool]:
    """Draw one group of points against τ (ms): row by row, or binned when long.

    `tau` (s) and `value` are the group's rows, `err` their uncertainties
    (error bars when the group is drawn row by row; NaN for none); `value`
    and `err` are multiplied by `scale` for the axis. `style` are
    matplotlib's keywords, with ``marker``. The label is ``"label (N)"``
    (`label` alone unless `counted`); a group of more than :data:`MAX_DRAWN`
    rows is drawn as :func:`bin_log`'s medians with their 16–84 % bars
    instead (drawn lighter than the markers), and its label gives its rows
    and the rows a bin holds (the legend's title is then :data:`BINNED_TITLE`).

    Returns the (x, y) arrays drawn (the markers and their bars' ends, in the
    axes' units), for the legend's place, and whether the group was binned.
    """
    tau = np.asarray(tau, dtype=float)
    value = np.asarray(value, dtype=float) * scale
    if tau.size <= MAX_DRAWN:
        label = f"{label} ({tau.size})" if counted else label
        if err is None:
            style.pop("elinewidth", None)
            ax.plot(tau * 1e3, value, ls="none", label=label, **style)
            return [(tau * 1e3, value)], False
        bars = np.where(np.isfinite(err), err, 0.0) * scale
        x, low, high = tau * 1e3, value - bars, value + bars
        _errorbar(ax, x, value, low, high, label=label, **style)
        return [(x, value), (x, low), (x, high)], False
    from matplotlib.colors import to_rgba

    keep = np.isfinite(tau) & (tau > 0) & np.isfinite(value)  # as matplotlib skips them
    if not keep.any():
        return [], False
    binned = bin_log(tau[keep], value[keep])
    _errorbar(
        ax,
        binned.tau * 1e3,
        binned.value,
        binned.lower,
        binned.upper,
        label=_binned_label(label, int(keep.sum()), binned),
        ecolor=to_rgba(style.get("color", "k"), _BAR_ALPHA),
        **style,
    )
    x = binned.tau * 1e3
    return [(x, binned.value), (x, binned.lower), (x, binned.upper)], True
