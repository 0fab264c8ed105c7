"""Two-regime models behind :func:`fit_blend`: first guess and solver.

The models and their parameterisation are described in :mod:`._blends`;
:class:`TwoLawModel` (:mod:`._two_law_model`) predicts ``ln r`` and its
derivatives; here :func:`build_model` makes its first guess and bounds, and
:func:`blend_fit` runs scipy's ``least_squares`` (robust ``soft_l1`` on the
normalised residuals of ``ln r``, the model's exact Jacobian) and builds the
:class:`BlendFit`.
"""

from __future__ import annotations

import math
import warnings

import numpy as np

from ._core import (
    Series,
    bracket_ci,
    data_problem,
    information,
    jacobian_covariance,
    normal_ci,
    safe_exp,
    solve_log_radius,
)
from ._records import BlendFit
from ._two_law_model import TwoLawModel, exp_or_nan

__all__ = ["MIN_BLEND_POINTS", "TwoLawModel", "build_model", "least_squares_fit", "blend_fit"]

#: Fewest points a two-regime fit accepts (up to six parameters).
MIN_BLEND_POINTS = 12
_N_BOUNDS = (-0.5, 3.0)
_S_BOUNDS = (0.25, 10.0)


def _polyfit(x, y, w):
    if len(x) >= 2 and np.ptp(x) > 0:
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("error")  # times (nearly) equal: RankWarning
                n, a = np.polyfit(x, y, 1, w=np.sqrt(w))
            return float(a), float(n)
        except (Warning, ValueError, np.linalg.LinAlgError):
            pass
    return float(np.mean(y)), 0.5


def initial_guess(data: Series, early, late, t0):
    """First guess: log-log polyfits on the first and last thirds, τ_c where they meet."""
    tau = data.time - t0
    x = np.log(tau)
    w = 1.0 / data.s**2
    edges = np.linspace(x[0], x[-1], 4)
    first, last = x <= edges[1], x >= edges[2]
    if first.sum() < 3:
        first = np.arange(len(x)) < max(3, len(x) // 3)
    if last.sum() < 3:
        last = np.arange(len(x)) >= len(x) - max(3, len(x) // 3)
    guesses = []
    for shape, sel in ((early, first), (late, last)):
        if shape is None:
            a, n = _polyfit(x[sel], data.y[sel], w[sel])
        else:
            f = shape.log_shape(tau[sel])
            a, n = float(np.sum(w[sel] * (data.y[sel] - f)) / np.sum(w[sel])), shape.exponent
        guesses.append((a, n))
    (a1, n1), (a2, n2) = guesses
    grid = np.linspace(x[0] - math.log(10), x[-1] + math.log(10), 241)
    g1 = a1 + (n1 * grid if early is None else early.log_shape(np.exp(grid)))
    g2 = a2 + (n2 * grid if late is None else late.log_shape(np.exp(grid)))
    d = g1 - g2
    change = np.nonzero(np.sign(d[1:]) != np.sign(d[:-1]))[0]
    middle = 0.5 * (x[0] + x[-1])
    lntc = float(grid[change[np.argmin(np.abs(grid[change] - middle))]]) if len(change) else middle
    return a1, n1, n2, lntc


def effective_exponent(shape, n_guess, tau):
    return float(np.mean(shape.slope(tau))) if shape is not None else n_guess


def build_model(
    data, kind, early, late, sharpness, lo, hi, t0_start=None, direction=None, start=None
):
    """The model, its first guess and bounds for points `data` (after contact).

    `direction` -1 makes the early law the smaller radius at first (its
    exponent falls across the crossover), +1 the larger; by default it follows
    the two laws' (guessed) exponents. `start` overrides first-guess values
    by parameter name (``lnA1``, ``n1``, ``n2``, ``lntc``, ``s``, ``t0``).
    """
    t0_init = 0.5 * (lo + hi) if t0_start is None else min(max(t0_start, lo), hi)
    a1, n1, n2, lntc = initial_guess(data, early, late, t0_init)
    tau = data.time - t0_init
    e1, e2 = effective_exponent(early, n1, tau), effective_exponent(late, n2, tau)
    if direction is None:
        direction = -1 if e1 >= e2 else 1
    elif direction == -1 and early is None and late is None and n1 < n2:
        n1, n2 = n2, n1  # guesses on the wrong side of each other
    elif direction == 1 and early is None and late is None and n1 > n2:
        n1, n2 = n2, n1
    model = TwoLawModel(kind, early, late, sharpness, direction, None if hi > lo else lo)
    x_lo, x_hi = math.log(tau[0]) - math.log(10), math.log(tau[-1]) + math.log(10)
    first = {"lnA1": a1, "n1": n1, "n2": n2, "lntc": lntc, "s": 1.0, "t0": t0_init}
    first.update(start or {})
    bounds = {
        "lnA1": (-np.inf, np.inf),
        "n1": _N_BOUNDS,
        "n2": _N_BOUNDS,
        "lntc": (x_lo, x_hi),
        "s": _S_BOUNDS,
        "t0": (lo, hi),
    }
    names = model.names()
    lb = np.array([bounds[k][0] for k in names], dtype=float)
    ub = np.array([bounds[k][1] for k in names], dtype=float)
    x0 = np.array([first[k] for k in names], dtype=float)
    span = np.where(np.isfinite(ub - lb), ub - lb, 1.0)
    x0 = np.clip(x0, lb + 1e-6 * span, ub - 1e-6 * span)
    return model, x0, (lb, ub)


def least_squares_fit(model, data, x0, bounds, *, loss, f_scale, max_nfev=None):
    """Run scipy's least_squares on the normalised residuals of ``ln r``, with the
    model's exact Jacobian (blend_fit returns a falsy record when the result is
    not finite)."""
    nfev = max_nfev or 100 * (len(x0) + 1)
    return solve_log_radius(
        model.log_radius,
        data,
        x0,
        bounds,
        loss=loss,
        f_scale=f_scale,
        max_nfev=nfev,
        gradient=model.log_radius_and_gradient,
    )


def blend_fit(
    series: Series,
    lo,
    hi,
    *,
    kind="blend",
    early=None,
    late=None,
    sharpness=None,
    loss="soft_l1",
    f_scale,
    t0_start=None,
    direction=None,
    start=None,
) -> BlendFit:
    """Fit one two-regime model to prepared points (the work behind the public fits)."""
    name = "broken" if kind == "broken" else ("harmonic" if sharpness == 1.0 else "blend")
    problem = data_problem(series, lo, hi)
    if problem:
        return BlendFit(False, problem, name, loss=loss)
    data = series.subset(series.time > hi)
    if len(data) < MIN_BLEND_POINTS:
        return BlendFit(
            False,
            f"too few points for two regimes: {len(data)}, at least {MIN_BLEND_POINTS} needed",
            name,
        )
    model, x0, bounds = build_model(
        data, kind, early, late, sharpness, lo, hi, t0_start, direction, start
    )
    try:
        res = least_squares_fit(model, data, x0, bounds, loss=loss, f_scale=f_scale)
    except (ValueError, np.linalg.LinAlgError) as exc:  # scipy met infinities it made
        return BlendFit(False, f"the fit did not converge ({exc})", name, loss=loss)
    return _blend_record(name, kind, model, data, res, early, late, sharpness, lo, hi, loss)


def _blend_record(name, kind, model, data, res, early, late, sharpness, lo, hi, loss):
    """The record of a converged two-regime fit: values, normal intervals, information."""
    theta = res.x
    p = model.unpack(theta)
    z = (data.y - model.log_radius(theta, data.time)) / data.s
    chi2 = float(np.sum(z * z))
    n, k = len(z), len(theta)
    try:
        with np.errstate(over="ignore", invalid="ignore"):  # not finite: a falsy fit below
            cov = jacobian_covariance(res.jac, chi2 / max(n - k, 1))
    except (ValueError, np.linalg.LinAlgError):
        cov = np.full((k, k), np.nan)
    err = dict(zip(model.names(), np.sqrt(np.maximum(np.diag(cov), 0.0)), strict=True))
    n1, n2 = model.exponents(theta)
    a1, a2, rc = model.prefactors(theta)
    tc = exp_or_nan(p["lntc"])
    lo_c, hi_c = normal_ci(p["lntc"], err["lntc"])
    n1_ci = (n1, n1) if early is not None else normal_ci(n1, err["n1"])
    n2_ci = (n2, n2) if late is not None else normal_ci(n2, err["n2"])
    aic, bic = information(chi2, n, k)
    tau = data.time - p["t0"]
    a1_ci, a2_ci = _prefactor_intervals(model, theta, cov)
    numbers = (chi2, n1, n2, a1, a2, rc, tc, p["t0"], lo_c, hi_c, *n1_ci, *n2_ci)
    finite = bool(np.all(np.isfinite(numbers)))
    if finite:
        message = ""
    elif not np.isfinite(chi2):
        message = "the fit did not converge"
    else:
        message = "the fitted laws or their intervals are outside the floating-point range"
    return BlendFit(
        success=finite,
        message=message,
        model=name,
        early_exponent=n1,
        late_exponent=n2,
        early_exponent_ci=n1_ci,
        late_exponent_ci=n2_ci,
        exponents_fixed=early is not None and late is not None,
        early_shape=early,
        late_shape=late,
        early_prefactor=a1,
        late_prefactor=a2,
        early_prefactor_ci=a1_ci,
        late_prefactor_ci=a2_ci,
        crossover_time=tc,
        crossover_time_ci=(safe_exp(lo_c), safe_exp(hi_c)),
        crossover_radius=rc,
        sharpness=float(p["s"]) if kind == "blend" else math.nan,
        sharpness_fixed=kind == "blend" and sharpness is not None,
        direction=model.direction,
        t0=float(p["t0"]),
        t0_free=hi > lo,
        t0_bracket=(lo, hi),
        t0_ci=bracket_ci(p["t0"], err.get("t0", 0.0), lo, hi),
        n_points=n,
        window=(float(tau[0]), float(tau[-1])),
        chi2=chi2,
        aic=aic,
        bic=bic,
        n_params=k,
        loss=loss,
        ci_method="normal approximation (covariance scaled by the reduced chi-square)",
    )


def _prefactor_intervals(model, theta, cov):
    """Normal-approximation 95 % intervals of (A1, A2), through ``ln A`` and the covariance.

    ``ln A2 = ln A1 + f1(τc) - f2(τc)`` depends on several parameters: its
    gradient is taken by central differences.
    """

    def ln_prefactors(th):
        a1, a2, _ = model.prefactors(th)
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.log([a1, a2])

    theta = np.asarray(theta, dtype=float)
    centre = ln_prefactors(theta)
    grad = np.empty((2, len(theta)))
    for j in range(len(theta)):
        h = 1e-6 * max(abs(theta[j]), 1.0)
        up, down = theta.copy(), theta.copy()
        up[j] += h
        down[j] -= h
        grad[:, j] = (ln_prefactors(up) - ln_prefactors(down)) / (2.0 * h)
    with np.errstate(invalid="ignore", over="ignore"):
        var = np.einsum("ij,jk,ik->i", grad, cov, grad)
    out = []
    for value, v in zip(centre, var, strict=True):
        lo, hi = normal_ci(float(value), math.sqrt(v) if v >= 0 else math.nan)
        out.append((safe_exp(lo), safe_exp(hi)))
    return tuple(out)
