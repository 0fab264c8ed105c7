"""Predicted crossovers between the regimes the catalogue pairs (docs/physics.md §3).

A crossover is where the early law and the late law give the same radius
(the matching argument of §3; the harmonic blend ``1/r = 1/r1 + 1/r2``
changes over there). Times count from contact; O(1) prefactors enter
explicitly and default to the catalogue's values.

Examples
--------
>>> t, r = viscous_inertial_crossover(viscosity=1.0016e-3, density=998.2,
...                                   surface_tension=0.07274, radius=1e-3)
>>> round(r * 1e6, 1), round(t * 1e9)        # Oh R in µm, Oh² τ_i in ns
(3.7, 51)
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ...errors import ExperimentError
from ._catalogue import SCALING_GEOMETRIES, regime
from ._numbers import (
    STANDARD_GRAVITY,
    SampleNumbers,
    capillary_length,
    inertial_time,
    ohnesorge,
    viscous_time,
)

__all__ = [
    "Crossover",
    "power_law_crossing",
    "viscous_inertial_crossover",
    "inner_outer_viscous_crossover",
    "tanner_gravity_crossover",
    "crossovers",
]


@dataclass(frozen=True)
class Crossover:
    """A predicted change of regime.

    Attributes
    ----------
    early, late : str
        Regime keys before and after.
    time : float
        Time since contact at the crossover (s).
    radius : float
        Radius at the crossover (m).
    reached : bool
        Whether the crossover falls while the laws still hold (radius below
        the drop radius R for coalescence; always True for spreading).
    formula : str
        How it was computed.
    status : str
        Status label (docs/physics.md §0), usually D: O(1) factors matter.
    note : str
        The prefactors used, and caveats.
    """

    early: str
    late: str
    time: float
    radius: float
    reached: bool
    formula: str
    status: str
    note: str = ""


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


def _prefactor(key, prefactors, placeholder=None):
    if prefactors and key in prefactors:
        return float(prefactors[key])
    value = regime(key).prefactor
    return placeholder if value is None else value


def _law(key, numbers, prefactors, placeholder=None):
    """(dimensional prefactor, exponent) of a power-law regime for a sample."""
    entry = regime(key)
    group = entry.group(numbers)
    c = _prefactor(key, prefactors, placeholder)
    if group is None or c is None:
        return None
    return c * group, float(entry.exponent)


def crossovers(numbers: SampleNumbers, geometry: str, *, prefactors=None):
    """The crossovers of the regime pairs that the catalogue links for a geometry.

    Parameters
    ----------
    numbers : SampleNumbers
    geometry : str
        One of ``coalescence``, ``sessile-coalescence``, ``spreading``.
    prefactors : Mapping[str, float], optional
        Dimensionless C per regime key, replacing the catalogue's values.
        The viscous side of each matching uses the linear form
        ``C_v (γ/η) t`` with ``C_v`` of ``inertially-limited-viscous`` (1, M).

    Returns
    -------
    tuple of Crossover
        For coalescence, viscous → inertial always (it tells whether inertia
        is ever reached), and the crossovers to the outer-fluid regimes when
        those are plausible for the sample.
    """
    if geometry not in SCALING_GEOMETRIES:
        raise ExperimentError(
            "is not a known choice",
            key="geometry",
            value=geometry,
            expected=" or ".join(SCALING_GEOMETRIES),
        )
    n = numbers
    c_v = _prefactor("inertially-limited-viscous", prefactors)
    speed = n.capillary_speed
    out = []
    if geometry == "coalescence":
        d0 = _prefactor("inertial", prefactors)
        t, r = viscous_inertial_crossover(
            viscosity=n.viscosity,
            density=n.density,
            surface_tension=n.surface_tension,
            radius=n.radius,
            viscous_prefactor=c_v,
            inertial_prefactor=d0,
        )
        out.append(
            Crossover(
                "viscous",
                "inertial",
                t,
                r,
                r < n.radius,
                "t_c = (D0/C_v)² Oh² τ_i, r_c = (D0²/C_v) Oh R",
                "D",
                f"D0 = {d0:g}, C_v = {c_v:g}; inertia is reached only if r_c < R",
            )
        )
        if n.outer_viscosity is not None and regime("viscous-outer").check(n)[0]:
            c1 = _prefactor("viscous-outer", prefactors)
            t, r = inner_outer_viscous_crossover(
                viscosity=n.viscosity,
                outer_viscosity=n.outer_viscosity,
                surface_tension=n.surface_tension,
                radius=n.radius,
                viscous_prefactor=c_v,
                outer_prefactor=c1,
            )
            out.append(
                Crossover(
                    "viscous",
                    "viscous-outer",
                    t,
                    r,
                    r < n.radius,
                    "t_c = (C1/C_v)² (η/η_o) τ_v, r_c = (C1²/C_v)(η/η_o) R",
                    "D",
                    f"C1 = {c1:g}, C_v = {c_v:g}; matters only when Oh_out ≥ 0.77",
                )
            )
        late = _law("inertial-outer", n, prefactors)
        if late is not None and regime("inertial-outer").check(n)[0]:
            t, r = power_law_crossing(c_v * speed, 1.0, *late)
            out.append(
                Crossover(
                    "viscous",
                    "inertial-outer",
                    t,
                    r,
                    r < n.radius,
                    "C_v (γ/η) t = D1 (γR/ρ_o)^(1/4) t^(1/2)",
                    "D",
                    "matters only when Oh_out < 0.77 and ρ_o/ρ ≥ 0.1",
                )
            )
    elif geometry == "sessile-coalescence":
        early = _law("viscous-sessile", n, prefactors, placeholder=1.0)
        late = _law("inertial-sessile", n, prefactors, placeholder=1.0)
        if early is not None and late is not None:
            t, r = power_law_crossing(*early, *late)
            out.append(
                Crossover(
                    "viscous-sessile",
                    "inertial-sessile",
                    t,
                    r,
                    r < n.radius,
                    "C (γθ⁴/η) t = C' (γ/ρ)^(1/3) t^(2/3)",
                    "D",
                    "both C unknown (θ-dependent): order-one placeholders 1 used",
                )
            )
    else:
        early_key = "inertial-spreading"
        inertial = _law(early_key, n, prefactors)
        t, r = power_law_crossing(c_v * speed, 1.0, *inertial)
        out.append(
            Crossover(
                "viscous-spreading",
                early_key,
                t,
                r,
                r < n.radius,
                "C_v (γ/η) t = C (γR/ρ)^(1/4) t^(1/2), as for free drops",
                "D",
                "by analogy with §3 (free drops); early spreading is like coalescence (Eddi 2013)",
            )
        )
        tanner = _law("tanner", n, prefactors)
        t, r = power_law_crossing(*inertial, *tanner)
        out.append(
            Crossover(
                early_key,
                "tanner",
                t,
                r,
                True,
                "C (γR/ρ)^(1/4) t^(1/2) = C_T (γV³/η)^(1/10) t^(1/10)",
                "D",
                "inertial spreading lasts about τ_i (Biance et al. 2004); the crossing is a bound",
            )
        )
        hertz = _law("hertz-like-spreading", n, prefactors)
        t, r = power_law_crossing(*hertz, *tanner)
        out.append(
            Crossover(
                "hertz-like-spreading",
                "tanner",
                t,
                r,
                True,
                "0.665 (γR²/η)^(1/3) t^(1/3) = C_T (γV³/η)^(1/10) t^(1/10)",
                "D",
                "for very viscous drops (Oh ≥ 1)",
            )
        )
        c_t = _prefactor("tanner", prefactors)
        c_g = _prefactor("gravity-spreading", prefactors)
        t, r = tanner_gravity_crossover(
            surface_tension=n.surface_tension,
            viscosity=n.viscosity,
            density=n.density,
            volume=n.volume,
            outer_density=n.outer_density or 0.0,
            gravity=n.gravity,
            tanner_prefactor=c_t,
            gravity_prefactor=c_g,
        )
        out.append(
            Crossover(
                "tanner",
                "gravity-spreading",
                t,
                r,
                True,
                "r = (C_T⁵/C_g⁴) ℓ_c, t from Tanner's law",
                "D",
                f"C_T = {c_t:.3g}, C_g = {c_g:.3g}; R_c/ℓ_c = {r / n.capillary_length:.3g}",
            )
        )
    return tuple(x for x in out if math.isfinite(x.time))
