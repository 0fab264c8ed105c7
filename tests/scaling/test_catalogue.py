"""The regime catalogue against docs/physics.md §2 and against pint's dimensional algebra."""

import math

import numpy as np
import pytest

from dropkin.errors import ExperimentError
from dropkin.fitting import harmonic_blend, power_law, viscous_log_law
from dropkin.scaling import REGIMES, candidates, regime, regime_keys, sample_numbers
from dropkin.units import ureg

WATER = sample_numbers(  # docs/physics.md §5.1 at 20 °C (C); air from CoolProp (C)
    surface_tension=0.07274,
    viscosity=1.0016e-3,
    density=998.207,
    radius=1e-3,
    outer_viscosity=1.81e-5,
    outer_density=1.204,
)
GLYCEROL = sample_numbers(  # docs/physics.md §5.2 at 20 °C
    surface_tension=0.0634,
    viscosity=1.414,
    density=1261.1,
    radius=1e-3,
    outer_viscosity=1.81e-5,
    outer_density=1.204,
)


def test_every_regime_of_the_physics_reference_is_there():
    # Source: docs/physics.md §2 summary table (A1–A4, B1–B3, C1–C6) and the keys
    # docs/architecture.md fixes for fit.json.
    codes = {r.code for r in REGIMES}
    assert codes >= {"A1", "A2", "A3", "A4v", "A4i", "B1", "B2", "B3"} | {
        f"C{i}" for i in range(1, 7)
    }
    fixed = {"viscous", "inertial", "viscous-outer", "viscous-spreading"}
    assert fixed | {"gravity-spreading", "inertial-spreading"} <= set(regime_keys())
    for r in REGIMES:
        assert r.key == r.key.lower() and " " not in r.key
        assert r.reference and r.status in "VCDM" and r.prefactor_status in "VCDM"


UNITS = {  # pint units of each SampleNumbers field used in a group
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
def test_each_group_times_t_to_the_n_is_a_length(entry):
    # Independent check with pint (common practice: a law must be dimensionally
    # consistent): group * t**n must have the dimension of a length.
    q = ureg.Quantity(1.0, "dimensionless")
    for name, power in entry.group_powers.items():
        q = q * ureg.Quantity(1.0, UNITS[name]) ** float(power)
    q = q * ureg.Quantity(1.0, "s") ** float(entry.exponent)
    assert q.dimensionality == ureg.Unit("m").dimensionality


def test_published_prefactors():
    # Sources (docs/physics.md §2): ELS 1/π and 1/(4π) (V); Nat. Commun. 2014 1.2
    # and 1.4 (V), consistent with the fitted time ratios (1/0.72)^1/2 = 1.18
    # and (1/0.51)^1/2 = 1.40; Milner (3π/32)^1/3 = 0.665 (V); Huppert
    # 0.894·3^(-1/8) = 0.779 (D); Tanner [(10/9Λ)(4/π)³]^(1/10) for Λ = 20–10 (D).
    assert regime("viscous").prefactor == pytest.approx(1 / math.pi)
    assert regime("viscous-equal-outer").prefactor == pytest.approx(1 / (4 * math.pi))
    assert regime("viscous-outer").prefactor == pytest.approx((1 / 0.72) ** 0.5, rel=0.02)
    assert regime("inertial-outer").prefactor == pytest.approx((1 / 0.51) ** 0.5, rel=0.01)
    assert regime("hertz-like-spreading").prefactor == pytest.approx(0.665, abs=5e-4)
    assert regime("gravity-spreading").prefactor == pytest.approx(0.779, abs=5e-4)
    assert (1024 / (81 * math.pi**3)) ** (1 / 8) == pytest.approx(0.894, abs=5e-4)
    tanner = [(10 / (9 * lam) * (4 / math.pi) ** 3) ** 0.1 for lam in (20, 15, 10)]
    assert tanner == pytest.approx([0.81, 0.83, 0.86], abs=0.005)
    low, high = regime("tanner").prefactor_range
    assert low <= regime("tanner").prefactor <= high
    assert regime("inertial").prefactor_range == (1.0, 1.7)  # §2 A3, M


def test_inertial_water_numbers():
    # Source: docs/physics.md §2 A3 for water, R = 1 mm, D0 = 1 (C): group 0.0164
    # m s^-1/2; r = 16, 52, 164, 520 µm at 1, 10, 100, 1000 µs; neck speed
    # 8.2 m/s at 1 µs and 0.26 m/s at 1 ms. Printed to 2–3 digits: 1 %.
    entry = regime("inertial")
    assert entry.group(WATER) == pytest.approx(0.0164, rel=0.01)
    t = np.array([1e-6, 1e-5, 1e-4, 1e-3])
    r = entry.law(WATER)(t, 1.0)
    assert r * 1e6 == pytest.approx([16.4, 52, 164, 520], rel=0.01)
    speed = 0.5 * r / t
    assert (speed[0], speed[-1]) == pytest.approx((8.2, 0.26), rel=0.01)


def test_els_local_slope():
    # Source: docs/physics.md §2 A1 (C): d ln r / d ln t = 1 + 1/ln(γt/(ηR)) =
    # 0.89, 0.86, 0.78, 0.57 at γt/(ηR) = 1e-4 ... 1e-1. The slope is taken
    # here by finite differences of the log law itself.
    law = regime("viscous").law(WATER)
    x = np.array([1e-4, 1e-3, 1e-2, 1e-1])
    t = x * WATER.viscous_time
    h = 1e-4
    slope = (np.log(law(t * math.exp(h))) - np.log(law(t * math.exp(-h)))) / (2 * h)
    assert slope == pytest.approx([0.89, 0.86, 0.78, 0.57], abs=0.006)


def test_log_law_outside_its_domain_is_nan():
    r = viscous_log_law([-1.0, 0.0, 2e-3], 1 / math.pi, capillary_speed=1.0, radius=1e-3)
    assert np.isnan(r).all()
    assert np.isnan(power_law([0.0, -1.0], 1.0, 0.5)).all()


def test_harmonic_blend_tends_to_each_law():
    # Source: docs/physics.md §3: r⁻¹ = r_v⁻¹ + r_i⁻¹ follows the viscous law well
    # before the crossover and the inertial law well after it.
    t = np.array([1e-14, 1e-2])
    viscous = regime("inertially-limited-viscous").law(WATER)(t)
    inertial = regime("inertial").law(WATER)(t)
    blend = harmonic_blend(viscous, inertial)
    # The relative deviation is the ratio of the two laws, r_small / r_large.
    assert blend[0] == pytest.approx(viscous[0], rel=2 * viscous[0] / inertial[0])
    assert blend[1] == pytest.approx(inertial[1], rel=2 * inertial[1] / viscous[1])
    assert inertial[1] / viscous[1] < 3e-3 and viscous[0] / inertial[0] < 1e-3


def test_free_exponent():
    law = regime("inertial-spreading").law(WATER)
    assert law([1.0], 1.0, 0.4)[0] == pytest.approx(regime("inertial-spreading").group(WATER))


def test_candidates_for_water_and_glycerol():
    # Source: docs/physics.md §3: water (Oh = 0.0037) goes ILV → inertial; glycerol
    # (Oh = 5, Oh R ≈ 5 mm > R) never reaches inertia and is viscous.
    water = {c.regime.key: c.plausible for c in candidates(WATER, "coalescence")}
    assert water["inertial"] and water["inertially-limited-viscous"] and not water["viscous"]
    glycerol = {c.regime.key: c.plausible for c in candidates(GLYCEROL, "coalescence")}
    assert glycerol["viscous"] and not glycerol["inertial"]
    spreading = {c.regime.key for c in candidates(WATER, "spreading", "bottom")}
    assert {"inertial-spreading", "tanner", "gravity-spreading"} <= spreading
    assert not any(
        c.plausible for c in candidates(WATER, "spreading") if c.regime.key == "diffusive"
    )


def test_candidates_with_an_outer_fluid():
    # Source: Nat. Commun. 5, 3182 (2014) via docs/physics.md §2 A4–A5 (V): air
    # bubbles in a viscous oil are outer-viscous (Oh_out ≥ 0.77), in a thin oil
    # outer-inertial. Values: air 1.8e-5 Pa s, 1.2 kg/m^3; oils from §5.4.
    def bubble(eta_oil):
        return sample_numbers(
            surface_tension=0.021,
            viscosity=1.8e-5,
            density=1.2,
            radius=0.94e-3,
            outer_viscosity=eta_oil,
            outer_density=965.0,
        )

    thick = {c.regime.key: c.plausible for c in candidates(bubble(0.97), "coalescence")}
    thin = {c.regime.key: c.plausible for c in candidates(bubble(0.00935), "coalescence")}
    assert thick["viscous-outer"] and not thick["inertial-outer"] and not thick["inertial"]
    assert thin["inertial-outer"] and not thin["viscous-outer"]


def test_sessile_laws_need_the_contact_angle():
    # Source: docs/physics.md §2 B1–B2: h0 ∝ (γθ⁴/η) t; t^2/3 only for θ < 90°.
    assert regime("viscous-sessile").group(WATER) is None
    with pytest.raises(ExperimentError, match="contact angle"):
        regime("viscous-sessile").law(WATER)
    wetting = sample_numbers(
        surface_tension=0.0634, viscosity=1.414, density=1261.1, radius=1e-3, contact_angle=0.5
    )
    assert regime("viscous-sessile").group(wetting) == pytest.approx(0.0634 * 0.5**4 / 1.414)
    steep = sample_numbers(
        surface_tension=0.07, viscosity=1e-3, density=1000.0, radius=1e-3, contact_angle=2.0
    )
    found = {c.regime.key: c.plausible for c in candidates(steep, "sessile-coalescence")}
    assert not found["inertial-sessile"]


def test_bad_choices():
    with pytest.raises(ExperimentError, match="unknown regime.*one of viscous"):
        regime("stokes")
    with pytest.raises(ExperimentError, match="geometry.*coalescence or sessile-coalescence"):
        candidates(WATER, "merging")


def test_blended_law_is_half_of_each_at_the_crossover():
    # Derived (D): at the matched crossover both laws give r_c, so the harmonic
    # blend gives r_c / 2 there (docs/physics.md §3's r⁻¹ = r_v⁻¹ + r_i⁻¹).
    from dropkin.fitting import blended_law
    from dropkin.scaling import crossovers

    (c,) = [c for c in crossovers(WATER, "coalescence") if c.late == "inertial"]
    blend = blended_law(
        regime("inertially-limited-viscous").law(WATER), regime("inertial").law(WATER)
    )
    assert blend([c.time])[0] == pytest.approx(c.radius / 2, rel=1e-9)
    assert {r: r.code for r in REGIMES}[regime("tanner")] == "C4"  # records are hashable
