"""The laws themselves: plain functions of time on numpy arrays, radius in metres.

Times are counted from the contact instant; at ``t <= 0`` (and where a law
leaves its domain) the result is NaN rather than a made-up number.

Examples
--------
>>> import numpy as np
>>> t = np.array([1e-6, 1e-4])
>>> power_law(t, 0.0164, 0.5)                       # inertial water neck, D0 = 1
array([1.64e-05, 1.64e-04])
>>> r = viscous_log_law(np.array([1e-5]), 1 / np.pi, capillary_speed=1.0, radius=1e-3)
>>> float(np.round(r[0] * 1e6, 3))                  # µm
14.659
"""

from __future__ import annotations

import numpy as np

__all__ = ["power_law", "viscous_log_law", "harmonic_blend", "blended_law"]


def power_law(t, prefactor, exponent):
    """``r = prefactor * t**exponent``.

    Parameters
    ----------
    t : (N,) array_like
        Time since contact (s).
    prefactor : float
        In m s^-exponent (the regime's dimensionless C times its group).
    exponent : float

    Returns
    -------
    r : (N,) ndarray
        Radius (m); NaN where ``t <= 0``.
    """
    t = np.asarray(t, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        r = prefactor * np.where(t > 0, t, np.nan) ** exponent
    return r


def viscous_log_law(t, prefactor, *, capillary_speed, radius):
    """Viscous coalescence with its logarithm: ``r = -C u t ln(u t / R)``.

    The ELS law (J. Fluid Mech. 401, 293, 1999): ``C = 1/pi`` in
    inviscid surroundings and ``1/(4 pi)`` with an outer fluid of equal
    viscosity; ``u = gamma/eta``. The form holds for ``r << R``; where
    ``u t >= R`` the logarithm changes sign and NaN is returned.

    Parameters
    ----------
    t : (N,) array_like
        Time since contact (s).
    prefactor : float
        The dimensionless C.
    capillary_speed : float
        ``gamma / eta`` (m/s).
    radius : float
        Drop radius R (m).

    Returns
    -------
    r : (N,) ndarray
        Neck (or contact) radius (m).
    """
    t = np.asarray(t, dtype=float)
    x = capillary_speed * np.where(t > 0, t, np.nan) / radius
    with np.errstate(invalid="ignore", divide="ignore"):
        r = -prefactor * capillary_speed * t * np.log(x)
    return np.where(x < 1.0, r, np.nan)


def harmonic_blend(first, second):
    """Crossover blend of two laws, ``1/r = 1/r1 + 1/r2`` (docs/physics.md §3).

    The smaller of the two governs: the early law at short times, the late
    one after the crossover (Phys. Rev. Lett. 106, 114501, 2011; PNAS 116,
    23467, 2019, shows that it approximates an exact solution).

    Parameters
    ----------
    first, second : (N,) array_like
        The two laws evaluated at the same times (m).

    Examples
    --------
    >>> harmonic_blend([1.0, 2.0], [1.0, 2.0])
    array([0.5, 1. ])
    """
    first = np.asarray(first, dtype=float)
    second = np.asarray(second, dtype=float)
    with np.errstate(divide="ignore"):
        return 1.0 / (1.0 / first + 1.0 / second)


def blended_law(early, late):
    """Two bound laws joined by :func:`harmonic_blend` into one law.

    Parameters
    ----------
    early, late : callable
        Laws ``law(t, prefactor=None)`` as returned by ``Regime.law``.

    Returns
    -------
    callable
        ``blend(t, early_prefactor=None, late_prefactor=None) -> r`` (m).

    Examples
    --------
    >>> blend = blended_law(lambda t, c=None: power_law(t, c or 1.0, 1.0),
    ...                     lambda t, c=None: power_law(t, c or 0.1, 0.5))
    >>> [round(float(r), 6) for r in blend([1e-6, 0.01, 100.0])]   # crossover at t = 0.01
    [1e-06, 0.005, 0.990099]
    """

    def blend(t, early_prefactor=None, late_prefactor=None):
        return harmonic_blend(early(t, early_prefactor), late(t, late_prefactor))

    return blend
