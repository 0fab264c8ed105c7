"""The sample options (``--liquid``, ``--temperature``, ``--drop-radius``, ``--medium``,
``--liquids``) on measure, fit, analyze and info, through the real command line.

The numbers are checked against the inertial law's own scale: in the
inertial regime r = C (γR/ρ)^(1/4) t^(1/2) (Eggers, Lister & Stone,
J. Fluid Mech. 401, 293 (1999)), so for the same radius data the coefficient
C found with two liquids differs by the fourth root of the ratio of their
γ/ρ. The liquid values are the library's; they are also compared with
handbook values at 20 °C, water 72.75 mN/m and 998.2 kg/m³, ethanol
22.39 mN/m and 789.3 kg/m³ (CRC Handbook of Chemistry and Physics, from
memory).
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest
from click.testing import CliRunner

from dropkin.cli import main
from dropkin.liquids import liquid_properties

SAMPLES = Path(__file__).resolve().parents[1] / "sample_frames"

# The sample's frames, described without its liquid and its drop radius.
BARE = """
[recording]
frame_rate = "60000 Hz"
pixel_size = "20 um"

[setup]
geometry = "coalescence"
view = "side"
"""
# The same, with the liquid and the radius the options give in the tests.
FULL = (
    BARE
    + """
[liquid]
name = "water"
temperature = "20 degC"

[drops]
radius = "1 mm"
"""
)
OPTIONS = ("--liquid", "water", "--temperature", "20 degC", "--drop-radius", "1 mm")
QUICK = ("--bootstrap", "40", "--overlays", "0")


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)


def _error_line(result) -> str:
    return [line for line in result.output.splitlines() if line.startswith("dropkin: error")][0]


def _shot(folder: Path, experiment: str) -> Path:
    folder.mkdir(parents=True)
    shutil.copy(SAMPLES / "fast_pair.tif", folder / "shot.tif")
    (folder / "shot.toml").write_text(experiment, encoding="utf-8")
    return folder / "shot.tif"


def _fit(out: Path) -> dict:
    return json.loads((out / "fit.json").read_text(encoding="utf-8"))


def _without_given(fit: dict) -> dict:
    """fit.json without what differs between runs by design: the values as given and
    the run record (command line, time)."""
    fit = json.loads(json.dumps(fit))
    del fit["settings"]["sample"]["given"]
    fit.pop("provenance", None)
    return fit


@pytest.fixture(scope="module")
def analysed(tmp_path_factory):
    """The sample analysed with the liquid and radius in the experiment file."""
    root = tmp_path_factory.mktemp("full")
    shot = _shot(root / "rec", FULL)
    result = _run("analyze", shot, "-o", root / "out", *QUICK)
    assert result.exit_code == 0, result.output
    return root / "out"


def test_options_give_the_numbers_of_the_experiment_file(tmp_path, analysed):
    shot = _shot(tmp_path / "rec", BARE)
    result = _run("analyze", shot, "-o", tmp_path / "out", *OPTIONS, *QUICK)
    assert result.exit_code == 0, result.output
    by_options, by_file = _fit(tmp_path / "out"), _fit(analysed)
    assert by_options["success"] and by_options["dominant"]["regime"] == "inertial"
    assert _without_given(by_options) == _without_given(by_file)
    # the options' values as given, in both files' provenance
    given = {"liquid.name": "water", "liquid.temperature": "20 degC", "drops.radius": "1 mm"}
    measured = json.loads((tmp_path / "out" / "measure.json").read_text(encoding="utf-8"))
    assert measured["provenance"]["sample_overrides"] == given
    assert by_options["settings"]["sample"]["given"] == given
    assert by_file["settings"]["sample"]["given"] == {}


def test_python_api_gives_the_numbers_of_the_command_line(tmp_path, analysed):
    from dropkin.pipeline import AnalysisSettings, analyze_into

    shot = _shot(tmp_path / "rec", BARE)
    overrides = {"liquid.name": "water", "liquid.temperature": "20 degC", "drops.radius": "1 mm"}
    analyze_into(
        shot, tmp_path / "out", AnalysisSettings(bootstrap=40, overlays=0), overrides=overrides
    )
    assert _without_given(_fit(tmp_path / "out")) == _without_given(_fit(analysed))


def _inertial(fit: dict) -> dict:
    return next(c for c in fit["candidates"] if c["regime"] == "inertial")


def test_fit_with_another_liquid_scales_the_coefficient_by_the_inertial_scale(tmp_path, analysed):
    result = _run(
        "fit", analysed / "radius.csv", "-o", tmp_path / "ethanol", "--liquid", "ethanol"
    )
    assert result.exit_code == 0, result.output
    water, ethanol = _inertial(_fit(analysed)), _inertial(_fit(tmp_path / "ethanol"))
    assert ethanol["prefactor_fit"] == pytest.approx(water["prefactor_fit"], rel=1e-9)
    w, e = liquid_properties("water", 293.15), liquid_properties("ethanol", 293.15)
    # C = A / (γR/ρ)^(1/4): the same A over a smaller scale for ethanol
    factor = ((w.surface_tension / w.density) / (e.surface_tension / e.density)) ** 0.25
    handbook = ((72.75e-3 / 998.2) / (22.39e-3 / 789.3)) ** 0.25  # CRC values (from memory)
    assert factor == pytest.approx(handbook, rel=0.005)
    assert factor == pytest.approx(1.266, abs=0.003)  # well away from 1: the test can fail
    ratio = ethanol["coefficient_fit"] / water["coefficient_fit"]
    assert ratio == pytest.approx(factor, rel=1e-6)
    assert ethanol["prefactor_ratio"] / water["prefactor_ratio"] == pytest.approx(factor, rel=1e-6)
    sample = _fit(tmp_path / "ethanol")["settings"]["sample"]
    assert sample["given"] == {"liquid.name": "ethanol"}
    assert sample["liquid"]["name"] == "ethanol"
    assert sample["liquid"]["surface_tension_n_per_m"] == pytest.approx(e.surface_tension)


def test_fit_applies_the_sample_options_measure_recorded(tmp_path):
    shot = _shot(tmp_path / "rec", BARE)
    out = tmp_path / "out"
    args = ("--liquid", "ethanol", "--temperature", "25 degC", "--drop-radius", "1 mm")
    result = _run("measure", shot, "-o", out, *args, "--overlays", "0")
    assert result.exit_code == 0, result.output
    result = _run("fit", out / "radius.csv", "-o", out, "--bootstrap", "40")
    assert result.exit_code == 0, result.output
    sample = _fit(out)["settings"]["sample"]
    assert sample["given"]["liquid.name"] == "ethanol"
    assert sample["liquid"]["temperature_k"] == pytest.approx(298.15)
    expected = liquid_properties("ethanol", 298.15)
    assert sample["liquid"]["density_kg_per_m3"] == pytest.approx(expected.density)
    # an option of fit's own wins over the recorded one
    result = _run("fit", out / "radius.csv", "-o", out, "--temperature", "30 degC", *QUICK[:2])
    assert result.exit_code == 0, result.output
    sample = _fit(out)["settings"]["sample"]
    assert sample["liquid"]["name"] == "ethanol"
    assert sample["liquid"]["temperature_k"] == pytest.approx(303.15)


@pytest.mark.parametrize(
    ("command", "args", "pieces"),
    [
        ("analyze", ("--liquid", "watr"), ("--liquid = 'watr'", "did you mean water?")),
        ("measure", ("--liquid", "etanol"), ("--liquid = 'etanol'", "did you mean ethanol?")),
        (
            "analyze",
            ("--liquid", "ethanol", "--temperature", "70 degC"),
            ("--temperature = '70 degC'", "0 °C to 60 °C"),
        ),
        ("analyze", ("--liquid", "glycerol-water"), ("--glycerol-mass-fraction", "is needed")),
        ("measure", ("--medium", "vacuum"), ("--medium = 'vacuum'", "unknown liquid")),
    ],
)
def test_a_bad_sample_option_is_one_line_naming_it(tmp_path, command, args, pieces):
    shot = _shot(tmp_path / "rec", FULL)
    result = _run(command, shot, "-o", tmp_path / "out", *args)
    assert result.exit_code == 1
    line = _error_line(result)
    assert all(piece in line for piece in pieces), line
    assert "shot.toml" not in line  # the option is at fault, not the file
    assert not (tmp_path / "out").exists()  # refused before measuring
    assert "Traceback" not in result.output


def test_fit_refuses_an_unknown_liquid_naming_the_option(tmp_path, analysed):
    result = _run("fit", analysed / "radius.csv", "-o", tmp_path / "x", "--liquid", "ethanal")
    assert result.exit_code == 1
    assert "--liquid = 'ethanal'" in _error_line(result)
    assert "did you mean ethanol?" in _error_line(result)


def test_temperature_in_the_wrong_unit_is_a_usage_error(tmp_path):
    shot = _shot(tmp_path / "rec", FULL)
    result = _run("analyze", shot, "-o", tmp_path / "out", "--temperature", "20 kg")
    assert result.exit_code == 2
    assert "--temperature" in result.output


LIBRARY = """
[liquid."bench-oil"]
description = "an oil as measured on the bench (invented for this test)"
surface_tension = "21 mN/m"
viscosity = "20 mPa*s"
density = "950 kg/m^3"
temperature_min = "15 degC"
temperature_max = "30 degC"
"""


def test_a_user_library_serves_analyze_then_fit(tmp_path):
    shot = _shot(tmp_path / "rec", BARE)
    library = tmp_path / "liquids.toml"
    library.write_text(LIBRARY, encoding="utf-8")
    out = tmp_path / "out"
    args = ("--liquids", library, "--liquid", "bench-oil", "--drop-radius", "1 mm")
    result = _run("analyze", shot, "-o", out, *args, *QUICK)
    assert result.exit_code in (0, 1), result.output  # the verdict may be undecided
    sample = _fit(out)["settings"]["sample"]
    assert sample["liquid"]["viscosity_pa_s"] == pytest.approx(0.020)
    assert sample["liquids_file"] == str(library.resolve())
    measured = json.loads((out / "measure.json").read_text(encoding="utf-8"))
    # paths in measure.json count from the output folder (the provenance's rule)
    named = measured["provenance"]["liquids_file"]
    assert (out / named).resolve() == library.resolve()
    # fit finds the library measure.json names; out of its range it refuses
    result = _run("fit", out / "radius.csv", "-o", out, "--temperature", "40 degC")
    assert result.exit_code == 1
    assert "--temperature = '40 degC'" in _error_line(result) and "bench-oil" in _error_line(
        result
    )
    library.unlink()
    result = _run("fit", out / "radius.csv", "-o", out)
    assert result.exit_code == 1
    assert "liquids_file" in _error_line(result) and "--liquids" in _error_line(result)


def test_info_shows_the_liquid_an_option_names(tmp_path):
    shot = _shot(tmp_path / "rec", FULL)
    result = _run("info", shot, "--liquid", "ethanol", "--temperature", "25 degC", "--json")
    assert result.exit_code == 0, result.output
    liquid = json.loads(result.output)["liquid"]
    expected = liquid_properties("ethanol", 298.15)
    assert liquid["name"] == "ethanol"
    assert liquid["surface_tension_n_per_m"] == pytest.approx(expected.surface_tension)


def test_naming_another_liquid_replaces_the_files_values():
    from dropkin.experiment import experiment_from_toml

    exp = experiment_from_toml(
        '[liquid]\nname = "glycerol-water"\nglycerol_mass_fraction = 0.85\n'
        'temperature = "25 degC"\nviscosity = "110 mPa*s"\n'
        '[uncertainty]\nviscosity = "3 %"\nradius = "1 %"\n'
    )
    other = exp.with_overrides({"liquid.name": "ethanol"})
    assert other.liquid.name == "ethanol"
    assert other.liquid.viscosity is None and other.liquid.glycerol_mass_fraction is None
    assert other.liquid.temperature == pytest.approx(298.15)  # the experiment's, kept
    assert other.uncertainty.viscosity is None and other.uncertainty.radius == 0.01
    same = exp.with_overrides({"liquid.name": "Glycerol-Water"})
    assert same.liquid.viscosity == pytest.approx(0.110)
    given = exp.with_overrides({"liquid.name": "ethanol", "liquid.viscosity": "1.2 mPa*s"})
    assert given.liquid.viscosity == pytest.approx(1.2e-3)


def test_a_batch_uses_the_manifests_liquid_library(tmp_path):
    root = tmp_path / "campaign"
    _shot(root / "rec", BARE)
    library = root / "liquids.toml"
    library.write_text(LIBRARY, encoding="utf-8")
    (root / "m.toml").write_text(
        '[shared]\nliquids = "liquids.toml"\nanalysis = { bootstrap = 40, overlays = 0 }\n'
        '[[recordings]]\npath = "rec/shot.tif"\nliquid = "bench-oil"\ndrop_radius = "1 mm"\n',
        encoding="utf-8",
    )
    out = tmp_path / "out"
    result = _run("batch", root / "m.toml", "-o", out)
    assert result.exit_code in (0, 3), result.output
    sample = _fit(out / "shot")["settings"]["sample"]
    assert sample["liquid"]["name"] == "bench-oil"
    assert sample["liquid"]["surface_tension_n_per_m"] == pytest.approx(0.021)
    assert sample["liquids_file"] == str(library.resolve())
    # the library enters the settings hash: a changed value is analysed again
    before = (out / "shot" / "fit.json").stat().st_mtime_ns
    library.write_text(LIBRARY.replace("21 mN/m", "25 mN/m"), encoding="utf-8")
    result = _run("batch", root / "m.toml", "-o", out)
    assert result.exit_code in (0, 3), result.output
    assert (out / "shot" / "fit.json").stat().st_mtime_ns != before
    sample = _fit(out / "shot")["settings"]["sample"]
    assert sample["liquid"]["surface_tension_n_per_m"] == pytest.approx(0.025)


def test_predict_with_another_liquid_drops_the_files_values():
    # viscous_pair's file describes 85 wt % glycerol-water at 21 °C, R = 1 mm
    result = _run("predict", SAMPLES / "viscous_pair", "--liquid", "ethanol", "--json")
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    assert data["sample"]["liquid"]["name"] == "ethanol"
    assert data["sample"]["liquid"]["glycerol_mass_fraction"] is None
    e = liquid_properties("ethanol", 294.15)
    ohnesorge = e.viscosity / (e.density * e.surface_tension * 1e-3) ** 0.5  # Oh = η/√(ργR)
    assert data["numbers"]["ohnesorge"] == pytest.approx(ohnesorge, rel=1e-9)
