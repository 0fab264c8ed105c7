"""Coalescence laws of the catalogue: free drops, drops in an outer fluid (docs/physics.md §2 A).

Each record follows :class:`~dropkin.scaling.regimes._regime.Regime`; the
catalogue (:mod:`._catalogue`) puts these first, in this order.
"""

from __future__ import annotations

import math
from fractions import Fraction

from . import _conditions as _c
from ._conditions import OH_OUTER_CROSSOVER
from ._phase_diagram import ELS_PEAK, ILV_SPEED, INERTIAL_PREFACTOR
from ._regime import Regime, powers

__all__ = ["COALESCENCE_LAWS"]

_COALESCENCE = ("coalescence",)
#: Two free drops are seen in silhouette from any direction across their line of
#: centres: from the side, or from below through a transparent floor when the line
#: of centres is horizontal. The neck radius is the same observable in both.
_SIDE = ("side", "bottom")
_ELS = "J. Fluid Mech. 401, 293 (1999); the 2-D solution of J. Fluid Mech. 213, 349 (1990)"

#: A1–A4: the neck between two drops, seen from the side or from below.
COALESCENCE_LAWS: tuple[Regime, ...] = (
    Regime(
        key="viscous",
        code="A1",
        name="viscous (Stokes) coalescence, ELS",
        geometries=_COALESCENCE,
        setting="free drops",
        observable="neck radius",
        views=_SIDE,
        exponent=Fraction("1"),
        logarithmic=True,
        group_powers=powers(surface_tension="1", viscosity="-1"),
        group_formula="γ/η",
        prefactor=1.0 / math.pi,
        prefactor_range=None,
        prefactor_status="V",
        normalisation="R is the drop radius (in the logarithm)",
        conditions="after the ILV stage, once viscous momentum has crossed the drop "
        "(t ≳ K_s R²/ν: Oh of a few or more); r < R/(eπ) ≈ 0.12 R; outer fluid inviscid "
        "(η/η_o ≥ 10)",
        reference=_ELS,
        status="V",
        note="a pure power-law fit of this law returns n ≈ 0.8–0.9",
        condition=_c.viscous,
        max_radius_ratio=ELS_PEAK,
        validity_source="the ELS formula peaks at r/R = 1/(eπ) ≈ 0.12 (D; J. Fluid Mech. 401, "
        "293, 1999)",
    ),
    Regime(
        key="viscous-equal-outer",
        code="A1",
        name="viscous coalescence in an outer fluid of equal viscosity, ELS",
        geometries=_COALESCENCE,
        setting="outer fluid",
        observable="neck radius",
        views=_SIDE,
        exponent=Fraction("1"),
        logarithmic=True,
        group_powers=powers(surface_tension="1", viscosity="-1"),
        group_formula="γ/η",
        prefactor=1.0 / (4.0 * math.pi),
        prefactor_range=None,
        prefactor_status="V",
        normalisation="R is the drop radius (in the logarithm)",
        conditions="outer viscosity comparable: 0.1 ≤ η/η_o ≤ 10; after the ILV stage as A1; "
        "r < R/(eπ)",
        reference=_ELS + " (a toroidal bubble of outer fluid forms)",
        status="V",
        condition=_c.viscous_equal_outer,
        max_radius_ratio=1.0 / (math.e * math.pi),
        validity_source="the ELS formula peaks at r/R = 1/(eπ) ≈ 0.12 (D; J. Fluid Mech. 401, "
        "293, 1999)",
    ),
    Regime(
        key="inertially-limited-viscous",
        code="A2",
        name="inertially limited viscous (ILV) coalescence",
        geometries=_COALESCENCE,
        setting="free drops",
        observable="neck radius",
        views=_SIDE,
        exponent=Fraction("1"),
        logarithmic=False,
        group_powers=powers(surface_tension="1", viscosity="-1"),
        group_formula="γ/η",
        prefactor=ILV_SPEED.value,
        prefactor_range=(ILV_SPEED.low, ILV_SPEED.high),
        prefactor_status=ILV_SPEED.status,
        normalisation="none (no length in the group)",
        conditions="the earliest dynamics for all viscosities; until inertia (r ~ Oh R) or "
        "the Stokes flow (t ~ R²/ν) takes over",
        reference="PNAS 109, 6857 (2012); Phys. Rev. Lett. 95, 164503 (2005); "
        "Phys. Rev. E 88, 063010 (2013)",
        status="M",
        note="C is O(1) and not verified here (range 0.5–2 assumed): fit it",
        condition=_c.always_first,
        max_radius_ratio=0.5,
        validity_source="constant-speed opening is reported up to r/R of order 0.5 when no "
        "other regime takes over first (M)",
    ),
    Regime(
        key="inertial",
        code="A3",
        name="inertial coalescence (inviscid limit)",
        geometries=("coalescence", "sessile-coalescence"),
        setting="free drops",
        observable="neck radius",
        views=_SIDE,
        exponent=Fraction("1/2"),
        logarithmic=False,
        group_powers=powers(surface_tension="1/4", radius="1/4", density="-1/4"),
        group_formula="(γR/ρ)^(1/4)",
        prefactor=INERTIAL_PREFACTOR.value,
        prefactor_range=(INERTIAL_PREFACTOR.low, INERTIAL_PREFACTOR.high),
        prefactor_status=INERTIAL_PREFACTOR.status,
        normalisation="R is the drop radius (papers using diameter or tip radius differ)",
        conditions="after the ILV stage, once r > (D0²/C_v) Oh R (reached when < R); outer "
        "fluid negligible, r ≪ R",
        reference="J. Fluid Mech. 487, 167 (2003); Phys. Rev. Lett. 95, 164503 (2005); "
        "J. Fluid Mech. 527, 85 (2005); Phys. Rev. Lett. 106, 114501 (2011)",
        status="V",
        note="same n as viscous-outer, inertial-outer, inertial-spreading: rank on C",
        condition=_c.inertial_free_or_right_angle,
        max_radius_ratio=0.5,
        validity_source="the gap argument needs r ≪ R; the t^1/2 law is reported to hold up "
        "to r/R of order 0.3–0.5 (M), the upper end is used",
    ),
    Regime(
        key="viscous-outer",
        code="A4v",
        name="coalescence governed by the outer fluid's viscosity",
        geometries=_COALESCENCE,
        setting="outer fluid",
        observable="neck radius",
        views=_SIDE,
        exponent=Fraction("1/2"),
        logarithmic=False,
        group_powers=powers(surface_tension="1/2", radius="1/2", outer_viscosity="-1/2"),
        group_formula="(γR/η_o)^(1/2)",
        prefactor=1.2,
        prefactor_range=None,
        prefactor_status="V",
        normalisation="R (A in the paper) is the drop radius",
        conditions=f"Oh_out ≥ {OH_OUTER_CROSSOVER}; after the inner viscous stage",
        reference="Nat. Commun. 5, 3182 (2014), Fig. 2 (explicit form reconstructed, D)",
        status="D",
        condition=_c.viscous_outer,
        max_radius_ratio=0.5,
        validity_source="as A3, r/R of order 0.3–0.5 (M), the upper end is used",
    ),
    Regime(
        key="inertial-outer",
        code="A4i",
        name="coalescence governed by the outer fluid's inertia (bubbles)",
        geometries=_COALESCENCE,
        setting="outer fluid",
        observable="neck radius",
        views=_SIDE,
        exponent=Fraction("1/2"),
        logarithmic=False,
        group_powers=powers(surface_tension="1/4", radius="1/4", outer_density="-1/4"),
        group_formula="(γR/ρ_o)^(1/4)",
        prefactor=1.4,
        prefactor_range=None,
        prefactor_status="V",
        normalisation="R (A in the paper) is the drop or bubble radius",
        conditions=f"Oh_out < {OH_OUTER_CROSSOVER} and ρ_o/ρ ≥ 0.1",
        reference="Nat. Commun. 5, 3182 (2014), Fig. 2 (explicit form reconstructed, D)",
        status="D",
        condition=_c.inertial_outer,
        max_radius_ratio=0.5,
        validity_source="as A3, r/R of order 0.3–0.5 (M), the upper end is used",
    ),
)
