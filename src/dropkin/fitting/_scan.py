"""The bootstrap's first look at the contact instant: a grid of origins ranked at once.

For every resample (row of ``y``) and every origin of a grid across the
contact bracket, the weighted sum of squares of the law fitted at that
origin with the weights given (those of the residuals the resample drew).
At fixed weights the normal equations' sums separate into a product of a
resample's weights (and values) with an origin's regressors, so the whole
(resamples × origins) table costs a few matrix products, not one pass over
every point for every pair; each series' best origin is where its Newton
steps in (β, t0) then start (:func:`._linear.profile_many`).
"""

from __future__ import annotations

import numpy as np

__all__ = ["scan_costs"]


def scan_costs(time, y, s, model, grid, weights=None):
    """Weighted residual sum of squares of `model` at each origin of `grid`.

    Parameters
    ----------
    time : (N,) ndarray
        Times of the points, all later than every origin of `grid`.
    y : (B, N) ndarray
        ``ln r`` of each series.
    s : (N,) ndarray
        σ of each ``ln r``.
    model : LinearModel
        Its design's first column is ones (every law has a prefactor), so
        constants taken off ``y`` (per series) and off the offset (per
        origin) change no sum of squares; they are, for precision.
    grid : (G,) ndarray
        The origins.
    weights : (B, N) ndarray, optional
        The weights of each series' points (default ``1/s²``).

    Returns
    -------
    cost : (B, G) ndarray
        The sums of squares; ``inf`` where a system is singular or not finite.
    beta : (B, G, p) ndarray
        The law's linear parameters at each origin.
    """
    w = np.broadcast_to(1.0 / s**2, y.shape) if weights is None else weights
    x, off = model.design(time[None, :] - grid[:, None])  # (G, N, p), (G, N)
    with np.errstate(all="ignore"):
        y_mean = (w * y).sum(axis=-1) / w.sum(axis=-1)
        off_mean = off.mean(axis=-1)
        yc, off = y - y_mean[:, None], off - off_mean[:, None]
        wy = w * yc
        p = x.shape[-1]
        cols = [x[..., j] for j in range(p)]
        a = np.empty(y.shape[:1] + grid.shape + (p, p))
        for j in range(p):
            for k in range(j, p):
                a[..., j, k] = a[..., k, j] = _rows(w, cols[j] * cols[k])
        b = np.stack([_rows(wy, c) - _rows(w, c * off) for c in cols], axis=-1)
        q = (wy * yc).sum(axis=-1)[:, None] - 2.0 * _rows(wy, off) + _rows(w, off * off)
        beta = _solve(a, b)
        cost = q - np.einsum("bgj,bgj->bg", beta, b)
        beta[..., 0] += y_mean[:, None] - off_mean[None, :]  # the constants taken off
    return np.where(np.isfinite(cost), np.maximum(cost, 0.0), np.inf), beta


def _rows(u, v):
    """``u @ v.T`` one row of `u` at a time: a matrix product's rounding can depend on
    how many rows it is given, and a series' numbers must not depend on its block."""
    vt = np.ascontiguousarray(v.T)
    return np.stack([row @ vt for row in u]) if len(u) else np.zeros((0, len(v)))


def _solve(a, b):
    """β of the (B, G) systems ``a β = b`` with p ≤ 2 in closed form (NaN when singular)."""
    if a.shape[-1] == 1:
        return b / a[..., 0]
    if a.shape[-1] == 2:
        det = a[..., 0, 0] * a[..., 1, 1] - a[..., 0, 1] ** 2
        b0, b1 = b[..., 0], b[..., 1]
        return np.stack(
            [
                (a[..., 1, 1] * b0 - a[..., 0, 1] * b1) / det,
                (a[..., 0, 0] * b1 - a[..., 0, 1] * b0) / det,
            ],
            axis=-1,
        )
    return np.linalg.solve(a, b[..., None])[..., 0]
