"""Predicted crossovers between the regimes the catalogue pairs (docs/physics.md §3).

A crossover is where the early law and the late law give the same radius
(the matching argument of §3; the harmonic blend ``1/r = 1/r1 + 1/r2``
changes over there). Times count from contact; O(1) prefactors enter
explicitly and default to the catalogue's values. The matching formulas
themselves are in :mod:`._matching`; this module picks the pairs each
geometry links.

Examples
--------
>>> from dropkin.scaling import sample_numbers
>>> water = sample_numbers(surface_tension=0.07274, viscosity=1.0016e-3, density=998.2,
...                        radius=1e-3)
>>> [(c.early, c.late, round(c.radius * 1e6, 1)) for c in crossovers(water, "coalescence")]
[('viscous', 'inertial', 5.4)]
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ...errors import ExperimentError
from ._catalogue import SCALING_GEOMETRIES, regime
from ._matching import (
    inner_outer_viscous_crossover,
    power_law_crossing,
    tanner_gravity_crossover,
    viscous_inertial_crossover,
)
from ._numbers import SampleNumbers

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
    # The viscous side of every matching: C_v (γ/η) t.
    c_v = _prefactor("inertially-limited-viscous", prefactors)
    if geometry == "coalescence":
        out = _free_drop_crossovers(numbers, prefactors, c_v)
        out += _outer_fluid_crossovers(numbers, prefactors, c_v)
    elif geometry == "sessile-coalescence":
        out = _sessile_crossovers(numbers, prefactors)
    else:
        out = _spreading_crossovers(numbers, prefactors, c_v)
        out += _puddle_crossovers(numbers, prefactors)
    return tuple(x for x in out if math.isfinite(x.time))


def _free_drop_crossovers(n: SampleNumbers, prefactors, c_v: float) -> list[Crossover]:
    """Viscous → inertial of free drops: always given, it tells whether inertia is reached."""
    d0 = _prefactor("inertial", prefactors)
    t, r = viscous_inertial_crossover(
        viscosity=n.viscosity,
        density=n.density,
        surface_tension=n.surface_tension,
        radius=n.radius,
        viscous_prefactor=c_v,
        inertial_prefactor=d0,
    )
    return [
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
    ]


def _outer_fluid_crossovers(n: SampleNumbers, prefactors, c_v: float) -> list[Crossover]:
    """Viscous → the outer fluid's regimes, when those are plausible for the sample."""
    out = []
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
        t, r = power_law_crossing(c_v * n.capillary_speed, 1.0, *late)
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
    return out


def _sessile_crossovers(n: SampleNumbers, prefactors) -> list[Crossover]:
    """Viscous → inertial of sessile drops, with order-one placeholders for both C."""
    early = _law("viscous-sessile", n, prefactors, placeholder=1.0)
    late = _law("inertial-sessile", n, prefactors, placeholder=1.0)
    if early is None or late is None:
        return []
    t, r = power_law_crossing(*early, *late)
    return [
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
    ]


def _spreading_crossovers(n: SampleNumbers, prefactors, c_v: float) -> list[Crossover]:
    """Early spreading: viscous → inertial, then inertial or Hertz-like → Tanner."""
    early_key = "inertial-spreading"
    inertial = _law(early_key, n, prefactors)
    t, r = power_law_crossing(c_v * n.capillary_speed, 1.0, *inertial)
    out = [
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
    ]
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
    return out


def _puddle_crossovers(n: SampleNumbers, prefactors) -> list[Crossover]:
    """Late spreading: Tanner → gravity, where the drop becomes a puddle."""
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
    return [
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
    ]
