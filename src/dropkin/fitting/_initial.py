"""The power law with a finite initial radius: ``r = r0 + A (t - t0)**n``, r0 ≥ 0.

A neck or contact line that is already some size when it is first seen
(a finite bridge at contact, a pre-wetted spot) bends the log-log plot at
early times: with r0 = 0 the fit would take it for a smaller exponent. The
law with r0 is not linear at a given origin, so it is fitted by scipy's
``least_squares`` on ``ln r``, with the same weights (``σ_r / r``) and the
same robust loss as :func:`fit_power_law`; r0 lies in [0, smallest radius),
t0 in the contact bracket. :func:`with_initial_radius` fits it beside the law
without r0 and keeps the one the information criterion prefers: r0 is chosen
only when it lowers the AIC by more than :data:`INITIAL_RADIUS_AIC_GAIN`.
The pivot radius reported with it is that of the growing part,
``A t_p**n``.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from ._bootstrap import outside, percentile_interval, resampled_residuals
from ._core import (
    Series,
    bracket_ci,
    information,
    jacobian_covariance,
    normal_ci,
    safe_exp,
    solve_log_radius,
)
from ._records import LawFit

__all__ = [
    "INITIAL_RADIUS_AIC_GAIN",
    "fit_initial_radius",
    "with_initial_radius",
    "bootstrap_initial_radius",
]

#: AIC gain the law with r0 must bring over the law without it to be chosen.
#: With r0 = 0 the extra parameter lowers the AIC by more than 2 by chance in
#: about 2 % of series (half the χ²₁ tail beyond 4, r0 sitting on its bound).
INITIAL_RADIUS_AIC_GAIN = 2.0
_N_BOUNDS = (0.05, 3.0)
_R0_STARTS = (0.05, 0.3, 0.7)  # starting r0, in units of the smallest radius


def _log_radius(theta, time, t0_fixed):
    lna, n, r0 = theta[0], theta[1], theta[2]
    t0 = theta[3] if t0_fixed is None else t0_fixed
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        return np.log(r0 + np.exp(lna + n * np.log(time - t0)))


def _solve(data: Series, x0, bounds, t0_fixed, *, loss, f_scale, max_nfev=None):
    x0 = np.clip(x0, bounds[0], bounds[1])
    return solve_log_radius(
        lambda theta, time: _log_radius(theta, time, t0_fixed),
        data,
        x0,
        bounds,
        loss=loss,
        f_scale=f_scale,
        max_nfev=max_nfev,
    )


def _bounds(data: Series, lo, hi):
    r_min = float(np.exp(data.y.min()))
    lb = [-np.inf, _N_BOUNDS[0], 0.0] + ([lo] if hi > lo else [])
    ub = [np.inf, _N_BOUNDS[1], r_min * (1.0 - 1e-9)] + ([hi] if hi > lo else [])
    return (np.array(lb), np.array(ub)), r_min


def _fit(series: Series, base: LawFit, *, loss, f_scale) -> LawFit | None:
    """The law with r0 fitted from a few starts (None when no start converges)."""
    lo, hi = base.t0_bracket
    data = series.subset(series.time > hi)
    bounds, r_min = _bounds(data, lo, hi)
    t0_fixed = None if hi > lo else lo
    best = None
    for frac in _R0_STARTS:
        x0 = [math.log(base.prefactor), base.exponent, frac * r_min]
        x0 += [base.t0] if t0_fixed is None else []
        try:
            res = _solve(data, np.array(x0), bounds, t0_fixed, loss=loss, f_scale=f_scale)
        except (ValueError, np.linalg.LinAlgError):
            continue
        if best is None or res.cost < best.cost:
            best = res
    if best is None:
        return None
    return _record(data, base, best, t0_fixed, lo, hi)


def _record(data: Series, base: LawFit, res, t0_fixed, lo, hi) -> LawFit | None:
    """The LawFit of a converged fit with r0 (normal-approximation intervals)."""
    theta = res.x
    lna, n, r0 = (float(v) for v in theta[:3])
    t0 = float(theta[3]) if t0_fixed is None else float(t0_fixed)
    fitted = _log_radius(theta, data.time, t0_fixed)
    z = (data.y - fitted) / data.s
    chi2 = float(np.sum(z * z))
    k = len(theta)
    with np.errstate(over="ignore", invalid="ignore"):
        cov = jacobian_covariance(res.jac, chi2 / max(len(z) - k, 1))
    err = np.sqrt(np.maximum(np.diag(cov), 0.0))
    tau = data.time - t0
    w = 1.0 / data.s**2
    tp = math.exp(float(np.sum(w * np.log(tau)) / np.sum(w)))
    g = np.zeros(k)
    g[0], g[1] = 1.0, math.log(tp)
    ln_rp, lnp_err = lna + n * math.log(tp), math.sqrt(max(float(g @ cov @ g), 0.0))
    numbers = (chi2, lna, n, r0, t0, ln_rp, *err)
    if not (np.all(np.isfinite(numbers)) and abs(lna) < 700.0 and abs(ln_rp) < 700.0):
        return None
    aic, bic = information(chi2, len(z), k)
    lo_a, hi_a = normal_ci(lna, err[0])
    lo_p, hi_p = normal_ci(ln_rp, lnp_err)
    r0_lo, r0_hi = normal_ci(r0, err[2])
    t0_err = float(err[3]) if t0_fixed is None else 0.0
    return dataclasses.replace(
        base,
        exponent=n,
        exponent_err=float(err[1]),
        exponent_ci=normal_ci(n, err[1]),
        prefactor=math.exp(lna),
        prefactor_err=math.exp(lna) * float(err[0]),
        prefactor_ci=(safe_exp(lo_a), safe_exp(hi_a)),
        t0=t0,
        t0_err=t0_err,
        t0_ci=bracket_ci(t0, t0_err, lo, hi),
        pivot_time=tp,
        pivot_radius=math.exp(ln_rp),
        pivot_radius_ci=(safe_exp(lo_p), safe_exp(hi_p)),
        correlation_raw=float(cov[0, 1] / math.sqrt(cov[0, 0] * cov[1, 1]))
        if cov[0, 0] * cov[1, 1] > 0
        else math.nan,
        correlation_pivot=math.nan,
        window=(float(tau[0]), float(tau[-1])),
        decades=math.log10(tau[-1]) - math.log10(tau[0]),
        chi2=chi2,
        aic=aic,
        bic=bic,
        n_params=k,
        residual_rms=float(np.sqrt(np.mean((data.y - fitted) ** 2))),
        ci_method="normal approximation (covariance scaled by the reduced chi-square)",
        n_resamples=0,
        outside_ci=(),
        initial_radius=r0,
        initial_radius_ci=(max(r0_lo, 0.0), r0_hi),
        initial_radius_fitted=True,
        initial_radius_delta_aic=base.aic - aic,
    )


def fit_initial_radius(series: Series, base: LawFit, *, loss, f_scale) -> LawFit | None:
    """The law with r0, whatever the AIC says (None when no start converges).

    For a window of a series on which the law with r0 was already chosen as
    a whole: the window keeps r0 as a parameter, so that n's interval carries it.
    """
    return _fit(series, base, loss=loss, f_scale=f_scale)


def with_initial_radius(series: Series, base: LawFit, *, loss, f_scale) -> LawFit:
    """The law with r0 when the AIC prefers it, else `base` with the AIC difference noted."""
    fit = _fit(series, base, loss=loss, f_scale=f_scale)
    if fit is None:
        return base
    if fit.initial_radius_delta_aic > INITIAL_RADIUS_AIC_GAIN:
        return fit
    return dataclasses.replace(base, initial_radius_delta_aic=fit.initial_radius_delta_aic)


def bootstrap_initial_radius(series: Series, fit: LawFit, *, f_scale, n, seed) -> LawFit:
    """Bootstrap intervals of a fit with r0 (residual bootstrap, refitted one by one).

    As :func:`._bootstrap.bootstrap_linear`, t0 refitted in its bracket when free.
    """
    rng = np.random.default_rng(seed)
    lo, hi = fit.t0_bracket
    data = series.subset(series.time > hi)
    bounds, _ = _bounds(data, lo, hi)
    t0_fixed = None if fit.t0_free else fit.t0
    best = [math.log(fit.prefactor), fit.exponent, fit.initial_radius]
    best += [fit.t0] if t0_fixed is None else []
    fitted = _log_radius(np.array(best), data.time, t0_fixed)
    e = resampled_residuals(data.y, fitted, data.s)
    idx = rng.integers(0, len(data), size=(n, len(data)))
    rows = []
    for b in range(n):
        resampled = Series(
            data.time, fitted + data.s * e[idx[b]], data.s, data.weighted, data.rows
        )
        try:
            res = _solve(
                resampled,
                np.array(best),
                bounds,
                t0_fixed,
                loss=fit.loss,
                f_scale=f_scale,
                max_nfev=200,
            )
        except (ValueError, np.linalg.LinAlgError):
            continue
        t0 = res.x[3] if t0_fixed is None else t0_fixed
        rows.append((res.x[0], res.x[1], res.x[2], t0))
    ln_a, ns, r0s, t0s = np.array(rows, dtype=float).reshape(-1, 4).T
    ln_rp = ln_a + ns * math.log(fit.pivot_time)
    cis = {
        "exponent": percentile_interval(ns),
        "prefactor": tuple(safe_exp(v) for v in percentile_interval(ln_a)),
        "pivot_radius": tuple(safe_exp(v) for v in percentile_interval(ln_rp)),
        "t0": percentile_interval(t0s) if fit.t0_free else (fit.t0, fit.t0),
        "initial_radius": percentile_interval(r0s),
    }
    return dataclasses.replace(
        fit,
        exponent_ci=cis["exponent"],
        exponent_err=float(np.std(ns, ddof=1)) if len(ns) > 1 else math.nan,
        prefactor_ci=cis["prefactor"],
        pivot_radius_ci=cis["pivot_radius"],
        t0_ci=cis["t0"],
        initial_radius_ci=cis["initial_radius"],
        ci_method="residual bootstrap, 2.5–97.5 percentiles; t0 and r0 refitted in every resample"
        if fit.t0_free
        else "residual bootstrap, 2.5–97.5 percentiles; r0 refitted, t0 fixed",
        n_resamples=len(rows),
        outside_ci=outside(**{k: (getattr(fit, k), ci) for k, ci in cis.items()}),
    )
