"""The matching formulas behind the predicted crossovers (docs/physics.md §3).

A crossover is where the early law and the late law give the same radius
(the matching argument of §3; the harmonic blend ``1/r = 1/r1 + 1/r2``
changes over there). Each function here is that matching worked out on SI
floats, with the O(1) prefactors explicit; :mod:`._crossovers` picks the
pairs a geometry links and takes the prefactors from the catalogue.

Examples
--------
>>> t, r = viscous_inertial_crossover(viscosity=1.0016e-3, density=998.2,
...                                   surface_tension=0.07274, radius=1e-3)
>>> round(r * 1e6, 1), round(t * 1e9)        # Oh R in µm, Oh² τ_i in ns
(3.7, 51)
"""

from __future__ import annotations

from ...errors import ExperimentError
from ._numbers import STANDARD_GRAVITY, capillary_length, inertial_time, ohnesorge, viscous_time

__all__ = [
    "power_law_crossing",
    "viscous_inertial_crossover",
    "inner_outer_viscous_crossover",
    "tanner_gravity_crossover",
]


def power_law_crossing(early_prefactor, early_exponent, late_prefactor, late_exponent):
    """Time and radius where ``a1 t**n1 = a2 t**n2`` (early law has the larger n).

    Parameters
    ----------
    early_prefactor, late_prefactor : float
        Dimensional prefactors (m s^-n).
    early_exponent, late_exponent : float
        Exponents; they must differ.

    Returns
    -------
    (time, radius) : tuple of float
        In s and m.

    Examples
    --------
    >>> t, r = power_law_crossing(1.0, 1.0, 0.1, 0.5)   # t = r = 0.01 (s, m)
    >>> round(t, 12), round(r, 12)
    (0.01, 0.01)
    """
    n1, n2 = float(early_exponent), float(late_exponent)
    if n1 == n2:
        raise ExperimentError("laws with equal exponents never cross", key="exponent", value=n1)
    if early_prefactor <= 0 or late_prefactor <= 0:
        raise ExperimentError("prefactors must be positive", key="prefactor")
    t = (late_prefactor / early_prefactor) ** (1.0 / (n1 - n2))
    return t, early_prefactor * t**n1


def viscous_inertial_crossover(
    *,
    viscosity,
    density,
    surface_tension,
    radius,
    viscous_prefactor=1.0,
    inertial_prefactor=1.0,
):
    """Viscous → inertial crossover of free drops, by matching (docs/physics.md §3).

    ``C_v (γ/η) t = D0 (γR/ρ)^(1/4) t^(1/2)`` gives
    ``t_c = (D0/C_v)² Oh² τ_i`` and ``r_c = (D0²/C_v) Oh R`` — equivalent to
    a Reynolds number on the gap width r²/R reaching 1 (status D).

    Returns
    -------
    (time, radius) : tuple of float
    """
    oh = ohnesorge(
        viscosity=viscosity, density=density, surface_tension=surface_tension, radius=radius
    )
    tau_i = inertial_time(density=density, radius=radius, surface_tension=surface_tension)
    ratio = inertial_prefactor / viscous_prefactor
    return ratio**2 * oh**2 * tau_i, inertial_prefactor**2 / viscous_prefactor * oh * radius


def inner_outer_viscous_crossover(
    *,
    viscosity,
    outer_viscosity,
    surface_tension,
    radius,
    viscous_prefactor=1.0,
    outer_prefactor=1.2,
):
    """Inner viscous → outer viscous crossover, by matching (D).

    ``C_v (γ/η) t = C1 (γR t/η_o)^(1/2)`` gives ``t_c = (C1/C_v)² λ τ_v`` and
    ``r_c = (C1²/C_v) λ R`` with ``λ = η/η_o``: the outer viscosity can
    take over only when it exceeds the drops' (λ ≲ 1), in line with Nat.
    Commun. 5, 3182 (2014): the early regime is always the drops' own.

    Returns
    -------
    (time, radius) : tuple of float
    """
    lam = viscosity / outer_viscosity
    tau_v = viscous_time(viscosity=viscosity, radius=radius, surface_tension=surface_tension)
    ratio = outer_prefactor / viscous_prefactor
    return ratio**2 * lam * tau_v, outer_prefactor**2 / viscous_prefactor * lam * radius


def tanner_gravity_crossover(
    *,
    surface_tension,
    viscosity,
    density,
    volume,
    outer_density=0.0,
    gravity=STANDARD_GRAVITY,
    tanner_prefactor=0.83,
    gravity_prefactor=0.894 * 3.0 ** (-1.0 / 8.0),
):
    """Tanner (t^1/10) → gravity (t^1/8) spreading, where the two laws meet (D).

    The radius is ``(C_T⁵/C_g⁴) ℓ_c`` (close to ℓ_c for the catalogue's
    C_T = 0.83, C_g = 0.779: the "R_c ~ ℓ_c" criterion of §3), and the time
    follows from Tanner's law, ``t = (r/C_T)^10 η / (γ V³)``.

    Returns
    -------
    (time, radius) : tuple of float
    """
    lc = capillary_length(
        surface_tension=surface_tension,
        density=density,
        outer_density=outer_density,
        gravity=gravity,
    )
    r = tanner_prefactor**5 / gravity_prefactor**4 * lc
    t = (r / tanner_prefactor) ** 10 * viscosity / (surface_tension * volume**3)
    return t, r
