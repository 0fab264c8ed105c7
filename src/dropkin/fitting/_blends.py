"""Two-regime models: smooth blends of two laws and a broken power law, to locate crossovers.

Each law is ``r_i = A_i exp(f_i(τ))`` (a power ``τ^n`` or the ELS log law, see
:class:`LawShape`), parameterised by the early prefactor and the crossover
time τ_c where the two laws give the same radius (``A_2`` follows). The
smooth blend generalises the harmonic form ``1/r = 1/r_1 + 1/r_2`` of
docs/physics.md §3 with a sharpness s:

- early law with the larger exponent (it is the smaller radius at first, as
  viscous → inertial): ``r = (r_1^-s + r_2^-s)^(-1/s)``; s = 1 is the harmonic form;
- early law with the smaller exponent (Tanner → gravity):
  ``r = (r_1^s + r_2^s)^(1/s)``.

The broken power law switches sharply at τ_c (continuous there). All fits
are robust (``soft_l1``, as :func:`fit_power_law`) on ``ln r`` with scipy's
``least_squares``; t0 is free inside the contact bracket or fixed.

Examples
--------
>>> import numpy as np
>>> from dropkin.fitting import harmonic_blend
>>> t = np.geomspace(1e-7, 1e-4, 120)
>>> r = harmonic_blend(5.0 * t, 0.0188 * t**0.5)    # crossover at (0.0188/5)² s
>>> fit = fit_blend(t, r, early=1.0, late=0.5, sharpness=1.0)
>>> round(fit.crossover_time / (0.0188 / 5.0) ** 2, 4)
1.0
"""

from __future__ import annotations

import math

from ..errors import FitError
from ._bootstrap import bootstrap_blend
from ._core import (
    ROBUST_SCALE,
    LawShape,
    check_bootstrap,
    check_loss,
    make_series,
    noise_scale,
    resolve_origin,
)
from ._records import BlendFit
from ._two_laws import MIN_BLEND_POINTS, blend_fit

__all__ = ["MIN_BLEND_POINTS", "BlendFit", "fit_blend", "fit_broken_power_law"]


def _shape(value, name):
    if value is None or isinstance(value, LawShape):
        return value
    if isinstance(value, int | float) and not isinstance(value, bool) and math.isfinite(value):
        return LawShape(float(value))
    raise FitError("must be an exponent, a LawShape or None (free)", key=name, value=value)


def _public(time, radius, radius_err, t0, t0_bracket, loss, bootstrap, seed, **spec):
    check_loss(loss)
    check_bootstrap(bootstrap)
    lo, hi = resolve_origin(t0, t0_bracket)
    series = make_series(time, radius, radius_err)
    f_scale = ROBUST_SCALE * noise_scale(series.subset(series.time > hi))
    fit = blend_fit(series, lo, hi, loss=loss, f_scale=f_scale, **spec)
    if fit and bootstrap:
        fit = bootstrap_blend(series, fit, f_scale=f_scale, n=bootstrap, seed=seed, **spec)
    return fit


def fit_blend(
    time,
    radius,
    *,
    early=None,
    late=None,
    sharpness=None,
    radius_err=None,
    t0=None,
    t0_bracket=None,
    loss="soft_l1",
    bootstrap=0,
    seed=0,
) -> BlendFit:
    """Fit a smooth blend of two laws and locate their crossover.

    Parameters
    ----------
    time, radius, radius_err, t0, t0_bracket, loss, bootstrap, seed
        As for :func:`fit_power_law`.
    early, late : float, LawShape or None
        Each law's exponent (or full shape, e.g. the ELS log law); None
        leaves that exponent free.
    sharpness : float, optional
        s; 1 is the harmonic blend of docs/physics.md §3. Default: fitted in
        [0.25, 10].

    Returns
    -------
    BlendFit
        Falsy with a reason when the data cannot support it (as
        :func:`fit_power_law`, and at least :data:`MIN_BLEND_POINTS` points).
    """
    return _public(
        time,
        radius,
        radius_err,
        t0,
        t0_bracket,
        loss,
        bootstrap,
        seed,
        kind="blend",
        early=_shape(early, "early"),
        late=_shape(late, "late"),
        sharpness=None if sharpness is None else float(sharpness),
    )


def fit_broken_power_law(
    time, radius, *, radius_err=None, t0=None, t0_bracket=None, loss="soft_l1", bootstrap=0, seed=0
) -> BlendFit:
    """Fit ``r = A (τ/τ_c)^n1`` before τ_c and ``A (τ/τ_c)^n2`` after (both exponents free).

    Parameters and result as for :func:`fit_blend`.

    Examples
    --------
    >>> import numpy as np
    >>> t = np.geomspace(1e-3, 1.0, 90)
    >>> r = np.where(t < 0.03, 2.0 * t, 2.0 * 0.03**0.5 * t**0.5)
    >>> fit = fit_broken_power_law(t, r)
    >>> round(fit.early_exponent, 3), round(fit.late_exponent, 3), round(fit.crossover_time, 3)
    (1.0, 0.5, 0.03)
    """
    return _public(time, radius, radius_err, t0, t0_bracket, loss, bootstrap, seed, kind="broken")
