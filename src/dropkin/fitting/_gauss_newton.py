"""The bootstrap's last look at the contact instant: t0 and the law's parameters together.

From its best grid origin, each resample's robust cost ``Σ ρ(z)`` is
minimised over the law's linear parameters β and the origin t0 at once.
Each step solves the Gauss–Newton normal equations of the residuals with the
loss's own curvature ρ''(z) as weights and its slope ρ'(z) on the right-hand
side: Newton's method on the robust cost, the model's second derivatives left
out (Björck, *Numerical Methods for Least Squares Problems*, SIAM 1996, ch. 9,
from memory). The matrix is positive definite, so the step points downhill;
it is cut to t0's interval and halved until the cost does not rise, so every
series only ever goes downhill. Near the minimum the steps converge
quadratically in β, where reweighting by ρ'(z)/z creeps there at a linear
rate; each step costs one pass over the points, where a search over t0 alone
costs a whole robust fit per origin tried. A series whose t0 is pushed
beyond an end of its interval, or finds no downhill step, keeps its t0 and
settles β there.
"""

from __future__ import annotations

import numpy as np

from ._robust import _predict, rho

__all__ = ["refine_jointly"]

#: Most steps a series takes; each costs one pass over its points, and one more for
#: each halving.
_MAX_STEPS = 40
#: A series has settled once a step moves t0 by less than the tolerance given and
#: each linear parameter (ln A, n) by less than this.
_BETA_TOL = 1e-10
#: Halvings of a step that raises the cost, before the series stops where it is.
_MAX_HALVINGS = 8


def _residuals(model, time, y, s, t0, beta):
    """τ, the design X and the normalised residuals z at (t0, β) of each series."""
    tau = time[None, :] - t0[:, None]
    x, off = model.design(tau)
    return tau, x, (y - (off + _predict(x, beta))) / s


def _normal_equations(model, tau, x, z, s, beta, f, loss):
    """The Newton step's equations ``a Δ = g`` in (β, t0) of each series, and which
    of them are finite."""
    # The loss's own curvature ρ''(z)/2 (1 for squares): with it the steps settle
    # in a few passes where reweighting by ψ(z)/z creeps to the same point at a
    # linear rate.
    u2 = (z / f) ** 2
    curvature = 1.0 if loss == "linear" else (1.0 + u2) ** -1.5
    gradient = z if loss == "linear" else z / np.sqrt(1.0 + u2)
    w = np.broadcast_to(curvature / s**2, z.shape)
    if model.shape is None:
        slope = np.broadcast_to(beta[:, 1:2], tau.shape)
    else:
        slope = model.shape.slope(tau)
    # The Jacobian transposed, (series, parameters, points): the sums below are
    # matrix products, each series' its own.
    jac = np.concatenate([np.swapaxes(x, 1, 2), (-slope / tau)[:, None, :]], axis=1)
    a = (jac * w[:, None, :]) @ np.swapaxes(jac, 1, 2)
    g = (jac @ (gradient / s)[..., None])[..., 0]
    return a, g, np.isfinite(a).all(axis=(1, 2)) & np.isfinite(g).all(axis=1)


def _step(a, g, ok, held):
    """(Δβ, Δt0) of each series (NaN where not `ok`); Δt0 = 0 for the `held` ones,
    whose t0 stays where it is this step."""
    # A law flat in t0 at every point (the log law past its peak) cannot move it.
    held = held | (a[:, -1, -1] <= 0.0)
    whole, fixed = ok & ~held, ok & held
    step = np.zeros(g.shape)
    step[whole] = _solve(a[whole], g[whole])
    step[fixed, :-1] = _solve(a[fixed, :-1, :-1], g[fixed, :-1])
    step[~ok] = np.nan
    return step


def _solve(a, g):
    """Batched ``a x = g``; the pseudo-inverse for a singular ``a`` (each system on
    its own then, so that one singular series changes no other's numbers)."""
    try:
        return np.linalg.solve(a, g[..., None])[..., 0]
    except np.linalg.LinAlgError:
        return np.stack([_solve_one(ak, gk) for ak, gk in zip(a, g, strict=True)])


def _solve_one(a, g):
    try:
        return np.linalg.solve(a, g)
    except np.linalg.LinAlgError:
        return np.linalg.pinv(a) @ g


def refine_jointly(model, time, y, s, f, loss, t0, beta, lo, hi, tol, counter=None):
    """Minimise each series' robust cost over (β, t0), t0 within [lo, hi].

    Parameters
    ----------
    model : LinearModel
    time : (N,) ndarray
    y : (B, N) ndarray
    s : (N,) ndarray
    f : float or (N,) ndarray
        Robust scale of each point.
    loss : str
    t0, beta : (B,), (B, p) ndarrays
        Where each series starts (its best origin so far and β there).
    lo, hi : (B,) ndarrays
        Each series' interval for t0.
    tol : float
        A series settles once a step moves its t0 by less than this (and β by
        less than :data:`_BETA_TOL`).
    counter : list, optional
        Given the number of series evaluated at each pass.

    Returns
    -------
    t0 : (B,) ndarray
    beta : (B, p) ndarray
    """
    t0, beta = t0.astype(float).copy(), beta.astype(float).copy()
    live = np.arange(len(t0))
    with np.errstate(all="ignore"):  # a point at t0 or a singular system: NaN, handled
        return _descend(model, time, y, s, f, loss, t0, beta, lo, hi, tol, counter, live)


def _descend(model, time, y, s, f, loss, t0, beta, lo, hi, tol, counter, live):
    for _ in range(_MAX_STEPS):
        if live.size == 0:
            break
        yl, tl, bl = y[live], t0[live], beta[live]
        tau, x, z = _residuals(model, time, yl, s, tl, bl)
        cost = rho(z, f, loss).sum(axis=-1)
        a, g, ok = _normal_equations(model, tau, x, z, s, bl, f, loss)
        step = _step(a, g, ok, np.zeros(live.size, dtype=bool))
        # At an end of its interval and pushed beyond it, t0 stays there this step.
        out = ((tl <= lo[live]) & (step[:, -1] < 0)) | ((tl >= hi[live]) & (step[:, -1] > 0))
        if out.any():
            step[out] = _step(a[out], g[out], ok[out], np.ones(out.sum(), dtype=bool))
        if counter is not None:
            counter.append(live.size)
        new_t0, new_beta, found = _downhill(
            model, time, yl, s, f, loss, tl, bl, step, cost, lo[live], hi[live], counter
        )
        still = np.abs(new_t0 - tl) <= tol
        settled = ~found | (still & (np.max(np.abs(new_beta - bl), axis=1) <= _BETA_TOL))
        t0[live], beta[live] = new_t0, new_beta
        live = live[~settled]
    return t0, beta


def _downhill(model, time, y, s, f, loss, t0, beta, step, cost, lo, hi, counter):
    """The step of each series cut to its interval and halved until its cost does not
    rise: the new (t0, β), and whether such a step was found."""
    with np.errstate(all="ignore"):
        dt = step[:, -1]
        room = np.where(dt > 0, hi - t0, lo - t0)
        scale = np.where(np.abs(dt) > np.abs(room), room / dt, 1.0)
        scale = np.where(np.isfinite(scale) & np.isfinite(step).all(axis=1), scale, 0.0)
    pending = np.flatnonzero(scale > 0)
    found = np.zeros(len(t0), dtype=bool)
    new_t0, new_beta = t0.copy(), beta.copy()
    for _ in range(_MAX_HALVINGS):
        if pending.size == 0:
            break
        k = scale[pending]
        trial_t0 = np.clip(t0[pending] + k * step[pending, -1], lo[pending], hi[pending])
        trial_beta = beta[pending] + k[:, None] * step[pending, :-1]
        _, _, z = _residuals(model, time, y[pending], s, trial_t0, trial_beta)
        if counter is not None:
            counter.append(pending.size)
        trial = rho(z, f, loss).sum(axis=-1)
        down = np.isfinite(trial) & (trial <= cost[pending])
        new_t0[pending[down]], new_beta[pending[down]] = trial_t0[down], trial_beta[down]
        found[pending[down]] = True
        scale[pending] = np.where(down, k, 0.5 * k)
        pending = pending[~down]
    return new_t0, new_beta, found
