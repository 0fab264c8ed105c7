"""The regime catalogue: the published laws of docs/physics.md §2, one frozen record each.

Every law is written ``r = C · group · t**n`` with C dimensionless and the
group a product of powers of the sample's SI values (``group_powers``);
the ELS viscous law carries its logarithm instead of a pure power. A
prefactor means something only with its normalisation (radius or diameter,
volume), which each record states. Status labels follow docs/physics.md §0:
V checked against a source, C computed, D derived, M from memory.

Examples
--------
>>> from dropkin.scaling import sample_numbers
>>> inertial = regime("inertial")
>>> inertial.code, str(inertial.exponent), inertial.group_formula
('A3', '1/2', '(γR/ρ)^(1/4)')
>>> n = sample_numbers(surface_tension=0.0727, viscosity=1e-3, density=998.0, radius=1e-3)
>>> round(inertial.group(n), 4)                    # m s^-1/2
0.0164
>>> law = inertial.law(n)
>>> round(float(law([1e-4], 1.0)[0]), 7)           # r at 100 µs with D0 = 1, m
0.0001643
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from fractions import Fraction
from types import MappingProxyType

from ...errors import ExperimentError
from . import _conditions as _c
from ._conditions import OH_OUTER_CROSSOVER, OH_VISCOUS
from ._numbers import SampleNumbers
from ._regime import Candidate, Regime

__all__ = [
    "Regime",
    "Candidate",
    "REGIMES",
    "SCALING_GEOMETRIES",
    "OH_VISCOUS",
    "OH_OUTER_CROSSOVER",
    "regime",
    "regime_keys",
    "candidates",
]

#: Geometries the catalogue knows. ``sessile-coalescence`` is coalescence of
#: drops sitting on a substrate; ``coalescence`` means free (or pendant) drops.
SCALING_GEOMETRIES = ("coalescence", "sessile-coalescence", "spreading")


def _f(text: str) -> Fraction:
    return Fraction(text)


def _powers(**powers: str) -> Mapping[str, Fraction]:
    return MappingProxyType({name: Fraction(p) for name, p in powers.items()})


_COALESCENCE = ("coalescence",)
_SIDE = ("side",)
_BOTH = ("side", "bottom")
_ELS = "Eggers, Lister & Stone, J. Fluid Mech. 401, 293 (1999); Hopper, JFM 213, 349 (1990)"

REGIMES: tuple[Regime, ...] = (
    Regime(
        key="viscous",
        code="A1",
        name="viscous (Stokes) coalescence, ELS",
        geometries=_COALESCENCE,
        setting="free drops",
        observable="neck radius",
        views=_SIDE,
        exponent=_f("1"),
        logarithmic=True,
        group_powers=_powers(surface_tension="1", viscosity="-1"),
        group_formula="γ/η",
        prefactor=1.0 / math.pi,
        prefactor_range=None,
        prefactor_status="V",
        normalisation="R is the drop radius (in the logarithm)",
        conditions=f"Oh ≥ {OH_VISCOUS}, outer fluid inviscid (η/η_o ≥ 10), r ≪ R",
        reference=_ELS,
        status="V",
        note="a pure power-law fit of this law returns n ≈ 0.8–0.9",
        condition=_c.viscous,
    ),
    Regime(
        key="viscous-equal-outer",
        code="A1",
        name="viscous coalescence in an outer fluid of equal viscosity, ELS",
        geometries=_COALESCENCE,
        setting="outer fluid",
        observable="neck radius",
        views=_SIDE,
        exponent=_f("1"),
        logarithmic=True,
        group_powers=_powers(surface_tension="1", viscosity="-1"),
        group_formula="γ/η",
        prefactor=1.0 / (4.0 * math.pi),
        prefactor_range=None,
        prefactor_status="V",
        normalisation="R is the drop radius (in the logarithm)",
        conditions="outer viscosity comparable: 0.1 ≤ η/η_o ≤ 10; r ≪ R",
        reference=_ELS + " (a toroidal bubble of outer fluid forms)",
        status="V",
        condition=_c.viscous_equal_outer,
    ),
    Regime(
        key="inertially-limited-viscous",
        code="A2",
        name="inertially limited viscous (ILV) coalescence",
        geometries=_COALESCENCE,
        setting="free drops",
        observable="neck radius",
        views=_SIDE,
        exponent=_f("1"),
        logarithmic=False,
        group_powers=_powers(surface_tension="1", viscosity="-1"),
        group_formula="γ/η",
        prefactor=1.0,
        prefactor_range=None,
        prefactor_status="M",
        normalisation="none (no length in the group)",
        conditions="the earliest dynamics for all viscosities; until r ~ Oh R (low Oh)",
        reference="Paulsen et al., PNAS 109, 6857 (2012); Aarts et al., PRL 95, 164503 (2005)",
        status="M",
        note="C is O(1) and not verified here: fit it",
        condition=_c.always_first,
    ),
    Regime(
        key="inertial",
        code="A3",
        name="inertial coalescence (inviscid limit)",
        geometries=("coalescence", "sessile-coalescence"),
        setting="free drops",
        observable="neck radius",
        views=_SIDE,
        exponent=_f("1/2"),
        logarithmic=False,
        group_powers=_powers(surface_tension="1/4", radius="1/4", density="-1/4"),
        group_formula="(γR/ρ)^(1/4)",
        prefactor=1.2,
        prefactor_range=(1.0, 1.7),
        prefactor_status="M",
        normalisation="R is the drop radius (papers using diameter or tip radius differ)",
        conditions="Oh < 1 (r_c ~ Oh R < R), outer fluid negligible, r ≪ R",
        reference="Duchemin, Eggers & Josserand, JFM 487, 167 (2003); Aarts et al. 2005; "
        "Thoroddsen et al. 2005",
        status="V",
        note="same n as viscous-outer, inertial-outer, inertial-spreading: rank on C",
        condition=_c.inertial_free_or_right_angle,
    ),
    Regime(
        key="viscous-outer",
        code="A4v",
        name="coalescence governed by the outer fluid's viscosity",
        geometries=_COALESCENCE,
        setting="outer fluid",
        observable="neck radius",
        views=_SIDE,
        exponent=_f("1/2"),
        logarithmic=False,
        group_powers=_powers(surface_tension="1/2", radius="1/2", outer_viscosity="-1/2"),
        group_formula="(γR/η_o)^(1/2)",
        prefactor=1.2,
        prefactor_range=None,
        prefactor_status="V",
        normalisation="R (A in the paper) is the drop radius",
        conditions=f"Oh_out ≥ {OH_OUTER_CROSSOVER}; after the inner viscous stage",
        reference="Nat. Commun. 5, 3182 (2014), Fig. 2 (explicit form reconstructed, D)",
        status="D",
        condition=_c.viscous_outer,
    ),
    Regime(
        key="inertial-outer",
        code="A4i",
        name="coalescence governed by the outer fluid's inertia (bubbles)",
        geometries=_COALESCENCE,
        setting="outer fluid",
        observable="neck radius",
        views=_SIDE,
        exponent=_f("1/2"),
        logarithmic=False,
        group_powers=_powers(surface_tension="1/4", radius="1/4", outer_density="-1/4"),
        group_formula="(γR/ρ_o)^(1/4)",
        prefactor=1.4,
        prefactor_range=None,
        prefactor_status="V",
        normalisation="R (A in the paper) is the drop or bubble radius",
        conditions=f"Oh_out < {OH_OUTER_CROSSOVER} and ρ_o/ρ ≥ 0.1",
        reference="Nat. Commun. 5, 3182 (2014), Fig. 2 (explicit form reconstructed, D)",
        status="D",
        condition=_c.inertial_outer,
    ),
    Regime(
        key="viscous-sessile",
        code="B1",
        name="viscous coalescence of sessile drops",
        geometries=("sessile-coalescence",),
        setting="substrate",
        observable="bridge height",
        views=_SIDE,
        exponent=_f("1"),
        logarithmic=False,
        group_powers=_powers(surface_tension="1", viscosity="-1"),
        angle_power=4,
        group_formula="γθ⁴/η",
        prefactor=None,
        prefactor_range=None,
        prefactor_status="D",
        normalisation="θ the contact angle in radians; C depends on θ",
        conditions=f"Oh ≥ {OH_VISCOUS}; lubrication (small θ)",
        reference="Hernández-Sánchez, Lubbers, Eddi & Snoeijer, PRL 109, 184502 (2012)",
        status="D",
        condition=_c.viscous_sessile,
    ),
    Regime(
        key="inertial-sessile",
        code="B2",
        name="inertial coalescence of sessile drops, θ < 90°",
        geometries=("sessile-coalescence",),
        setting="substrate",
        observable="bridge height",
        views=_SIDE,
        exponent=_f("2/3"),
        logarithmic=False,
        group_powers=_powers(surface_tension="1/3", density="-1/3"),
        group_formula="(γ/ρ)^(1/3)",
        prefactor=None,
        prefactor_range=None,
        prefactor_status="D",
        normalisation="none (the drop size drops out); C = f(θ)",
        conditions="Oh < 1 and θ < 90° (at 90° the free-drop t^1/2 returns)",
        reference="Eddi, Winkels & Snoeijer, PRL 111, 144502 (2013)",
        status="V",
        condition=_c.inertial_sessile,
    ),
    Regime(
        key="viscous-sessile-width",
        code="B3",
        name="sessile coalescence seen from above (bridge width)",
        geometries=("sessile-coalescence",),
        setting="substrate",
        observable="bridge width",
        views=("bottom",),
        exponent=_f("1/2"),
        logarithmic=False,
        group_powers=_powers(),
        group_formula="—",
        prefactor=None,
        prefactor_range=None,
        prefactor_status="M",
        normalisation="—",
        conditions="thin viscous drops on wettable substrates; top or bottom view",
        reference="Ristenpart, McCalla, Roy & Stone, PRL 97, 064501 (2006) (M)",
        status="M",
        note="a different observable from the bridge height: never pool the two",
        condition=_c.sessile_width,
    ),
    Regime(
        key="inertial-spreading",
        code="C1",
        name="inertial spreading",
        geometries=("spreading",),
        setting="substrate",
        observable="contact radius",
        views=_BOTH,
        exponent=_f("1/2"),
        logarithmic=False,
        group_powers=_powers(surface_tension="1/4", radius="1/4", density="-1/4"),
        group_formula="(γR/ρ)^(1/4)",
        prefactor=1.2,
        prefactor_range=None,
        prefactor_status="M",
        normalisation="R is the drop radius",
        conditions="Oh < 1, t ≲ τ_i; n ≤ 1/2 on partially wetting surfaces",
        reference="Biance, Clanet & Quéré, PRE 69, 016301 (2004); Winkels et al., PRE 85, "
        "055301(R) (2012); Bird, Mandre & Stone, PRL 100, 234501 (2008)",
        status="V",
        note="fit n freely on hydrophobic surfaces (Bird et al.)",
        condition=_c.inertial_spreading,
    ),
    Regime(
        key="viscous-spreading",
        code="C2",
        name="early viscous spreading (log law, as ELS)",
        geometries=("spreading",),
        setting="substrate",
        observable="contact radius",
        views=_BOTH,
        exponent=_f("1"),
        logarithmic=True,
        group_powers=_powers(surface_tension="1", viscosity="-1"),
        group_formula="γ/η",
        prefactor=1.0 / math.pi,
        prefactor_range=None,
        prefactor_status="D",
        normalisation="R is the drop radius (in the logarithm)",
        conditions=f"Oh ≥ {OH_VISCOUS}; early times",
        reference="Eddi, Winkels & Snoeijer, Phys. Fluids 25, 013102 (2013)",
        status="V",
        note="C taken as in ELS by analogy (D); fit it",
        condition=_c.viscous_spreading,
    ),
    Regime(
        key="hertz-like-spreading",
        code="C3",
        name="energy–viscosity ('Hertz-like') spreading",
        geometries=("spreading",),
        setting="substrate",
        observable="contact radius",
        views=_BOTH,
        exponent=_f("1/3"),
        logarithmic=False,
        group_powers=_powers(surface_tension="1/3", radius="2/3", viscosity="-1/3"),
        group_formula="(γR²/η)^(1/3)",
        prefactor=(3.0 * math.pi / 32.0) ** (1.0 / 3.0),
        prefactor_range=None,
        prefactor_status="V",
        normalisation="R is the drop radius; C = (3π/32)^(1/3)",
        conditions="very viscous drops, Oh ≥ 1",
        reference="Milner, arXiv 1907.05862; Douezan et al., PNAS 108, 7315 (2011)",
        status="V",
        condition=_c.hertz_like,
    ),
    Regime(
        key="tanner",
        code="C4",
        name="Tanner's law (capillary–viscous spreading)",
        geometries=("spreading",),
        setting="substrate",
        observable="contact radius",
        views=_BOTH,
        exponent=_f("1/10"),
        logarithmic=False,
        group_powers=_powers(surface_tension="1/10", volume="3/10", viscosity="-1/10"),
        group_formula="(γV³/η)^(1/10)",
        prefactor=0.83,
        prefactor_range=(0.81, 0.86),
        prefactor_status="D",
        normalisation="V is the drop volume 4πR³/3; C = [(10/9Λ)(4/π)³]^(1/10), Λ = 10–20",
        conditions="small drops (Bo < 1, R_c < ℓ_c), complete wetting, small angle",
        reference="Tanner, J. Phys. D 12, 1473 (1979); de Gennes, RMP 57, 827 (1985)",
        status="V",
        condition=_c.tanner,
    ),
    Regime(
        key="gravity-spreading",
        code="C5",
        name="gravity–viscous spreading (puddle)",
        geometries=("spreading",),
        setting="substrate",
        observable="contact radius",
        views=_BOTH,
        exponent=_f("1/8"),
        logarithmic=False,
        group_powers=_powers(density="1/8", gravity="1/8", volume="3/8", viscosity="-1/8"),
        group_formula="(ρgV³/η)^(1/8)",
        prefactor=0.894 * 3.0 ** (-1.0 / 8.0),
        prefactor_range=None,
        prefactor_status="D",
        normalisation="V is the drop volume 4πR³/3; C = 0.894·3^(-1/8)",
        conditions="R_c ≳ ℓ_c; ρ → Δρ under an outer liquid",
        reference="Huppert, J. Fluid Mech. 121, 43 (1982)",
        status="V",
        condition=_c.gravity,
    ),
    Regime(
        key="diffusive",
        code="C6",
        name="viscous diffusion length (null model)",
        geometries=SCALING_GEOMETRIES,
        setting="any",
        observable="any radius",
        views=_BOTH,
        exponent=_f("1/2"),
        logarithmic=False,
        group_powers=_powers(viscosity="1/2", density="-1/2"),
        group_formula="ν^(1/2)",
        prefactor=1.0,
        prefactor_range=None,
        prefactor_status="D",
        normalisation="none; C = 1 by definition",
        conditions="never a regime by itself",
        reference="Stokes' first problem (common practice)",
        status="D",
        condition=_c.null_model,
    ),
)

_BY_KEY = {r.key: r for r in REGIMES}


def regime_keys() -> tuple[str, ...]:
    """The keys of every regime, in catalogue order."""
    return tuple(_BY_KEY)


def regime(key: str) -> Regime:
    """The catalogue record for a key.

    Raises
    ------
    ExperimentError
        For an unknown key; the message lists the keys that exist.
    """
    try:
        return _BY_KEY[key]
    except KeyError:
        raise ExperimentError(
            "unknown regime", key="regime", value=key, expected="one of " + ", ".join(_BY_KEY)
        ) from None


def _check_choice(value, allowed, *, key):
    if value not in allowed:
        raise ExperimentError(
            "is not a known choice", key=key, value=value, expected=" or ".join(allowed)
        )


def candidates(numbers: SampleNumbers, geometry: str, view: str = "side") -> tuple[Candidate, ...]:
    """The regimes that apply to a sample's geometry and view, each with a plausibility flag.

    Parameters
    ----------
    numbers : SampleNumbers
    geometry : str
        One of :data:`SCALING_GEOMETRIES`.
    view : str
        ``"side"`` or ``"bottom"``.

    Returns
    -------
    tuple of Candidate
        In catalogue order; ``plausible`` says whether the conditions of
        validity hold, ``reason`` shows the numbers that decided.

    Examples
    --------
    >>> from dropkin.scaling import sample_numbers
    >>> n = sample_numbers(surface_tension=0.0727, viscosity=1e-3, density=998.0,
    ...                    radius=1e-3, outer_viscosity=1.8e-5, outer_density=1.2)
    >>> [c.regime.key for c in candidates(n, "coalescence") if c.plausible]
    ['inertially-limited-viscous', 'inertial']
    """
    _check_choice(geometry, SCALING_GEOMETRIES, key="geometry")
    _check_choice(view, ("side", "bottom"), key="view")
    found = []
    for entry in REGIMES:
        if geometry not in entry.geometries or view not in entry.views:
            continue
        plausible, reason = entry.check(numbers)
        found.append(Candidate(entry, bool(plausible), reason, entry.group(numbers)))
    return tuple(found)
