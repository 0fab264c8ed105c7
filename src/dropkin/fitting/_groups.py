"""Points the laws cannot tell apart, averaged: what keeps a long series' fit short.

Every law fitted here is a smooth function of ``ln τ`` whose local exponent
``d ln r / d ln τ`` lies between 0 and 1, so over rows whose times since
contact differ by a factor of at most ``exp(spread)`` the law's ``ln r``
changes by at most `spread`. A camera at 10^5–10^6 frames per second puts
thousands of such rows into each late stretch of a long recording. A series
of more than :data:`MOST_POINTS` rows after contact is fitted on stretches of
``ln τ``, each replaced by one point, its rows' weighted mean; the stretches
are the narrowest that leave at most :data:`MOST_POINTS` points (never wider
than :data:`WIDEST_SPREAD`), so a fit costs about the same for 10^4 or 10^6
rows while the information on the law is kept (docs/physics.md §4.8, "Long series").
Shorter series are fitted row by row, as they always were.

- ``ln r`` of the point is the weighted mean of its rows' (weights ``1/σ²``),
  and its uncertainty ``1/√Σ(1/σ²)``: the least-squares estimate of a
  constant over the rows, with its standard error (common practice);
- its time is where ``ln τ`` takes the rows' weighted mean, τ counted from
  `reference` (the middle of the contact bracket): for a law linear in
  ``ln τ`` the weighted sum of squares over the rows is then the one over the
  points plus terms that only the within-stretch slope enters (they carry
  less than ``spread²/12`` of a window's spread of ``ln τ`` per row);
- stretches are counted from `origin`, the latest possible contact instant,
  so that no origin in the bracket puts more than `spread` of ``ln τ`` into
  one point;
- the robust loss counts a point's rows (:func:`._core.point_scales`).

Early rows, a frame apart by more than `spread` of their τ, stay single.
"""

from __future__ import annotations

import numpy as np

from ._core import Series

__all__ = ["MOST_POINTS", "WIDEST_SPREAD", "group_close_points", "points_to_fit", "spread_for"]

#: Most points a series is fitted on: longer series have their close rows averaged.
MOST_POINTS = 2048
#: Widest spread of ``ln τ`` (from the latest possible origin) within one averaged point:
#: the law's ``ln r`` changes by at most 2 % across it.
WIDEST_SPREAD = 0.02
#: Halvings of the bisection for the spread (relative precision 2**-30 of the widest).
_HALVINGS = 30


def _log_times(series: Series, origin: float) -> np.ndarray:
    """``ln(t - origin)`` of the points, counted from the first point's."""
    u = np.log(series.time - origin)
    return u - u[0]


def _stretch(u, spread) -> np.ndarray:
    """The stretch of `spread` each value of `u` (from :func:`_log_times`) falls into."""
    return np.floor(u / spread).astype(np.int64)


def _count(u, spread) -> int:
    """How many stretches of `spread` the sorted values `u` fall into."""
    return 1 + int(np.count_nonzero(np.diff(_stretch(u, spread))))


def spread_for(series: Series, origin: float, most: int | None = None) -> float:
    """The narrowest spread of ``ln(t - origin)`` that leaves at most `most` points
    (default :data:`MOST_POINTS`; 0.0 when the series has no more than that;
    :data:`WIDEST_SPREAD` when even it leaves more).

    Examples
    --------
    >>> import numpy as np
    >>> t = np.linspace(1e-6, 1e-2, 10**5)
    >>> s = Series(t, 0.5 * np.log(t), np.full(t.size, 0.01), True)
    >>> spread = spread_for(s, 0.0)
    >>> [len(group_close_points(s, 0.0, 0.0, f * spread)) <= 2048 for f in (1.0, 0.99)]
    [True, False]
    """
    most = MOST_POINTS if most is None else most
    if len(series) <= most:
        return 0.0
    u = _log_times(series, origin)
    if _count(u, WIDEST_SPREAD) > most:
        return WIDEST_SPREAD
    narrow, wide = 0.0, WIDEST_SPREAD  # too many points at `narrow`, few enough at `wide`
    for _ in range(_HALVINGS):
        mid = 0.5 * (narrow + wide)
        narrow, wide = (mid, wide) if _count(u, mid) > most else (narrow, mid)
    return wide


def group_close_points(series: Series, origin: float, reference: float, spread: float) -> Series:
    """`series` with the rows within `spread` of ``ln(t - origin)`` of each other averaged.

    Parameters
    ----------
    series : Series
        Points after `origin` (``time > origin``), sorted by time.
    origin : float
        The latest possible contact instant (s): the stretches are cut on
        ``ln(t - origin)`` in steps of `spread`, from the first point's.
    reference : float
        The origin (≤ `origin`) at which a point's time is the exact weighted
        mean of its rows' ``ln τ``.
    spread : float
        Width of a stretch in ``ln τ`` (0: the series as it is; see :func:`spread_for`).

    Returns
    -------
    Series
        One point a stretch; ``rows`` holds how many rows each averages. The
        series itself when no stretch holds more than one row.

    Examples
    --------
    >>> import numpy as np
    >>> t = np.arange(1.0, 2001.0)
    >>> s = Series(t, 0.5 * np.log(t), np.full(t.size, 0.01), True)
    >>> g = group_close_points(s, 0.0, 0.0, 0.01)
    >>> len(g), int(g.rows.sum()), bool(np.allclose(g.y, 0.5 * np.log(g.time)))
    (400, 2000, True)
    """
    if len(series) == 0 or spread <= 0:
        return series
    label = _stretch(_log_times(series, origin), spread)
    starts = np.flatnonzero(np.diff(label, prepend=label[0] - 1))
    if len(starts) == len(series):
        return series
    rows = series.counts
    w = 1.0 / series.s**2
    weight = np.add.reduceat(w, starts)
    y = np.add.reduceat(w * series.y, starts) / weight
    ln_tau = np.log(series.time - reference)
    time = reference + np.exp(np.add.reduceat(w * ln_tau, starts) / weight)
    # A single row keeps its own time exactly (exp(log) may move it by an ulp).
    single = np.diff(np.append(starts, len(series))) == 1
    time[single] = series.time[starts[single]]
    return Series(time, y, 1.0 / np.sqrt(weight), series.weighted, np.add.reduceat(rows, starts))


def points_to_fit(series: Series, levels, lo: float, hi: float):
    """The rows after contact (``time > hi``), the points fitted in their place, those
    of the series at other edge levels (`levels`), and the spread that made them.

    The spread is the one :func:`spread_for` gives the rows; each point's time is
    exact at the middle of the bracket (lo, hi).
    """
    rows = series.subset(series.time > hi)
    spread = spread_for(rows, hi)
    mid = 0.5 * (lo + hi)
    others = tuple(group_close_points(s.subset(s.time > hi), hi, mid, spread) for s in levels)
    return rows, group_close_points(rows, hi, mid, spread), others, spread
