"""Dimensional analysis: exponents solved from [M, L, T], checked against the catalogue."""

import math
from fractions import Fraction

import pytest

from dropkin.errors import ExperimentError
from dropkin.scaling import REGIMES, dimensional_laws, dimensions_of
from dropkin.units import ureg

UNITS = {
    "surface_tension": "N/m",
    "viscosity": "Pa*s",
    "density": "kg/m^3",
    "radius": "m",
    "volume": "m^3",
    "outer_viscosity": "Pa*s",
    "outer_density": "kg/m^3",
    "gravity": "m/s^2",
}


@pytest.mark.parametrize("entry", [r for r in REGIMES if r.group_powers], ids=lambda r: r.key)
def test_reproduces_every_catalogue_power_law_from_its_parameters(entry):
    # The catalogue's exponent and group (docs/physics.md §2) must come out of the
    # dimension matrix of the group's own parameters alone, and be labelled
    # with the regime's key. Values are arbitrary: only dimensions matter.
    quantities = {name: ureg.Quantity(2.0, UNITS[name]) for name in entry.group_powers}
    laws = dimensional_laws(quantities)
    same = [
        law
        for law in laws
        if law.exponent == entry.exponent and dict(law.powers) == dict(entry.group_powers)
    ]
    assert len(same) == 1
    assert entry.key in same[0].matches
    # exact: the powers and the exponent make a length, in rational arithmetic
    total = [Fraction(0)] * 3
    for name, power in same[0].powers.items():
        _, dims = dimensions_of(quantities[name], name=name)
        total = [t + power * d for t, d in zip(total, dims, strict=True)]
    total[2] += same[0].exponent
    assert total == [0, 1, 0]


def test_viscosity_and_density_give_momentum_diffusion():
    # Common practice: ν = η/ρ gives a length (νt)^1/2; for water (ν = 1e-6
    # m²/s) momentum diffuses about 1 mm in 1 s.
    laws = dimensional_laws(
        {"viscosity": ureg.Quantity(1.0, "mPa*s"), "density": ureg.Quantity(1.0, "g/cm^3")}
    )
    assert len(laws) == 1
    (law,) = laws
    assert law.exponent == Fraction(1, 2)
    assert dict(law.powers) == {"viscosity": Fraction(1, 2), "density": Fraction(-1, 2)}
    assert float(law.length(1.0)) == pytest.approx(1e-3, rel=1e-9)
    assert law.matches == ("diffusive",)


def test_gravitational_constant_and_a_mass_give_kepler():
    # G M gives a length growing as t^(2/3) (Kepler's third law). Check with
    # docs/physics.md §6: (G M_sun)^(1/3) / (4π²)^(1/3) against the Earth's
    # a / T^(2/3) from the NASA fact-sheet values (a = 149.6e9 m, T = 365.2 d),
    # within 0.5 %. GM_sun = 1.32712440018e20 m³/s² and G = 6.67430e-11 are
    # FROM MEMORY (M); only their product enters.
    gm_sun, g = 1.32712440018e20, 6.67430e-11
    laws = dimensional_laws(
        {"G": ureg.Quantity(g, "m^3/(kg*s^2)"), "mass": ureg.Quantity(gm_sun / g, "kg")}
    )
    assert [law.exponent for law in laws] == [Fraction(2, 3)]
    (law,) = laws
    assert dict(law.powers) == {"G": Fraction(1, 3), "mass": Fraction(1, 3)}
    k_earth = 149.6e9 / (365.2 * 86400) ** (2 / 3)
    assert law.group / (4 * math.pi**2) ** (1 / 3) == pytest.approx(k_earth, rel=5e-3)
    assert k_earth == pytest.approx(1.4982e6, rel=1e-4)  # §6 table (C)


def test_gravity_gives_free_fall_and_the_pair_with_a_length_no_unique_law():
    # Common practice: a falling body covers g t²/2. The pair (g, R) leaves a
    # free dimensionless group R/(g t²), so no law comes from the pair itself;
    # what is found comes from single terms: g, and g·R^k as a product term
    # (e.g. (gR)^1/2 t, a gravity-wave speed times t).
    laws = dimensional_laws({"gravity": (9.81, "L T^-2"), "radius": (1e-3, {"L": 1})})
    assert ("gravity^(1) t^(2)", 2) in [(law.formula, law.exponent) for law in laws]
    assert all(len(law.terms) == 1 for law in laws)
    assert ("gravity*radius",) in [law.terms for law in laws]


def test_dimension_inputs_and_refusals():
    assert dimensions_of((1.0, "M L^-1 T^-1")) == (1.0, (1, -1, -1))
    assert dimensions_of((None, "Pa*s"))[1] == (1, -1, -1)
    assert dimensions_of(ureg.Quantity(2.0, "mN/m")) == (pytest.approx(2e-3), (1, 0, -2))
    with pytest.raises(ExperimentError, match="outside mass, length and time"):
        dimensions_of(ureg.Quantity(300.0, "K"), name="temperature")
    with pytest.raises(ExperimentError, match="not a dimension or a unit"):
        dimensions_of((1.0, "blorbs"), name="speed")


def test_dimensionless_quantities_are_ignored():
    with_angle = dimensional_laws(
        {"viscosity": (1e-3, "Pa*s"), "density": (1e3, "kg/m^3"), "angle": (0.5, {})}
    )
    assert [law.formula for law in with_angle] == ["viscosity^(1/2) density^(-1/2) t^(1/2)"]
