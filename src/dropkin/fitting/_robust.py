"""The robust linear solver of the fits (private to :mod:`dropkin.fitting`).

``soft_l1`` (``ρ(z) = 2 f²(√(1 + (z/f)²) - 1)``) solved by iteratively
reweighted least squares, batched over leading axes; the one- and
two-parameter normal equations in closed form.
"""

from __future__ import annotations

import numpy as np

__all__ = ["rho", "solve_linear"]


def rho(z, f, loss):
    """The loss of each normalised residual (soft_l1 or squares)."""
    if loss == "linear":
        return z * z
    return 2.0 * f * f * (np.sqrt(1.0 + (z / f) ** 2) - 1.0)


def solve_linear(x, y, s, f, loss, iterations=8, *, start=None, tol=None):
    """Robust weighted least squares ``y ≈ X β``, batched over leading axes.

    Parameters
    ----------
    x : (..., N, p) ndarray
    y : (..., N) ndarray
    s : (N,) or (..., N) ndarray
        Uncertainty of each y.
    iterations : int
        Most reweighting passes of the robust loss.
    start : (..., N) ndarray, optional
        Weights to start the reweighting from (default ``1/s²``, plain least
        squares): the bootstrap starts each resample from the weights of the
        residuals it drew, which are already close to its own.
    tol : float, optional
        Stop the passes early once no weight moves by more than ``tol`` times
        its ``1/s²`` in a pass (default: always ``iterations`` passes).

    Returns
    -------
    beta : (..., p) ndarray
    z : (..., N) ndarray
        Normalised residuals ``(y - X β)/s``.
    w : (..., N) ndarray
        Final weights (``ψ(z)/z / s²``).
    """
    w0 = np.broadcast_to(1.0 / s**2, y.shape)
    if loss == "linear":
        beta = _weighted_solve(x, y, w0)
        return beta, (y - _predict(x, beta)) / s, w0
    w = w0 if start is None else np.broadcast_to(start, y.shape)
    if tol is not None:
        w = _settle(x, y, s, f, w0, w, iterations, tol)
    else:
        for _ in range(iterations):
            beta = _weighted_solve(x, y, w)
            z = (y - _predict(x, beta)) / s
            w = w0 / np.sqrt(1.0 + (z / f) ** 2)
    # One last solve with the final weights, so beta, z and w agree.
    beta = _weighted_solve(x, y, w)
    z = (y - _predict(x, beta)) / s
    return beta, z, w


def _settle(x, y, s, f, w0, w, iterations, tol):
    """The robust weights after at most `iterations` passes, each series (leading
    index) passed again only while one of its weights still moves by more than
    `tol` times its ``1/s²``. A series keeps the weights of the pass that found
    them settled, whatever the others in its batch do, so the result of each
    series is its own. The series still moving are gathered anew only when they
    have fallen to half of those passed (a gather costs a pass)."""
    shape, n = y.shape, y.shape[-1]
    p = x.shape[-1]
    xs = np.broadcast_to(x, shape[:-1] + (n, p)).reshape(-1, n, p)
    ys, ws = y.reshape(-1, n), np.array(w, dtype=float).reshape(-1, n)
    shared = np.ndim(s) == 1  # one σ per point for every series: no copies
    ss = s if shared else np.broadcast_to(s, shape).reshape(-1, n)
    w0s = w0[(0,) * (w0.ndim - 1)] if shared else w0.reshape(-1, n)
    rows = np.arange(len(ys))  # the series passed, and their arrays
    live = np.ones(len(ys), dtype=bool)  # the series whose weights still move
    xl, yl, sl, w0l, wl = xs, ys, ss, w0s, ws[rows]
    for _ in range(iterations):
        beta = _weighted_solve(xl, yl, wl)
        z = (yl - _predict(xl, beta)) / sl
        new = w0l / np.sqrt(1.0 + (z / f) ** 2)
        moving = np.max(np.abs(new - wl) / w0l, axis=-1) > tol
        fresh = live[rows]
        ws[rows[fresh]] = new[fresh]
        live[rows[fresh & ~moving]] = False
        if not live.any():
            break
        wl = new
        if 2 * live.sum() <= len(rows):
            rows = np.flatnonzero(live)
            xl, yl, wl = xs[rows], ys[rows], ws[rows]
            if not shared:
                sl, w0l = ss[rows], w0s[rows]
    return ws.reshape(shape)


def _weighted_solve(x, y, w):
    """β of the normal equations ``XᵀWX β = XᵀW y``, batched.

    One or two parameters (every law fitted here) are solved in closed form,
    element-wise (Cramer's rule on the 2 × 2 sums), which is several times
    quicker than numpy's batched matrix products at the same precision.
    When a system is singular (the robust weights left fewer effective points
    than parameters, or all times coincide), the pseudo-inverse gives the
    minimum-norm solution instead of an exception.
    """
    p = x.shape[-1]
    if p > 2:
        return _general_solve(x, y, w)
    x = np.broadcast_to(x, y.shape + (p,))
    w = np.broadcast_to(w, y.shape)
    with np.errstate(all="ignore"):
        if p == 1:
            c = x[..., 0]
            wc = w * c
            det = np.sum(wc * c, axis=-1)
            beta = (np.sum(wc * y, axis=-1) / det)[..., None]
        else:
            c0, c1 = x[..., 0], x[..., 1]
            w0, w1 = w * c0, w * c1
            s00, s01, s11 = (np.sum(a * b, axis=-1) for a, b in ((w0, c0), (w0, c1), (w1, c1)))
            b0, b1 = np.sum(w0 * y, axis=-1), np.sum(w1 * y, axis=-1)
            det = s00 * s11 - s01 * s01
            beta = np.stack([(s11 * b0 - s01 * b1) / det, (s00 * b1 - s01 * b0) / det], axis=-1)
    bad = ~(np.isfinite(det) & (det != 0))
    if bad.any():
        beta[bad] = _general_solve(x[bad], y[bad], w[bad])
    return beta


def _general_solve(x, y, w):
    xtw = np.swapaxes(x, -1, -2) * w[..., None, :]
    a, b = xtw @ x, xtw @ y[..., None]
    try:
        return np.linalg.solve(a, b)[..., 0]
    except np.linalg.LinAlgError:
        return (np.linalg.pinv(a) @ b)[..., 0]


def _predict(x, beta):
    """``X β`` for X (..., N, p) and β (..., p)."""
    out = x[..., 0] * beta[..., 0, None]
    for j in range(1, x.shape[-1]):
        out = out + x[..., j] * beta[..., j, None]
    return out
