"""Fits of one law with an unknown origin: ``r = A (t - t0)**n`` and the viscous log law.

The fit works on ``ln r``: ``ln r = ln A + f(t - t0)`` with ``f = n ln τ``
(n free or fixed) or the ELS form ``f = ln(uτ) + ln(-ln(uτ/R))``. For a
given origin t0 the problem is linear in ``ln A`` (and n), so it is solved
in closed form; t0 is then found by a bounded one-dimensional search inside
the contact bracket (a profile fit). Each point is weighted by its relative
uncertainty ``σ_r / r`` (the uncertainty of ``ln r``), and the loss is
robust: scipy's ``soft_l1`` (``ρ(z) = 2 f²(√(1 + (z/f)²) - 1)``), solved by
iteratively reweighted least squares, with ``f = 3`` noise units and the
noise unit estimated without a model from successive differences
(1.4826 × MAD). ``loss="linear"`` gives plain weighted least squares, which
on ``ln r`` is exactly a weighted log-log ``numpy.polyfit``.

Prefactor and exponent are reported raw and decorrelated at the pivot
``t_p = exp(mean ln τ)`` (weighted mean with the fit's weights; the plain
mean for equal weights; docs/physics.md §4.8): ``r_p = A t_p**n``.

Examples
--------
>>> import numpy as np
>>> t = np.geomspace(1e-5, 1e-3, 40)
>>> fit = fit_power_law(t, 0.0197 * t**0.5)            # t0 = 0 fixed
>>> round(fit.exponent, 6), round(fit.prefactor, 6)
(0.5, 0.0197)
>>> bool(fit_power_law(t[:5], 0.0197 * t[:5] ** 0.5))  # too few points: falsy
False
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np

from ..errors import FitError
from ._core import (
    ROBUST_SCALE,
    LawShape,
    Series,
    apparent_exponent,
    as_array,
    check_bootstrap,
    check_loss,
    data_problem,
    information,
    make_series,
    noise_scale,
    normal_ci,
    resolve_origin,
    rho,
    safe_exp,
    solve_linear,
)

__all__ = ["LawFit", "fit_power_law", "fit_log_law", "guess_power_law"]

_T0_GRID = 17
_LN_MAX = 700.0  # exp(±700) ≈ 1e±304: beyond, a prefactor or radius is not a float


@dataclass(frozen=True)
class LawFit:
    """The result of fitting one law to a radius series.

    Attributes
    ----------
    success : bool
        Whether the data could support the fit; the record is falsy otherwise.
    message : str
        Why it failed, or ``""``.
    law : str
        ``"power"`` or ``"log"``.
    exponent : float
        n. For the log law, the exponent a weighted power-law fit would report
        if the fitted law held exactly over the points (docs/physics.md §2 A1).
    exponent_err : float
        Standard error of n (NaN when n is fixed).
    exponent_ci : tuple of float
        95 % interval of n (normal approximation, or bootstrap percentiles; see
        `ci_method`); ``(n, n)`` when fixed.
    exponent_fixed : bool
        True when n was not fitted.
    prefactor : float
        A in ``r = A τ**n`` (m s⁻ⁿ); for the log law ``A = C u`` in
        ``r = -A τ ln(uτ/R)`` (m/s).
    prefactor_err : float
        Standard error of A.
    prefactor_ci : tuple of float
        95 % interval of A.
    t0 : float
        The origin (s, same clock as the input times).
    t0_err : float
        Standard error of t0 (0 when fixed; the bracket bounds it anyway).
    t0_free : bool
        Whether t0 was fitted inside `t0_bracket`.
    t0_bracket : tuple of float
        The interval t0 was allowed in (s).
    pivot_time : float
        ``t_p = exp(weighted mean ln τ)`` (s since t0).
    pivot_radius : float
        ``r_p = A t_p**n`` (m): the decorrelated prefactor.
    pivot_radius_ci : tuple of float
        95 % interval of r_p.
    correlation_raw : float
        Correlation of ``ln A`` and n (NaN when n is fixed).
    correlation_pivot : float
        Correlation of ``ln r_p`` and n (near 0 by construction).
    n_points : int
        Points used.
    window : tuple of float
        First and last time since t0 of the points used (s).
    decades : float
        ``log10`` of their ratio.
    chi2 : float
        Sum of squared normalised residuals ``((ln r - model)/σ)²``.
    aic, bic : float
        ``N ln(chi2/N) + 2k`` and ``N ln(chi2/N) + k ln N`` (Gaussian
        likelihood with the noise scale estimated; k counts t0 when free).
    n_params : int
        k.
    noise_scale : float
        The noise unit used by the robust loss (in units of the given σ).
    residual_rms : float
        Root mean square of the residuals of ``ln r``.
    loss : str
        ``"soft_l1"`` or ``"linear"``.
    ci_method : str
        How the intervals were obtained.
    n_resamples : int
        Bootstrap resamples (0 for the normal approximation).
    """

    success: bool
    message: str
    law: str
    exponent: float = math.nan
    exponent_err: float = math.nan
    exponent_ci: tuple[float, float] = (math.nan, math.nan)
    exponent_fixed: bool = False
    prefactor: float = math.nan
    prefactor_err: float = math.nan
    prefactor_ci: tuple[float, float] = (math.nan, math.nan)
    t0: float = math.nan
    t0_err: float = math.nan
    t0_free: bool = False
    t0_bracket: tuple[float, float] = (math.nan, math.nan)
    pivot_time: float = math.nan
    pivot_radius: float = math.nan
    pivot_radius_ci: tuple[float, float] = (math.nan, math.nan)
    correlation_raw: float = math.nan
    correlation_pivot: float = math.nan
    n_points: int = 0
    window: tuple[float, float] = (math.nan, math.nan)
    decades: float = math.nan
    chi2: float = math.nan
    aic: float = math.nan
    bic: float = math.nan
    n_params: int = 0
    noise_scale: float = math.nan
    residual_rms: float = math.nan
    loss: str = "soft_l1"
    ci_method: str = ""
    n_resamples: int = 0

    def __bool__(self) -> bool:
        return self.success


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

    def at(t0s):
        tau = t[None, :] - np.asarray(t0s, dtype=float)[:, None]
        x, off = model.design(tau)
        beta, z, w = solve_linear(x, y[None, :] - off, s, f, loss)
        return beta, z, w, rho(z, f, loss).sum(axis=-1)

    if hi <= lo:
        beta, z, w, _ = at([lo])
        return lo, beta[0], z[0], w[0]
    from scipy.optimize import minimize_scalar

    grid = np.linspace(lo, hi, _T0_GRID)
    _, _, _, cost = at(grid)
    cost = np.where(np.isfinite(cost), cost, np.inf)
    i = int(np.argmin(cost))
    a, b = grid[max(i - 1, 0)], grid[min(i + 1, _T0_GRID - 1)]
    res = minimize_scalar(
        lambda v: float(at([v])[3][0]),
        bounds=(a, b),
        method="bounded",
        options={"xatol": max((hi - lo) * 1e-7, 1e-300)},
    )
    t0 = float(res.x) if np.isfinite(res.fun) and res.fun <= cost[i] else float(grid[i])
    beta, z, w, _ = at([t0])
    return t0, beta[0], z[0], w[0]


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


def linear_fit(series, model, lo, hi, *, loss, f_scale, reference=None) -> LawFit:
    """Fit one linear-in-β law with the origin fixed or free in [lo, hi]."""
    law = "log" if model.shape is not None and model.shape.logarithmic else "power"
    problem = data_problem(series, lo, hi, reference=reference)
    if problem:
        return LawFit(False, problem, law, loss=loss)
    data = series.subset(series.time > hi)
    t0, beta, z, w = profile_fit(data, model, lo, hi, f_scale, loss)
    tau = data.time - t0
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
    lna_err = math.sqrt(max(cov[0, 0], 0.0))
    if not (abs(lna) < _LN_MAX and abs(ln_rp) < _LN_MAX):  # False for NaN too
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


# ------------------------------------------------------------------ public fits


def _run(time, radius, radius_err, t0, t0_bracket, loss, model, bootstrap, seed):
    check_loss(loss)
    lo, hi = resolve_origin(t0, t0_bracket)
    series = make_series(time, radius, radius_err)
    f_scale = ROBUST_SCALE * noise_scale(series.subset(series.time > hi))
    fit = linear_fit(series, model, lo, hi, loss=loss, f_scale=f_scale)
    if fit and bootstrap:
        from ._bootstrap import bootstrap_linear

        fit = bootstrap_linear(series, model, fit, f_scale=f_scale, n=bootstrap, seed=seed)
    return fit


def fit_power_law(
    time,
    radius,
    *,
    radius_err=None,
    t0=None,
    t0_bracket=None,
    exponent=None,
    loss="soft_l1",
    bootstrap=0,
    seed=0,
) -> LawFit:
    """Fit ``r = A (t - t0)**n`` on ``ln r``, robustly, weighted by ``σ_r / r``.

    Parameters
    ----------
    time : (N,) array_like
        Times (s). With the default origin they count from contact.
    radius : (N,) array_like
        Radius (m); non-finite or non-positive values are left out.
    radius_err : (N,) array_like, optional
        Standard uncertainty of each radius (m); NaN where unknown (the
        median relative uncertainty is used there). Without it all points
        weigh the same in ``ln r``.
    t0 : float, optional
        A fixed origin (s). Default 0 unless `t0_bracket` is given.
    t0_bracket : (float, float), optional
        Fit t0 inside this interval (the contact-instant bracket). Only
        points after its upper end are used.
    exponent : float, optional
        Fix n (only A is fitted); default: n free.
    loss : {"soft_l1", "linear"}
        Robust loss (default) or plain weighted least squares.
    bootstrap : int
        Number of residual-bootstrap resamples for the intervals (0: normal
        approximation). Each resample also re-draws t0 inside its bracket.
    seed : int
        Seed of the bootstrap's ``numpy.random.default_rng``.

    Returns
    -------
    LawFit
        Falsy, with the reason in ``message``, when fewer than
        :data:`MIN_POINTS` points lie after contact, when they span less than
        :data:`MIN_DECADES`, or when all lie before contact.

    Raises
    ------
    FitError
        For a bad call: mismatched lengths, a bad bracket or loss.

    Examples
    --------
    >>> import numpy as np
    >>> t = np.linspace(1e-4, 1e-2, 200)               # s from the first frame
    >>> r = 0.0197 * (t - 3e-5) ** 0.5                 # contact at 30 µs
    >>> fit = fit_power_law(t, r, t0_bracket=(0.0, 9e-5))
    >>> round(fit.t0 * 1e6, 3), round(fit.exponent, 5)
    (30.0, 0.5)
    """
    check_bootstrap(bootstrap)
    shape = None
    if exponent is not None:
        if not (isinstance(exponent, int | float) and math.isfinite(exponent)):
            raise FitError("must be a finite number", key="exponent", value=exponent)
        shape = LawShape(float(exponent))
    return _run(
        time, radius, radius_err, t0, t0_bracket, loss, LinearModel(shape), bootstrap, seed
    )


def fit_log_law(
    time,
    radius,
    *,
    capillary_speed,
    drop_radius,
    radius_err=None,
    t0=None,
    t0_bracket=None,
    loss="soft_l1",
    bootstrap=0,
    seed=0,
) -> LawFit:
    """Fit the ELS viscous law ``r = -C u τ ln(uτ/R)``, τ = t - t0, with C free.

    Eggers, Lister & Stone (J. Fluid Mech. 401, 293, 1999); u = γ/η. The
    result's ``prefactor`` is ``C u`` (m/s); its ``exponent`` is what a power-law
    fit would report for the law over the same points (its local exponent is
    ``1 + 1/ln(uτ/R)``, docs/physics.md §2 A1).
    Other parameters and the failure path are those of :func:`fit_power_law`.

    Examples
    --------
    >>> import numpy as np
    >>> from dropkin.fitting import viscous_log_law
    >>> t = np.geomspace(1e-4, 5e-3, 50)                # uτ/R from 0.0045 to 0.22
    >>> r = viscous_log_law(t, 1 / np.pi, capillary_speed=0.045, radius=1e-3)
    >>> fit = fit_log_law(t, r, capillary_speed=0.045, drop_radius=1e-3)
    >>> round(fit.prefactor / 0.045 * np.pi, 6)        # C π
    1.0
    """
    check_bootstrap(bootstrap)
    shape = LawShape(1.0, True, capillary_speed, drop_radius)
    return _run(
        time, radius, radius_err, t0, t0_bracket, loss, LinearModel(shape), bootstrap, seed
    )


def guess_power_law(time, radius, *, t0=0.0) -> tuple[float, float]:
    """First guess ``(A, n)`` from an unweighted log-log ``numpy.polyfit``.

    Examples
    --------
    >>> import numpy as np
    >>> t = np.array([1.0, 10.0, 100.0])
    >>> a, n = guess_power_law(t, 2.0 * t**0.5)
    >>> round(a, 9), round(n, 9)
    (2.0, 0.5)
    """
    t = as_array("time", time)
    r = as_array("radius", radius, len(t))
    keep = np.isfinite(t) & np.isfinite(r) & (r > 0) & (t > t0)
    x = np.log(t[keep] - t0)
    try:
        if x.size < 2:
            raise ValueError("one point")
        with warnings.catch_warnings():
            warnings.simplefilter("error")  # times (nearly) equal: RankWarning
            n, lna = np.polyfit(x, np.log(r[keep]), 1)
    except (Warning, TypeError, ValueError, np.linalg.LinAlgError):
        raise FitError(
            "needs two points at distinct times after t0 with a positive radius", key="radius"
        ) from None
    if not (math.isfinite(n) and abs(lna) < _LN_MAX):
        raise FitError("gives a prefactor outside the floating-point range", key="radius")
    return float(math.exp(lna)), float(n)
