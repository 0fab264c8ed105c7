"""Dimensionless numbers and scales against docs/physics.md §1 and §3.

The §1 table gives water (R = 1 mm, 20 °C) and glycerol (20 °C) values
computed from the library's property sources (status C), printed to two or
three digits; each check allows 1 % or half a unit of the last printed
digit, whichever is larger.
"""

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from dropkin.errors import ExperimentError
from dropkin.experiment import experiment_from_toml
from dropkin.liquids import liquid_properties, resolve_fluids
from dropkin.scaling import (
    bond,
    capillary_length,
    diffusion_length,
    ohnesorge,
    ohnesorge_outer,
    sample_numbers,
    sample_numbers_from_experiment,
    viscous_time,
)


def close(value, printed, digits_unit):
    """Within 1 % or half a unit of the last printed digit."""
    return abs(value - printed) <= max(0.01 * abs(printed), digits_unit / 2)


def numbers_for(name, celsius, radius=1e-3):
    liquid = liquid_properties(name, celsius + 273.15)
    air = liquid_properties("air", celsius + 273.15)
    return sample_numbers(
        surface_tension=liquid.surface_tension,
        viscosity=liquid.viscosity,
        density=liquid.density,
        radius=radius,
        outer_viscosity=air.viscosity,
        outer_density=air.density,
    )


# docs/physics.md §1, water, R = 1 mm, 20 °C (C); (field, SI value, last-digit unit)
WATER_TABLE = [
    ("capillary_speed", 72.6, 0.1),
    ("viscous_time", 13.8e-6, 0.1e-6),
    ("inertial_time", 3.70e-3, 0.01e-3),
    ("viscous_length", 14e-9, 1e-9),
    ("ohnesorge", 3.7e-3, 0.1e-3),
    ("capillary_length", 2.73e-3, 0.01e-3),
    ("bond", 0.135, 0.001),
]
# docs/physics.md §1, glycerol, 20 °C (C); γ = 64.11 mN/m, the VDI Heat Atlas (2010)
# fit of docs/physics.md §5.2 (τ_i, ℓ_c and Bo moved with it from a remembered 63.4).
GLYCEROL_TABLE = [
    ("capillary_speed", 4.5e-2, 0.1e-2),
    ("viscous_time", 22e-3, 1e-3),
    ("inertial_time", 4.44e-3, 0.01e-3),
    ("viscous_length", 25e-3, 1e-3),
    ("ohnesorge", 5.0, 0.1),
    ("capillary_length", 2.28e-3, 0.01e-3),
    ("bond", 0.193, 0.001),
]


@pytest.mark.parametrize(("field", "printed", "unit"), WATER_TABLE)
def test_water_scales(field, printed, unit):
    n = numbers_for("water", 20.0)
    assert close(getattr(n, field), printed, unit), getattr(n, field)


@pytest.mark.parametrize(("field", "printed", "unit"), GLYCEROL_TABLE)
def test_glycerol_scales(field, printed, unit):
    n = numbers_for("glycerol", 20.0)
    assert close(getattr(n, field), printed, unit), getattr(n, field)


@pytest.mark.parametrize(
    ("grade", "oh", "speed"),
    [("10cSt", 0.068, 2.15), ("100cSt", 0.68, 0.217), ("1000cSt", 6.8, 0.022)],
)
def test_silicone_oil_scales(grade, oh, speed):
    # Source: docs/physics.md §1, silicone oils at 25 °C from the nominal data of
    # §5.4 (C): Oh, u_v, and l_c ≈ 1.49 mm for all three; 2 % (nominal data).
    n = numbers_for(f"silicone-oil-{grade}", 25.0)
    assert n.ohnesorge == pytest.approx(oh, rel=0.02)
    assert n.capillary_speed == pytest.approx(speed, rel=0.02)
    assert n.capillary_length == pytest.approx(1.49e-3, rel=0.02)


def test_diffusion_length_of_water():
    # Source: docs/physics.md §1: (nu t)^1/2 = 10 µm at t = 100 µs for water (C).
    n = numbers_for("water", 20.0)
    assert diffusion_length(kinematic_viscosity=n.kinematic_viscosity, time=100e-6) == (
        pytest.approx(10e-6, rel=0.01)
    )


def test_thoroddsen_threshold_in_terms_of_oh():
    # Source: docs/physics.md §3 (V, Thoroddsen et al. 2005): Re_v = Oh^-2; viscosity
    # slows coalescence below Re_v = 5000, i.e. Oh = 0.014, and halves the rate
    # at Re_v ≈ 50, i.e. Oh ≈ 0.14; for water the latter is a ~2 µm diameter.
    assert 5000**-0.5 == pytest.approx(0.014, rel=0.02)
    water = liquid_properties("water", 293.15)
    diameter = 2 * 50 * water.viscosity**2 / (water.density * water.surface_tension)
    oh = ohnesorge(
        viscosity=water.viscosity,
        density=water.density,
        surface_tension=water.surface_tension,
        radius=diameter / 2,
    )
    assert oh == pytest.approx(50**-0.5, rel=1e-9)
    assert 1e-6 < diameter < 3e-6


def test_outer_ohnesorge_at_the_published_crossover():
    # Source: Nat. Commun. 5, 3182 (2014) via docs/physics.md §2 A4 (V): air bubbles
    # (A = 0.94 mm) in silicone oils with γ = 15.9–21.5 mN/m switch from
    # outer-inertial to outer-viscous at η_o ≈ 99 mPa s, Oh_out ≈ 0.77. With
    # the oil's density (~965 kg/m^3, §5.4) the γ range must bracket 0.77.
    values = [
        ohnesorge_outer(
            outer_viscosity=0.099, outer_density=965.0, surface_tension=g, radius=0.94e-3
        )
        for g in (15.9e-3, 21.5e-3)
    ]
    assert min(values) < 0.77 < max(values)


positive = st.floats(min_value=1e-6, max_value=1e4, allow_nan=False)


@given(eta=positive, rho=positive, gamma=st.floats(1e-3, 1.0), radius=st.floats(1e-5, 1e-1))
def test_identities_between_the_scales(eta, rho, gamma, radius):
    # Identities of docs/physics.md §1 (D): Oh = τ_v/τ_i, l_ν = Oh² R, Bo = (R/ℓ_c)².
    n = sample_numbers(surface_tension=gamma, viscosity=eta, density=rho, radius=radius)
    assert n.ohnesorge == pytest.approx(n.viscous_time / n.inertial_time, rel=1e-9)
    assert n.viscous_length == pytest.approx(n.ohnesorge**2 * radius, rel=1e-9)
    assert n.bond == pytest.approx((radius / n.capillary_length) ** 2, rel=1e-9)
    assert n.volume == pytest.approx(4 / 3 * math.pi * radius**3, rel=1e-12)


def test_bond_uses_the_density_difference():
    # Common practice: buoyancy counts the density difference with the outer fluid.
    assert bond(density=1000.0, outer_density=1000.0, surface_tension=0.07, radius=1e-3) == 0
    assert math.isinf(capillary_length(surface_tension=0.07, density=1000.0, outer_density=1000.0))


@pytest.mark.parametrize("bad", [-1e-3, 0.0, math.nan, math.inf, "1 mPa*s"])
def test_bad_viscosity_is_refused(bad):
    with pytest.raises(ExperimentError, match=r"viscosity.*must be"):
        viscous_time(viscosity=bad, radius=1e-3, surface_tension=0.07)
    with pytest.raises(ExperimentError, match=r"viscosity.*must be"):
        sample_numbers(surface_tension=0.07, viscosity=bad, density=1000.0, radius=1e-3)


def test_from_experiment_needs_the_drop_radius():
    exp = resolve_fluids(experiment_from_toml('[liquid]\nname = "water"\n'))
    with pytest.raises(ExperimentError, match=r"drops.radius: is not known"):
        sample_numbers_from_experiment(exp)
    exp = resolve_fluids(
        experiment_from_toml('[liquid]\nname = "water"\n[drops]\nradius = "1 mm"')
    )
    n = sample_numbers_from_experiment(exp)
    # Water's 1.0016 mPa s (docs/physics.md §5.1) over air's 0.018 mPa s (docs/architecture.md's
    # experiment example): about 55.
    assert n.viscosity_ratio == pytest.approx(1.0016 / 0.018, rel=0.02)
