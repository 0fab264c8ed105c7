"""Fits of one law with an unknown origin: ``r = A (t - t0)**n`` and the viscous log law.

The public entry points. The method (a profile fit over the origin, robust
and weighted on ``ln r``, reported at a decorrelating pivot) is described in
:mod:`._linear`; the bootstrap intervals in :mod:`._bootstrap`.

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

import numpy as np

from ..errors import FitError
from ._bootstrap import bootstrap_linear
from ._core import (
    LN_MAX,
    ROBUST_SCALE,
    LawShape,
    as_array,
    check_bootstrap,
    check_loss,
    make_series,
    noise_scale,
    resolve_origin,
)
from ._initial import bootstrap_initial_radius, with_initial_radius
from ._linear import LinearModel, linear_fit
from ._records import LawFit

__all__ = ["LawFit", "fit_power_law", "fit_log_law", "guess_power_law"]


def _run(time, radius, radius_err, t0, t0_bracket, loss, model, bootstrap, seed, r0=False):
    check_loss(loss)
    lo, hi = resolve_origin(t0, t0_bracket)
    series = make_series(time, radius, radius_err)
    f_scale = ROBUST_SCALE * noise_scale(series.subset(series.time > hi))
    fit = linear_fit(series, model, lo, hi, loss=loss, f_scale=f_scale)
    if fit and r0:
        fit = with_initial_radius(series, fit, loss=loss, f_scale=f_scale)
    if fit and bootstrap and fit.initial_radius_fitted:
        fit = bootstrap_initial_radius(series, fit, f_scale=f_scale, n=bootstrap, seed=seed)
    elif fit and bootstrap:
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
    initial_radius=False,
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
    initial_radius : bool
        Also fit ``r = r0 + A (t - t0)**n`` with a finite initial radius
        r0 ≥ 0 (nonlinear least squares, same weights and loss) and keep it
        when it lowers the AIC by more than :data:`INITIAL_RADIUS_AIC_GAIN`;
        the record says which was kept (``initial_radius_fitted``) and by how
        much (``initial_radius_delta_aic``). Only with the exponent free.
    loss : {"soft_l1", "linear"}
        Robust loss (default) or plain weighted least squares.
    bootstrap : int
        Number of residual-bootstrap resamples for the intervals (0: normal
        approximation). Each resample refits t0 inside its bracket when t0
        is free (and r0 when it was chosen).
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
        if initial_radius:
            raise FitError("needs the exponent free", key="initial_radius", value=True)
        shape = LawShape(float(exponent))
    model = LinearModel(shape)
    r0 = bool(initial_radius)
    return _run(time, radius, radius_err, t0, t0_bracket, loss, model, bootstrap, seed, r0)


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

    The ELS law (J. Fluid Mech. 401, 293, 1999); u = γ/η. The
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
    if not (math.isfinite(n) and abs(lna) < LN_MAX):
        raise FitError("gives a prefactor outside the floating-point range", key="radius")
    return float(math.exp(lna)), float(n)
