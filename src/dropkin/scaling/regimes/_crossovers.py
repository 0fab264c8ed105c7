"""Predicted crossovers between the regimes the catalogue pairs (docs/physics.md §3).

A crossover is where the early law and the late law give the same radius
(the matching argument of §3; the harmonic blend ``1/r = 1/r1 + 1/r2``
changes over there). Times count from contact. The O(1) constants enter
explicitly, each with a range; every crossover is given as a central value
and the lowest–highest range over those constants. Free drops follow the
phase diagram of :mod:`._phase_diagram` (the one home of their sequence);
the matching formulas themselves are in :mod:`._matching`; this module
picks the pairs each geometry links.

Examples
--------
>>> from dropkin.scaling import sample_numbers
>>> water = sample_numbers(surface_tension=0.07274, viscosity=1.0016e-3, density=998.2,
...                        radius=1e-3)
>>> [(c.late, round(c.radius * 1e6, 1), [round(r * 1e6, 1) for r in c.radius_range])
...  for c in crossovers(water, "coalescence")][:1]
[('inertial', 5.4, [1.9, 21.5])]
"""

from __future__ import annotations

import math

from ...errors import ExperimentError
from ._catalogue import SCALING_GEOMETRIES, regime
from ._matching import (
    inner_outer_viscous_crossover,
    power_law_crossing,
    tanner_gravity_crossover,
    viscous_inertial_crossover,
)
from ._numbers import SampleNumbers
from ._phase_diagram import ILV_SPEED, Constant, Crossover, free_drop_diagram, ranged_crossing

__all__ = [
    "Crossover",
    "power_law_crossing",
    "viscous_inertial_crossover",
    "inner_outer_viscous_crossover",
    "tanner_gravity_crossover",
    "crossovers",
    "coalescence_diagram",
    "constant",
]

#: The range given to a C that no source gives (both sessile C): 1 is used,
#: and a factor two either side is allowed (an assumption, M).
PLACEHOLDER_RANGE = (0.5, 2.0)


def constant(key: str, prefactors=None) -> Constant:
    """The dimensionless C of a regime as a :class:`Constant` with its range.

    The user's value (``prefactors[key]``) fixes it; else the catalogue's C
    with its published range, or without one; else the placeholder 1 with
    :data:`PLACEHOLDER_RANGE`.
    """
    entry = regime(key)
    if key == "inertially-limited-viscous":
        base = ILV_SPEED
    elif entry.prefactor is None:
        base = Constant("C", 1.0, *PLACEHOLDER_RANGE, "M", "no published C: placeholder 1")
    else:
        lo, hi = entry.prefactor_range or (entry.prefactor, entry.prefactor)
        base = Constant("C", entry.prefactor, lo, hi, entry.prefactor_status, entry.reference)
    if prefactors and key in prefactors:
        return base.fixed(prefactors[key])
    return base


def coalescence_diagram(numbers: SampleNumbers, prefactors=None, end_fraction=0.5):
    """The free-drop phase diagram, ending in the outer fluid's regime when that governs."""
    for key in ("viscous-outer", "inertial-outer"):
        entry = regime(key)
        group = entry.group(numbers)
        if group is not None and entry.check(numbers)[0]:
            c = constant(key, prefactors)
            c = Constant(entry.code, c.value, c.low, c.high, c.status, c.source)
            outer = (group, c, float(entry.exponent))
            return free_drop_diagram(
                numbers, prefactors, end_fraction=end_fraction, late=key, outer=outer
            )
    return free_drop_diagram(numbers, prefactors, end_fraction=end_fraction)


def crossovers(numbers: SampleNumbers, geometry: str, *, prefactors=None):
    """The crossovers of the regime pairs that the catalogue links for a geometry.

    Parameters
    ----------
    numbers : SampleNumbers
    geometry : str
        One of ``coalescence``, ``sessile-coalescence``, ``spreading``.
    prefactors : Mapping[str, float], optional
        Dimensionless C per regime key, replacing the catalogue's values (and
        their ranges). The viscous side of each matching is the ILV law
        ``C_v (γ/η) t``.

    Returns
    -------
    tuple of Crossover
        For coalescence, the two ways out of the ILV stage (to inertia, or
        to the outer fluid's regime when that governs, and to the Stokes log
        law), each whether reached or not; for the other geometries the pairs
        of §3. Each with its range over the constants' ranges.
    """
    if geometry not in SCALING_GEOMETRIES:
        raise ExperimentError(
            "is not a known choice",
            key="geometry",
            value=geometry,
            expected=" or ".join(SCALING_GEOMETRIES),
        )
    if geometry == "coalescence":
        out = list(coalescence_diagram(numbers, prefactors).crossovers)
    elif geometry == "sessile-coalescence":
        out = _sessile_crossovers(numbers, prefactors)
    else:
        out = _spreading_crossovers(numbers, prefactors)
        out += _puddle_crossovers(numbers, prefactors)
    return tuple(x for x in out if math.isfinite(x.time))


def _power_crossover(n, early, late, prefactors, *, early_law=None, reached=True, **text):
    """The crossing of two power laws, over their constants' ranges; None without a group."""
    late_entry = regime(late)
    g_late = late_entry.group(n)
    if early_law is None:
        e = regime(early)
        early_law = (e.group(n), float(e.exponent), constant(early, prefactors))
    g_early, n_early, c_early = early_law
    if g_early is None or g_late is None:
        return None
    c_late = constant(late, prefactors)
    n_late = float(late_entry.exponent)

    def at(c1, c2):
        return power_law_crossing(c1 * g_early, n_early, c2 * g_late, n_late)

    (t, r), t_range, r_range = ranged_crossing(at, [c_early, c_late])
    within = r < n.radius if reached is None else reached
    possible = r_range[0] < n.radius if reached is None else reached
    note = f"{text.get('note', '')}; C = {c_early.text()} → {c_late.text()}".strip("; ")
    return Crossover(
        early, late, t, r, within, text["formula"], "D", note, t_range, r_range, possible
    )


def _sessile_crossovers(n: SampleNumbers, prefactors) -> list[Crossover]:
    """Viscous → inertial of sessile drops, with order-one placeholders for both C."""
    x = _power_crossover(
        n,
        "viscous-sessile",
        "inertial-sessile",
        prefactors,
        reached=None,
        formula="C (γθ⁴/η) t = C' (γ/ρ)^(1/3) t^(2/3)",
        note="both C unknown (θ-dependent): placeholders 1, range 0.5–2 assumed",
    )
    return [] if x is None else [x]


def _spreading_crossovers(n: SampleNumbers, prefactors) -> list[Crossover]:
    """Early spreading: viscous → inertial, then inertial or Hertz-like → Tanner."""
    c_v = constant("inertially-limited-viscous", prefactors)
    linear = (n.capillary_speed, 1.0, c_v)
    out = [
        _power_crossover(
            n,
            "viscous-spreading",
            "inertial-spreading",
            prefactors,
            early_law=linear,
            reached=None,
            formula="C_v (γ/η) t = C (γR/ρ)^(1/4) t^(1/2), as for free drops",
            note="by analogy with free drops; early spreading is like coalescence "
            "(Phys. Fluids 25, 013102, 2013)",
        ),
        _power_crossover(
            n,
            "inertial-spreading",
            "tanner",
            prefactors,
            formula="C (γR/ρ)^(1/4) t^(1/2) = C_T (γV³/η)^(1/10) t^(1/10)",
            note="inertial spreading lasts about τ_i (Phys. Rev. E 69, 016301, 2004); "
            "the crossing is a bound",
        ),
        _power_crossover(
            n,
            "hertz-like-spreading",
            "tanner",
            prefactors,
            formula="0.665 (γR²/η)^(1/3) t^(1/3) = C_T (γV³/η)^(1/10) t^(1/10)",
            note="for very viscous drops (Oh ≥ 1)",
        ),
    ]
    return [x for x in out if x is not None]


def _puddle_crossovers(n: SampleNumbers, prefactors) -> list[Crossover]:
    """Late spreading: Tanner → gravity, where the drop becomes a puddle."""
    c_t = constant("tanner", prefactors)
    c_g = constant("gravity-spreading", prefactors)

    def at(ct, cg):
        return tanner_gravity_crossover(
            surface_tension=n.surface_tension,
            viscosity=n.viscosity,
            density=n.density,
            volume=n.volume,
            outer_density=n.outer_density or 0.0,
            gravity=n.gravity,
            tanner_prefactor=ct,
            gravity_prefactor=cg,
        )

    (t, r), t_range, r_range = ranged_crossing(at, [c_t, c_g])
    return [
        Crossover(
            "tanner",
            "gravity-spreading",
            t,
            r,
            True,
            "r = (C_T⁵/C_g⁴) ℓ_c, t from Tanner's law",
            "D",
            f"C_T = {c_t.text()}, C_g = {c_g.text()}; R_c/ℓ_c = {r / n.capillary_length:.3g}",
            t_range,
            r_range,
        )
    ]
