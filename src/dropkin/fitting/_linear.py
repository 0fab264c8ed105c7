"""One law that is linear at a given origin: the profile fit behind :func:`fit_power_law`.

The fit works on ``ln r``: ``ln r = ln A + f(t - t0)`` with ``f = n ln τ``
(n free or fixed) or the ELS form ``f = ln(uτ) + ln(-ln(uτ/R))``. For a
given origin t0 the problem is linear in ``ln A`` (and n), so it is solved
in closed form. With t0 free, the best of a grid of origins across the contact
bracket starts Newton steps in (β, t0) together, t0 inside the bracket, as the
bootstrap refits every resample (:func:`profile_many`). Each point is weighted
by its relative uncertainty ``σ_r / r`` (the uncertainty of ``ln r``; r the median radius of the
point and its neighbours, :func:`._core.running_median`), and the loss is
robust: scipy's ``soft_l1`` (``ρ(z) = 2 f²(√(1 + (z/f)²) - 1)``), solved by
iteratively reweighted least squares, with ``f = 3`` noise units and the
noise unit estimated without a model from successive differences
(1.4826 × MAD). ``loss="linear"`` gives plain weighted least squares, which
on ``ln r`` is exactly a weighted log-log ``numpy.polyfit``.

Prefactor and exponent are reported raw and decorrelated at the pivot
``t_p = exp(mean ln τ)`` (weighted mean with the fit's weights; the plain
mean for equal weights; docs/physics.md §4.8): ``r_p = A t_p**n``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ._core import (
    LN_MAX,
    ROBUST_SCALE,
    LawShape,
    Series,
    apparent_exponent,
    bracket_ci,
    data_problem,
    information,
    normal_ci,
    point_scales,
    rho,
    safe_exp,
    solve_linear,
    span_problem,
)
from ._gauss_newton import refine_jointly
from ._records import LawFit
from ._scan import scan_costs

__all__ = ["LinearModel", "profile_fit", "profile_many", "linear_fit"]

_T0_GRID = 17
#: The bootstrap's refit stops once t0 moves by less than this share of the bracket.
_T0_TOL = 1e-5
#: The robust reweighting of the bootstrap's refits at a fixed t0 stops once no weight
#: moves by more than this share of 1/σ² in a pass, after at most :data:`SETTLE_PASSES`
#: passes (the fit's own takes 8 from plain least squares; a resample whose
#: residuals lie far beyond the robust scale needs more to settle).
SETTLED = 1e-7
SETTLE_PASSES = 40


@dataclass(frozen=True)
class LinearModel:
    """``ln r = X β + offset`` for one law at a given origin (private).

    Attributes
    ----------
    shape : LawShape or None
        None for a free exponent (β = ln A, n); otherwise β = ln A.
    """

    shape: LawShape | None

    @property
    def n_linear(self) -> int:
        return 2 if self.shape is None else 1

    def design(self, tau):
        """X (..., N, p) and offset (..., N) for times since t0 ``tau`` (..., N)."""
        ones = np.ones(tau.shape + (1,))
        if self.shape is None:
            return np.concatenate([ones, np.log(tau)[..., None]], axis=-1), np.zeros(tau.shape)
        return ones, self.shape.log_shape(tau)

    def slope(self, tau, beta):
        """Local exponent of the fitted model at each τ."""
        if self.shape is None:
            return np.full(np.shape(tau), beta[1])
        return self.shape.slope(tau)


def profile_fit(series: Series, model: LinearModel, lo, hi, f, loss):
    """Best origin in [lo, hi] and the linear parameters there: (t0, beta, z, w)."""
    t, y, s = series.time, series.y, series.s
    f = point_scales(series, f)

    def at(t0s):  # settled as the bootstrap's refits at a fixed t0 are
        tau = t[None, :] - np.asarray(t0s, dtype=float)[:, None]
        x, off = model.design(tau)
        beta, z, w = solve_linear(x, y[None, :] - off, s, f, loss, SETTLE_PASSES, tol=SETTLED)
        return beta, z, w, rho(z, f, loss).sum(axis=-1)

    if hi <= lo:
        beta, z, w, _ = at([lo])
        return lo, beta[0], z[0], w[0]
    # The bootstrap's own search (:func:`profile_many`), so that the fit and its
    # resamples reach their minima alike.
    t0s, betas = profile_many(t, y[None, :], s, model, lo, hi, f, loss)
    t0, beta = float(t0s[0]), betas[0]
    x, off = model.design(t - t0)
    z = (y - off - x @ beta) / s
    w = 1.0 / s**2 if loss == "linear" else 1.0 / (s**2 * np.sqrt(1.0 + (z / f) ** 2))
    return t0, beta, z, w


def profile_many(time, y, s, model: LinearModel, lo, hi, f, loss, *, start=None, counter=None):
    """Best origin in [lo, hi] for many series ``y`` (B, N) at the same times, all at once.

    The batched twin of :func:`profile_fit` (the bootstrap refits t0 in every
    resample with it). A grid of origins across the bracket is ranked for
    every series by the weighted sum of squares at the weights `start` (B, N;
    the bootstrap gives those of the residuals each resample drew; default
    ``1/s²``), a few matrix products (:func:`._scan.scan_costs`). From its
    best grid origin each series then goes downhill in (β, t0) together, t0
    anywhere in the bracket, by Newton steps on the robust cost until t0
    moves by less than :data:`_T0_TOL` of the bracket and β has settled
    (:func:`._gauss_newton.refine_jointly`). Each series' numbers are its
    own: they do not depend on the others in the batch. `counter`, a list,
    is given one entry per pass over the points: how many series were
    evaluated then (what the cost tests count).

    Returns
    -------
    t0 : (B,) ndarray
    beta : (B, p) ndarray
    """
    if counter is not None:
        counter.append(y.shape[0] * _T0_GRID)
    grid = np.linspace(lo, hi, _T0_GRID)
    c_scan, b_scan = scan_costs(time, y, s, model, grid, start)
    i = np.argmin(c_scan, axis=1)
    k = len(i)
    tol = max(_T0_TOL * (hi - lo), 1e-300)
    ends = np.full(k, float(lo)), np.full(k, float(hi))
    beta = b_scan[np.arange(k), i]
    t0, beta = refine_jointly(model, time, y, s, f, loss, grid[i], beta, *ends, tol, counter)
    bad = ~np.isfinite(beta).all(axis=1)
    if bad.any():  # a degenerate system: the fit's own solver, with its pseudo-inverse
        x, off = model.design(time[None, :] - t0[bad, None])
        beta[bad] = solve_linear(x, y[bad] - off, s, f, loss, SETTLE_PASSES, tol=SETTLED)[0]
    return t0, beta


def _correlation(c, va, vb) -> float:
    denominator = va * vb
    return float(c / math.sqrt(denominator)) if denominator > 0 else math.nan


def _covariance(jac, w, scale, free_t0, t0_variance):
    """Covariance of (β, t0) from the weighted Jacobian, or None when singular.

    When the points do not determine t0 (the law's slope is zero, so moving
    t0 changes nothing; or a point so close to t0 that the derivative is not
    a float), β's covariance is taken at the fitted t0 and t0 gets the
    variance of a uniform draw across its bracket, which bounds it.
    """

    def inverse(j):
        with np.errstate(all="ignore"):
            try:
                c = np.linalg.inv(j.T @ (w[:, None] * j)) * scale
            except np.linalg.LinAlgError:
                return None
        return c if np.isfinite(c).all() else None

    cov = inverse(jac)
    if cov is not None or not free_t0:
        return cov
    reduced = inverse(jac[:, :-1])
    if reduced is None:
        return None
    k = jac.shape[1]
    cov = np.zeros((k, k))
    cov[:-1, :-1] = reduced
    cov[-1, -1] = t0_variance
    return cov


def _pivot_terms(model, beta, cov, tau, w, tp):
    """The exponent, its error and interval, the correlations, and ``ln r_p`` with its variance."""
    lna = float(beta[0])
    if model.shape is None:
        exponent = float(beta[1])
        exponent_err = math.sqrt(max(cov[1, 1], 0.0))
        a_vec = np.array([1.0, math.log(tp)])
        var_lnp = float(a_vec @ cov[:2, :2] @ a_vec)
        cov_pn = float(a_vec @ cov[:2, 1])
        corr_raw = _correlation(cov[0, 1], cov[0, 0], cov[1, 1])
        corr_pivot = _correlation(cov_pn, var_lnp, cov[1, 1])
        ln_rp = lna + exponent * math.log(tp)
        exponent_ci = normal_ci(exponent, exponent_err)
    else:
        # Fixed shape: the exponent a power-law fit would report if the law held exactly.
        exponent = apparent_exponent(model.shape, tau, w)
        exponent_err, corr_raw, corr_pivot = math.nan, math.nan, math.nan
        var_lnp = float(cov[0, 0])
        ln_rp = lna + float(model.shape.log_shape(np.array([tp]))[0])
        exponent_ci = (exponent, exponent)
    return exponent, exponent_err, exponent_ci, corr_raw, corr_pivot, var_lnp, ln_rp


def linear_fit(series, model, lo, hi, *, loss, f_scale, reference=None) -> LawFit:
    """Fit one linear-in-β law with the origin fixed or free in [lo, hi]."""
    law = "log" if model.shape is not None and model.shape.logarithmic else "power"
    problem = data_problem(series, lo, hi, reference=reference)
    if problem:
        return LawFit(False, problem, law, loss=loss)
    data = series.subset(series.time > hi)
    t0, beta, z, w = profile_fit(data, model, lo, hi, f_scale, loss)
    tau = data.time - t0
    # The span was checked at the reference origin; the fitted one, elsewhere in
    # the bracket, can shorten it below the minimum.
    problem = span_problem(tau)
    if problem:
        return LawFit(False, problem + f" (at the fitted t0 = {t0:.6g} s)", law, loss=loss)
    x, off = model.design(tau)
    fitted = x @ beta + off
    n, p = len(tau), model.n_linear
    free_t0 = hi > lo
    k = p + int(free_t0)
    # Jacobian of the model in (β, t0): d/dt0 of ln r is -slope/τ.
    jac = x
    if free_t0:
        with np.errstate(over="ignore"):  # τ near 0: not finite, see _covariance
            jac = np.column_stack([x, -model.slope(tau, beta) / tau])
    chi2_w = float(np.sum(w * (data.y - fitted) ** 2))
    dof = max(n - k, 1)
    cov = _covariance(jac, w, chi2_w / dof, free_t0, (hi - lo) ** 2 / 12.0)
    if cov is None:
        return LawFit(False, "the points do not determine the law (singular fit)", law, loss=loss)
    tp = math.exp(float(np.sum(w * np.log(tau)) / np.sum(w)))
    lna = float(beta[0])
    unit = 1.0 if model.shape is None else model.shape.prefactor_unit_factor()
    exponent, exponent_err, exponent_ci, corr_raw, corr_pivot, var_lnp, ln_rp = _pivot_terms(
        model, beta, cov, tau, w, tp
    )
    lna_err = math.sqrt(max(cov[0, 0], 0.0))
    if not (abs(lna) < LN_MAX and abs(ln_rp) < LN_MAX):  # False for NaN too
        return LawFit(
            False, "the fitted radius law is outside the floating-point range", law, loss=loss
        )
    prefactor = unit * math.exp(lna)
    lo_a, hi_a = normal_ci(lna, lna_err)
    lnp_err = math.sqrt(max(var_lnp, 0.0))
    lo_p, hi_p = normal_ci(ln_rp, lnp_err)
    chi2 = float(np.sum(z * z))
    aic, bic = information(chi2, n, k)
    return LawFit(
        success=True,
        message="",
        law=law,
        exponent=exponent,
        exponent_err=exponent_err,
        exponent_ci=exponent_ci,
        exponent_fixed=model.shape is not None,
        prefactor=prefactor,
        prefactor_err=prefactor * lna_err,
        prefactor_ci=(unit * safe_exp(lo_a), unit * safe_exp(hi_a)),
        t0=t0,
        t0_err=math.sqrt(max(cov[-1, -1], 0.0)) if free_t0 else 0.0,
        t0_free=free_t0,
        t0_bracket=(lo, hi),
        t0_ci=bracket_ci(t0, math.sqrt(max(cov[-1, -1], 0.0)), lo, hi) if free_t0 else (t0, t0),
        pivot_time=tp,
        pivot_radius=math.exp(ln_rp),
        pivot_radius_ci=(safe_exp(lo_p), safe_exp(hi_p)),
        correlation_raw=corr_raw,
        correlation_pivot=corr_pivot,
        n_points=n,
        window=(float(tau[0]), float(tau[-1])),
        decades=math.log10(tau[-1]) - math.log10(tau[0]),
        chi2=chi2,
        aic=aic,
        bic=bic,
        n_params=k,
        noise_scale=f_scale / ROBUST_SCALE,
        residual_rms=float(np.sqrt(np.mean((data.y - fitted) ** 2))),
        loss=loss,
        ci_method="normal approximation (covariance scaled by the reduced chi-square)",
        n_resamples=0,
    )
