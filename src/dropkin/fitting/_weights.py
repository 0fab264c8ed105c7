"""How much each point of a fit weighs (private to :mod:`dropkin.fitting`).

The uncertainty of ``ln r`` is ``σ_r / r̃`` with r̃ the median radius of the
point and its neighbours (:func:`running_median`); an averaged point of k
rows has its robust scale widened to ``f √k`` (:func:`point_scales`), in the
batched solver and in scipy's ``least_squares`` (:func:`rows_loss`).
"""

from __future__ import annotations

import numpy as np

__all__ = ["WEIGHT_NEIGHBOURS", "running_median", "point_scales", "rows_loss"]

#: Neighbours on each side in the running median of the radius that weights each point.
WEIGHT_NEIGHBOURS = 4


def running_median(r, half: int = WEIGHT_NEIGHBOURS) -> np.ndarray:
    """The median of each value and up to `half` neighbours on each side (fewer near
    the ends, as many on both sides), in the given order.

    The weight of a point is its ``σ_r / r``; with r the point's own measured
    radius, a point whose noise made it larger weighs more, and the fit leans
    towards the upward noise of the small, early radii (an exponent 0.003 low
    on 5,000 frames of a 3-px-resolved τ^½ law; docs/physics.md §4.8). The
    median of its neighbours carries little of a point's own noise and is the
    point itself on noise-free, monotonic data.

    Examples
    --------
    >>> running_median(np.array([1.0, 2.0, 3.0, 10.0, 5.0, 6.0]), half=1).tolist()
    [1.0, 2.0, 3.0, 5.0, 6.0, 6.0]
    """
    r = np.asarray(r, dtype=float)
    n = len(r)
    if n < 3 or half < 1:
        return r.copy()
    out = r.copy()
    pad = np.pad(r, half, mode="edge")
    windows = np.lib.stride_tricks.sliding_window_view(pad, 2 * half + 1)
    out[half : n - half] = np.median(windows[half : n - half], axis=-1)  # full windows
    for i in range(min(half, n)):  # near the ends: as many on both sides
        for j in (i, n - 1 - i):
            k = min(j, n - 1 - j)
            out[j] = np.median(r[j - k : j + k + 1])
    return out


def point_scales(series, f_scale):
    """The robust scale of each point: `f_scale` for a row, ``f_scale √k`` for the
    mean of k rows (:mod:`._groups`).

    With it a point's loss ``ρ(z, f√k)`` is ``k ρ(z/√k, f)``: the loss its k rows
    would add up to if each lay where their mean does. A stretch the law misses
    on every row weighs what those rows would, not k times less.
    """
    return f_scale if series.rows is None else f_scale * np.sqrt(series.rows)


def rows_loss(rows):
    """scipy's ``soft_l1`` of each point scaled to its `rows` (a callable loss):
    ``ρ_k(z) = 2k(√(1 + z/k) - 1)`` of the squared scaled residual z."""

    def loss(z):
        a = 1.0 + z / rows
        root = np.sqrt(a)
        return np.vstack([2.0 * rows * (root - 1.0), 1.0 / root, -0.5 / (rows * a * root)])

    return loss
