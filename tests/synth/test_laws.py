"""Radius laws against the formulas and computed values of docs/physics.md section 2."""

import math

import numpy as np
import pytest

from dropkin.errors import ExperimentError
from dropkin.synth import (
    REGIME_NAMES,
    crossing_time,
    custom_law,
    gravity_spreading_law,
    harmonic_blend,
    ilv_law,
    inertial_law,
    inertial_spreading_law,
    power_law,
    regime_law,
    smooth_blend,
    tanner_law,
    viscous_law,
    viscous_outer_law,
    viscous_spreading_law,
)

WATER = {"surface_tension": 72.74e-3, "density": 998.2}


def test_inertial_law_matches_the_water_numbers_of_physics_md():
    # docs/physics.md A3 (status C, D0 = 1): (gamma R / rho)^(1/4) = 0.0164 m s^-1/2 for
    # water, R = 1 mm; r = 16, 52, 164, 520 um at 1 us, 10 us, 100 us, 1 ms. The notes
    # give each to its last digit, so the tolerance is half a unit of that digit.
    law = inertial_law(drop_radius=1e-3, **WATER)
    times = np.array([1e-6, 1e-5, 1e-4, 1e-3])
    expected = np.array([16e-6, 52e-6, 164e-6, 520e-6])
    half_digit = np.array([0.5e-6, 0.5e-6, 0.5e-6, 5e-6])
    assert np.all(np.abs(law(times) - expected) <= half_digit)
    assert (WATER["surface_tension"] * 1e-3 / WATER["density"]) ** 0.25 == pytest.approx(
        0.0164, abs=5e-5
    )
    assert law.parameters["prefactor"] == 1.0


def test_inertial_prefactor_scales_the_radius():
    base = inertial_law(drop_radius=1e-3, **WATER)
    scaled = inertial_law(drop_radius=1e-3, prefactor=1.4, **WATER)
    assert scaled(1e-4) == pytest.approx(1.4 * base(1e-4), rel=1e-12)


def test_viscous_law_has_the_local_slopes_of_physics_md():
    # docs/physics.md A1 (status C): d ln r / d ln t = 1 + 1/ln(gamma t/(eta R)) is 0.89,
    # 0.86, 0.78, 0.57 at gamma t/(eta R) = 1e-4 ... 1e-1 (two digits: +-0.01).
    gamma, eta, radius = 0.063, 1.4, 1e-3
    law = viscous_law(surface_tension=gamma, viscosity=eta, drop_radius=radius)
    tau = eta * radius / gamma
    for x, slope in zip([1e-4, 1e-3, 1e-2, 1e-1], [0.89, 0.86, 0.78, 0.57], strict=True):
        t1, t2 = x * tau * (1 - 1e-6), x * tau * (1 + 1e-6)
        local = math.log(law(t2) / law(t1)) / math.log(t2 / t1)
        assert local == pytest.approx(slope, abs=0.01)
    # The formula as written in docs/physics.md A1, at one time.
    t = 1e-3 * tau
    assert law(t) == pytest.approx(
        -(gamma * t / (math.pi * eta)) * math.log(gamma * t / (eta * radius))
    )
    # It peaks at t = tau / e, which is where it stops being valid.
    assert law.valid_until == pytest.approx(tau / math.e)


def test_viscous_spreading_uses_the_same_log_form():
    # docs/physics.md C2: the A1 form with the contact radius in place of r.
    kwargs = {"surface_tension": 0.02, "viscosity": 0.1, "drop_radius": 1e-3}
    t = np.geomspace(1e-6, 1e-3, 5)
    np.testing.assert_allclose(viscous_spreading_law(**kwargs)(t), viscous_law(**kwargs)(t))
    assert viscous_spreading_law(**kwargs).name == "viscous-spreading"


def test_viscous_outer_law_formula():
    # docs/physics.md A4v: r = C1 (gamma A t / eta_o)^(1/2), C1 = 1.2 (V).
    law = viscous_outer_law(surface_tension=0.02, outer_viscosity=0.1, drop_radius=1e-3)
    assert law(1e-2) == pytest.approx(1.2 * math.sqrt(0.02 * 1e-3 * 1e-2 / 0.1), rel=1e-12)


def test_inertial_spreading_default_prefactor():
    # docs/physics.md C1: R_c = C (gamma R / rho)^(1/4) t^(1/2), C ~ 1.2 (M, assumed).
    law = inertial_spreading_law(drop_radius=1e-3, **WATER)
    group = (WATER["surface_tension"] * 1e-3 / WATER["density"]) ** 0.25
    assert law(1e-4) == pytest.approx(1.2 * group * 1e-2, rel=1e-12)


@pytest.mark.parametrize(("log_ratio", "prefactor"), [(10, 0.86), (15, 0.83), (20, 0.81)])
def test_tanner_prefactor_matches_physics_md(log_ratio, prefactor):
    # docs/physics.md C4 (status C): C = [(10/(9 L))(4/pi)^3]^(1/10) on (gamma V^3/eta)^(1/10),
    # given to two digits (+-0.005).
    gamma, eta, volume, t = 0.02, 0.1, 4e-9, 3.0
    law = tanner_law(surface_tension=gamma, viscosity=eta, drop_volume=volume, log_ratio=log_ratio)
    c = law(t) / (gamma * volume**3 * t / eta) ** 0.1
    assert c == pytest.approx(prefactor, abs=0.005)


def test_gravity_spreading_prefactor_matches_physics_md():
    # docs/physics.md C5 (D): 0.894 = (1024/(81 pi^3))^(1/8) on (rho g V^3 t/(3 eta))^(1/8),
    # i.e. 0.779 on (rho g V^3 t/eta)^(1/8) (summary table, 3 digits).
    assert (1024 / (81 * math.pi**3)) ** 0.125 == pytest.approx(0.894, abs=5e-4)
    rho, eta, volume, g = 970.0, 0.97, 1e-8, 9.80665
    law = gravity_spreading_law(density=rho, viscosity=eta, drop_volume=volume)
    t = 10.0
    assert law(t) / (rho * g * volume**3 * t / eta) ** 0.125 == pytest.approx(0.779, abs=5e-4)


def test_radius_is_zero_before_and_at_contact():
    law = power_law(prefactor=1.0, exponent=0.5)
    np.testing.assert_array_equal(law(np.array([-1.0, 0.0])), [0.0, 0.0])
    assert law(4.0) == 2.0


def test_harmonic_blend_is_the_harmonic_sum():
    # docs/physics.md section 3: 1/r = 1/r1 + 1/r2.
    fast = power_law(prefactor=1.0, exponent=1.0)
    slow = power_law(prefactor=0.1, exponent=0.5)
    blend = harmonic_blend(fast, slow)
    t = np.geomspace(1e-6, 1.0, 7)
    np.testing.assert_allclose(blend(t), 1 / (1 / t + 1 / (0.1 * np.sqrt(t))), rtol=1e-12)
    # Early the linear law dominates, late the square-root law (crossover at t = 0.01).
    assert blend(1e-8) == pytest.approx(1e-8, rel=1e-3)
    assert blend(1e2) == pytest.approx(0.1 * 10, rel=2e-2)


def test_ilv_law_opens_at_the_capillary_speed():
    # docs/physics.md A2 (PNAS 109, 6857, 2012): r = C (gamma/eta) t. For 85 wt %
    # glycerol-water (gamma = 65.8 mN/m, eta = 100.2 mPa s, invented sample) and C = 1,
    # 1 ms after contact: 0.0658 / 0.1002 * 1e-3 = 656.7 um.
    law = ilv_law(surface_tension=0.0658, viscosity=0.1002)
    assert law(1e-3) == pytest.approx(656.7e-6, abs=0.05e-6)
    assert law.name == "inertially-limited-viscous" and law.parameters["prefactor"] == 1.0
    faster = ilv_law(surface_tension=0.0658, viscosity=0.1002, prefactor=1.5)
    assert faster(1e-3) == pytest.approx(1.5 * law(1e-3), rel=1e-12)


def test_blend_of_ilv_and_inertial_records_the_matching_crossover():
    # docs/physics.md section 3 (D): C (gamma/eta) t = D0 (gamma R/rho)^(1/4) t^(1/2) gives
    # t_c = (D0/C)^2 Oh^2 tau_i and r_c = (D0^2/C) Oh R, with Oh = eta / sqrt(rho gamma R)
    # and tau_i = sqrt(rho R^3 / gamma). Written out here from those formulas.
    gamma, eta, rho, radius, d0 = 0.0658, 0.1002, 1221.0, 2e-3, 1.2
    oh = eta / math.sqrt(rho * gamma * radius)
    t_c = d0**2 * oh**2 * math.sqrt(rho * radius**3 / gamma)
    blend = harmonic_blend(
        ilv_law(surface_tension=gamma, viscosity=eta),
        inertial_law(surface_tension=gamma, density=rho, drop_radius=radius, prefactor=d0),
    )
    assert oh == pytest.approx(0.25, abs=1e-3)
    assert blend.parameters["crossover_time"] == pytest.approx(t_c, rel=1e-9)
    assert blend.parameters["crossover_radius"] == pytest.approx(d0**2 * oh * radius, rel=1e-9)
    # There the blend is half the laws' common radius.
    assert blend(t_c) == pytest.approx(0.5 * d0**2 * oh * radius, rel=1e-9)
    assert blend.parameters["second.prefactor"] == d0


def test_crossing_time_is_none_for_laws_that_never_meet():
    # Two square-root laws with different prefactors are parallel in log-log.
    assert (
        crossing_time(
            power_law(prefactor=1.0, exponent=0.5), power_law(prefactor=2.0, exponent=0.5)
        )
        is None
    )
    assert (
        "crossover_time"
        not in harmonic_blend(
            power_law(prefactor=1.0, exponent=0.5), power_law(prefactor=2.0, exponent=0.5)
        ).parameters
    )


def test_smooth_blend_follows_each_law_far_from_the_crossover():
    first = power_law(prefactor=1.0, exponent=1.0)
    second = power_law(prefactor=0.1, exponent=0.5)
    blend = smooth_blend(first, second, crossover_time=1e-2, sharpness=2.0)
    # Weight of `second` is 1/(1 + (t_c/t)^2): 1e-6 at t = t_c/1000, so ln r moves by
    # 1e-6 * |ln(r2/r1)| < 1e-4.
    assert blend(1e-5) == pytest.approx(first(1e-5), rel=1e-4)
    assert blend(10.0) == pytest.approx(second(10.0), rel=1e-4)
    # At the crossover the weight is 1/2: the geometric mean.
    assert blend(1e-2) == pytest.approx(math.sqrt(first(1e-2) * second(1e-2)), rel=1e-12)


def test_custom_law_wraps_a_callable():
    law = custom_law(lambda t: 3 * t, name="linear", parameters={"speed": 3.0})
    assert law(2.0) == 6.0
    assert law.parameters == {"speed": 3.0}


def test_regime_law_knows_each_name():
    materials = {
        "surface_tension": 0.02,
        "viscosity": 0.01,
        "density": 950.0,
        "outer_viscosity": 1.8e-5,
        "drop_radius": 1e-3,
    }
    for name in REGIME_NAMES:
        law = regime_law(name, **materials)
        assert law.name == name
        assert law(1e-4) > 0


def test_regime_law_refuses_unknown_names_and_fixed_prefactors():
    materials = {
        "surface_tension": 0.02,
        "viscosity": 0.01,
        "density": 950.0,
        "outer_viscosity": 1.8e-5,
        "drop_radius": 1e-3,
    }
    with pytest.raises(ExperimentError, match="not a known regime.*expected viscous"):
        regime_law("sticky", **materials)
    with pytest.raises(ExperimentError, match="prefactor.*fixed by theory"):
        regime_law("viscous", prefactor=2.0, **materials)


def test_laws_refuse_non_positive_materials():
    with pytest.raises(ExperimentError, match="surface_tension = -1.0: must be a positive"):
        inertial_law(surface_tension=-1.0, density=1000.0, drop_radius=1e-3)
