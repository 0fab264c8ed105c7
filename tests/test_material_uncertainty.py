"""Stated uncertainties of the material values and R, from the library or the file, into C.

The coefficient C = A / group of a law has, besides its statistical interval,
a systematic one from the material values: first-order propagation gives the
group's relative uncertainty sqrt(Σ (p_i u_i)²) for powers p_i and relative
uncertainties u_i, and the systematic interval is C (1 ± 1.96 u_group) when
no other systematic (edge level) is known. C/C_published is C divided by a
published constant, so its interval scales the same way.
"""

import math
from statistics import NormalDist

import numpy as np
import pytest

from dropkin.experiment import experiment_from_toml
from dropkin.liquids import liquid_library_from_toml, resolve_fluids, stated_uncertainties
from dropkin.pipeline._fit import Measurement, fit_measurement
from dropkin.scaling import regime, sample_numbers_from_experiment
from dropkin.series import RadiusSeries

Z95 = NormalDist().inv_cdf(0.975)  # 1.95996..., the two-sided 95 % normal quantile

GLYCEROL = """
[setup]
geometry = "coalescence"
[liquid]
name = "glycerol"
temperature = "20 degC"
[drops]
radius = "1 mm"
"""


def _measurement(text, tmp_path):
    """A seeded ELS log-law series (docs/physics.md §2 A1, C = 1/π) for the sample of `text`."""
    raw = experiment_from_toml(text)
    exp = resolve_fluids(raw)
    numbers = sample_numbers_from_experiment(exp)
    law = regime("viscous").law(numbers)
    tau_b = 0.3 * numbers.radius / numbers.capillary_speed
    frame, first, offset = tau_b / 1000, 5, 0.4
    t0 = (first + offset) * frame
    t = np.arange(int((t0 + tau_b) / frame) + 1) * frame
    tau = t - t0
    ok = (tau >= tau_b / 300) & (tau <= tau_b)
    r = np.full(t.size, np.nan)
    r[ok] = law(tau[ok]) + np.random.default_rng(0).normal(0.0, 2e-8, ok.sum())
    status = tuple(np.where(tau <= 0, "before-contact", np.where(ok, "ok", "unresolved")))
    series = RadiusSeries(
        frame=np.arange(t.size),
        time=t,
        radius=r,
        radius_err=np.where(ok, 2e-8, np.nan),
        status=status,
        contact_time=t0,
        contact_time_err=frame / 2,
        drop_radius=1e-3,
        geometry="coalescence",
        view="side",
        frame_rate=1 / frame,
        pixel_size=1e-6,
    )
    return Measurement(series, exp, tmp_path / "radius.csv", stated_uncertainties(raw))


def _viscous(verdict):
    return next(c for c in verdict.candidates if c.key == "viscous")


def test_a_larger_viscosity_uncertainty_widens_the_coefficient_interval_in_proportion(tmp_path):
    # The log law's group is γ/η (powers +1, -1). Glycerol from the library:
    # u_γ = 0.025, u_η = 0.02 -> u_group = sqrt(0.025² + 0.02²) = 0.032016.
    # With the file's u_η = 0.10: u_group = sqrt(0.025² + 0.10²) = 0.103078.
    # The systematic half-widths are z95 C u_group (z95 = 1.95996): ratio 0.103078/0.032016
    # = 3.2196 (R, ρ and the medium do not enter this group).
    library = _measurement(GLYCEROL, tmp_path)
    stated = _measurement(GLYCEROL + '[uncertainty]\nviscosity = "10 %"\n', tmp_path)
    a, _ = fit_measurement(library, bootstrap=50)
    b, _ = fit_measurement(stated, bootstrap=50)
    ca, cb = _viscous(a), _viscous(b)
    assert ca.coefficient_fit == pytest.approx(1 / math.pi, rel=0.02)
    assert cb.coefficient_fit == ca.coefficient_fit  # same data, same fit
    u_a, u_b = math.hypot(0.025, 0.02), math.hypot(0.025, 0.10)
    for c, u in ((ca, u_a), (cb, u_b)):
        lo, hi = c.coefficient_sys_ci
        assert hi - c.coefficient_fit == pytest.approx(Z95 * u * c.coefficient_fit, rel=1e-9)
        assert c.coefficient_fit - lo == pytest.approx(Z95 * u * c.coefficient_fit, rel=1e-9)
    width = lambda c, ci: ci[1] - ci[0]  # noqa: E731
    ratio = width(cb, cb.coefficient_sys_ci) / width(ca, ca.coefficient_sys_ci)
    assert ratio == pytest.approx(3.2196, abs=1e-4)
    # Combined = statistical ⊕ systematic on each side: wider, by less than 3.22x.
    for c in (ca, cb):
        stat_hi = c.coefficient_ci[1] - c.coefficient_fit
        sys_hi = c.coefficient_sys_ci[1] - c.coefficient_fit
        assert c.coefficient_combined_ci[1] - c.coefficient_fit == pytest.approx(
            math.hypot(stat_hi, sys_hi), rel=1e-9
        )
    assert width(cb, cb.coefficient_combined_ci) > width(ca, ca.coefficient_combined_ci)


def test_fit_json_records_each_uncertainty_and_where_it_came_from(tmp_path):
    # The experiment file's u_η overrides the library's 2 %; u_γ stays the
    # library's; R (measured or given without one) takes the stated default.
    m = _measurement(GLYCEROL + '[uncertainty]\nviscosity = "10 %"\n', tmp_path)
    verdict, _ = fit_measurement(m, bootstrap=0)
    used = verdict.settings["material_uncertainty"]
    where = verdict.settings["material_uncertainty_sources"]
    assert used["viscosity"] == 0.10
    assert where["viscosity"] == "experiment file, uncertainty.viscosity"
    assert used["surface_tension"] == 0.025
    assert where["surface_tension"].startswith("liquid library (glycerol): ")
    assert used["density"] == 0.001 and "Exp. Fluids 59, 75 (2018)" in where["density"]
    assert used["outer_viscosity"] == 0.005 and where["outer_viscosity"].startswith(
        "liquid library (air)"
    )
    assert (used["radius"], where["radius"]) == (0.02, "stated default")


def test_values_given_in_the_file_take_the_default_unless_it_states_one():
    # A value written in the file is the user's, not the library's: without
    # an [uncertainty] entry it gets the analysis' stated default (none here).
    text = GLYCEROL.replace('temperature = "20 degC"', 'viscosity = "1.2 Pa*s"')
    stated = stated_uncertainties(experiment_from_toml(text))
    assert "viscosity" not in stated and stated["density"][0] == 0.001
    stated = stated_uncertainties(experiment_from_toml(text + "[uncertainty]\nviscosity = 0.05\n"))
    assert stated["viscosity"] == (0.05, "experiment file, uncertainty.viscosity")


def test_a_user_liquid_states_its_own_uncertainties():
    library = liquid_library_from_toml(
        '[liquid."bench-oil"]\nviscosity = "50 mPa*s"\ndensity = "960 kg/m^3"\n'
        'surface_tension = "20 mN/m"\nuncertainty = { viscosity = "4 %" }\n'
    )
    exp = experiment_from_toml('[liquid]\nname = "bench-oil"\n')
    stated = stated_uncertainties(exp, user_library=library)
    assert stated["viscosity"][0] == 0.04
    assert "density" not in stated  # the file states none for it: the default applies


def test_a_bad_uncertainty_is_refused_with_one_line_naming_the_key():
    from dropkin.errors import ExperimentError

    with pytest.raises(ExperimentError) as info:
        experiment_from_toml('[uncertainty]\nviscosity = "5 mPa*s"\n', path="exp.toml")
    assert str(info.value).startswith("exp.toml: uncertainty.viscosity = '5 mPa*s'")
    assert "\n" not in str(info.value)
