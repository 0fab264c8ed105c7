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

The legend's corner is chosen from where the points lie (the corner with
fewest of them), not by matplotlib's ``loc="best"``, which tries every
corner against every point drawn.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = [
    "Binned",
    "bin_log",
    "draw_points",
    "legend_corner",
    "place_legend",
    "MAX_DRAWN",
    "BINS",
    "BINNED_TITLE",
]

#: Rows of one group drawn one by one; a longer group is binned.
MAX_DRAWN = 3000
#: Log-spaced bins of a binned group.
BINS = 150
#: The percentiles a binned point's bar spans.
SPREAD = (16.0, 84.0)
#: The legend's title of a figure with binned points.
BINNED_TITLE = "binned: median per log-τ bin, bar 16–84 %"
#: The opacity of a binned point's bar (its marker is opaque).
_BAR_ALPHA = 0.45
#: A corner holding more of the points than this share is crowded.
_CROWDED = 0.02
#: Rows at most that :func:`legend_corner` counts.
_COUNTED = 20_000


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


def _quantile(sorted_values, start, size, q):
    """The `q` quantile of each group ``sorted_values[start:start + size]`` (linear rule)."""
    pos = start + q * (size - 1)
    low = np.floor(pos).astype(np.intp)
    high = np.minimum(low + 1, start + size - 1)
    frac = pos - low
    return sorted_values[low] + frac * (sorted_values[high] - sorted_values[low])


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
    lo, hi = float(tau.min()), float(tau.max())
    edges = np.geomspace(lo, hi, bins + 1) if hi > lo else np.array([lo, lo])
    index = np.clip(np.searchsorted(edges, tau, side="right") - 1, 0, len(edges) - 2)
    sizes = np.bincount(index, minlength=len(edges) - 1)
    held = sizes > 0
    size = sizes[held]
    start = np.concatenate(([0], np.cumsum(size)[:-1]))
    # rows grouped by bin, sorted within it: once by τ, once by value
    by_tau = np.sort(tau)  # τ's order is the bins' order
    by_value = value[np.lexsort((value, index))]
    return Binned(
        edges=edges,
        tau=_quantile(by_tau, start, size, 0.5),
        value=_quantile(by_value, start, size, 0.5),
        lower=_quantile(by_value, start, size, SPREAD[0] / 100),
        upper=_quantile(by_value, start, size, SPREAD[1] / 100),
        rows=size,
    )


def _binned_label(label: str, rows: int, binned: Binned) -> str:
    least, most = int(binned.rows.min()), int(binned.rows.max())
    per = f"{least}" if least == most else f"{least}–{most}"
    return f"{label} ({rows}, {per} a bin)"


def _errorbar(ax, x, y, low, high, *, label, marker, ecolor=None, elinewidth=0.5, **style):
    """Markers at (x, y) with vertical bars from `low` to `high`, as ``ax.errorbar``
    draws them (the same legend entry), but the bars as one path of line
    pieces: a collection of a segment per point is transformed point by point,
    a cost of the order of a second per 10⁴ points on a log axis.
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
) -> bool:
    """Draw one group of points against τ (ms): row by row, or binned when long.

    `tau` (s) and `value` are the group's rows, `err` their uncertainties
    (error bars when the group is drawn row by row; NaN for none); `value`
    and `err` are multiplied by `scale` for the axis. `style` are
    matplotlib's keywords, with ``marker``. The label is ``"label (N)"``
    (`label` alone unless `counted`); a group of more than :data:`MAX_DRAWN`
    rows is drawn as :func:`bin_log`'s medians with their 16–84 % bars
    instead (drawn lighter than the markers), its label gives its rows and
    the rows a bin holds, and True is returned: the legend's title is then
    :data:`BINNED_TITLE`.
    """
    tau = np.asarray(tau, dtype=float)
    value = np.asarray(value, dtype=float) * scale
    if tau.size <= MAX_DRAWN:
        label = f"{label} ({tau.size})" if counted else label
        if err is None:
            style.pop("elinewidth", None)
            ax.plot(tau * 1e3, value, ls="none", label=label, **style)
            return False
        bars = np.where(np.isfinite(err), err, 0.0) * scale
        _errorbar(ax, tau * 1e3, value, value - bars, value + bars, label=label, **style)
        return False
    from matplotlib.colors import to_rgba

    binned = bin_log(tau, value)
    _errorbar(
        ax,
        binned.tau * 1e3,
        binned.value,
        binned.lower,
        binned.upper,
        label=_binned_label(label, tau.size, binned),
        ecolor=to_rgba(style.get("color", "k"), _BAR_ALPHA),
        **style,
    )
    return True


def legend_corner(ax, points) -> str | None:
    """The corner of `ax` where the fewest of `points` lie, for the legend's ``loc``;
    None when even that corner holds more than 2 % of them.

    `points` are (x, y) pairs of arrays in data coordinates, as drawn; call
    it once the axes' limits are set. Each corner is a box of 45 % of the
    width and 40 % of the height; ties go to the upper left, upper right,
    lower right, lower left, in that order. Of a long series every k-th row
    is counted, :data:`_COUNTED` rows at most.
    """
    xy = [np.column_stack((np.ravel(x), np.ravel(y))) for x, y in points if np.size(x)]
    if not xy:
        return "upper left"
    xy = np.vstack(xy)
    xy = xy[:: max(1, len(xy) // _COUNTED)]
    to_axes = ax.transData + ax.transAxes.inverted()
    frac = to_axes.transform(xy)
    frac = frac[np.isfinite(frac).all(axis=1)]
    left, right = frac[:, 0] < 0.45, frac[:, 0] > 0.55
    upper, lower = frac[:, 1] > 0.6, frac[:, 1] < 0.4
    crowd = {
        "upper left": left & upper,
        "upper right": right & upper,
        "lower right": right & lower,
        "lower left": left & lower,
    }
    corner = min(crowd, key=lambda k: int(crowd[k].sum()))
    return None if crowd[corner].sum() > _CROWDED * len(frac) else corner


def place_legend(ax, points, *, binned: bool = False, **options) -> None:
    """The axes' legend in the corner :func:`legend_corner` chooses, or below the
    axes (the figure made taller by its height) when every corner is crowded.

    `binned` titles it :data:`BINNED_TITLE`; `options` go to matplotlib's legend.
    """
    title = BINNED_TITLE if binned else None
    corner = legend_corner(ax, points)
    if corner is not None:
        ax.legend(loc=corner, title=title, title_fontsize=6.5, **options)
        return
    fig = ax.figure
    legend = fig.legend(loc="outside lower center", title=title, title_fontsize=6.5, **options)
    lines = len(legend.get_texts()) + (title is not None)
    fig.set_figheight(fig.get_figheight() + 0.14 * lines + 0.05)
