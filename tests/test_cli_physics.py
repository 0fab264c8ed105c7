"""``dropkin predict`` and ``dropkin liquids``: exit codes, one-line errors, numbers.

The sample is invented: a bench mixture of 85 wt % glycerol in water at
21 °C, drops of 1 mm radius filmed from the side.
"""

import json

import pytest
from click.testing import CliRunner

from dropkin.cli import main

EXPERIMENT = """
[recording]
frame_rate = "20 kHz"
pixel_size = "5 um"

[setup]
geometry = "coalescence"

[liquid]
name = "glycerol-water"
glycerol_mass_fraction = 0.85
temperature = "21 degC"

[drops]
radius = "1.0 mm"
"""


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


def _error_line(result):
    """The stderr of a failed run: exactly one line, no traceback."""
    assert result.exit_code == 1, result.output
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1, result.stderr
    assert "Traceback" not in result.output
    return lines[0]


@pytest.fixture
def folder(tmp_path):
    path = tmp_path / "pair"
    path.mkdir()
    (path / "experiment.toml").write_text(EXPERIMENT, encoding="utf-8")
    return path


def test_liquids_lists_the_library():
    result = _run("liquids")
    assert result.exit_code == 0, result.output
    for name in ("water", "glycerol-water", "ethanol", "silicone-oil-100cSt", "air"):
        assert name in result.stdout
    assert "0 °C to 100 °C" in result.stdout


def test_liquids_shows_one_liquid_in_si_json():
    # Source: docs/physics.md §5.1 at 25 °C: 997.048 kg/m^3, 0.8900 mPa s (IAPWS via
    # CoolProp, C) and 71.97 mN/m (IAPWS R1-76, C); 0.05 % / 0.2 % / 0.01 mN/m.
    result = _run("liquids", "water", "--temperature", "25 degC", "--json")
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    assert data["temperature_k"] == pytest.approx(298.15)
    assert data["density_kg_per_m3"] == pytest.approx(997.048, rel=5e-4)
    assert data["viscosity_pa_s"] == pytest.approx(0.8900e-3, rel=2e-3)
    assert data["surface_tension_n_per_m"] == pytest.approx(71.97e-3, abs=1e-5)
    assert "IAPWS" in data["sources"]["surface_tension"]


def test_liquids_mixture_text():
    # Source: docs/physics.md §5.5 (C): Cheng gives 156.3 mPa s for 90 wt % at 25 °C.
    result = _run(
        "liquids", "glycerol-water", "--temperature", "25 degC", "--glycerol-mass-fraction", "0.9"
    )
    assert result.exit_code == 0, result.output
    assert "156.3 mPa s" in result.stdout and "Ind. Eng. Chem. Res. 47, 3285" in result.stdout
    assert "±2 %" in result.stdout  # the viscosity's stated uncertainty


def test_liquids_user_file(tmp_path):
    lib = tmp_path / "mine.toml"
    lib.write_text(
        '[liquid."bench-oil"]\nviscosity = "50 mPa*s"\ndensity = "960 kg/m^3"\n', encoding="utf-8"
    )
    result = _run("liquids", "--liquids", lib, "--json")
    assert result.exit_code == 0, result.output
    names = [row["name"] for row in json.loads(result.stdout)]
    assert "bench-oil" in names and "water" in names


def test_predict_from_a_folder(folder):
    result = _run("predict", folder)
    assert result.exit_code == 0, result.output
    out = result.stdout
    assert "glycerol-water (85 wt % glycerol) at 21 °C in air" in out
    assert "viscous → inertial" in out and "Recording plan" in out
    assert "your recording" in out  # 20 kHz and 5 µm come from the file


def test_predict_json_from_options():
    # The same invented sample from options only; numbers checked against the
    # library and docs/physics.md §3's crossover formula (D).
    result = _run(
        "predict",
        "--liquid", "glycerol-water",
        "--glycerol-mass-fraction", "0.85",
        "--temperature", "21 degC",
        "--drop-radius", "1 mm",
        "--json",
    )  # fmt: skip
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    numbers = data["numbers"]
    assert numbers["radius_m"] == pytest.approx(1e-3)
    oh = numbers["ohnesorge"]
    assert 0.3 < oh < 0.45  # η ≈ 0.10 Pa s, ρ ≈ 1220 kg/m^3, γ ≈ 66 mN/m
    (crossing,) = [c for c in data["crossovers"] if c["to"] == "inertial"]
    assert crossing["radius_m"] == pytest.approx(1.2**2 * oh * 1e-3, rel=1e-6)  # D0 = 1.2
    lo, hi = crossing["radius_range_m"]
    # D0 in 1.0–1.7 and C_v in 0.5–2 (docs/physics.md §3): r_c = (D0²/C_v) Oh R.
    assert lo == pytest.approx(0.5 * oh * 1e-3) and hi == pytest.approx(1.7**2 / 0.5 * oh * 1e-3)
    expected = {r["regime"] for r in data["regimes"] if r["expected"]}
    # Issue 14: Oh ≈ 0.4 opens in the ILV stage (PNAS 109, 6857, 2012); the Stokes log law
    # needs t ≳ R²/ν, a neck far beyond R/(eπ) here, so it is not expected.
    assert "inertially-limited-viscous" in expected and "viscous" not in expected
    assert data["sample"]["medium"]["name"] == "air"
    assert data["plan"]["frame_rate_hz"] > 0 and data["plan"]["pixel_size_m"] > 0
    assert any("coalescence assumed" in note for note in data["notes"])


def test_predict_explicit_values_and_spreading(folder):
    result = _run(
        "predict", folder, "--geometry", "spreading", "--viscosity", "200 mPa*s", "--json"
    )
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    assert data["numbers"]["viscosity_pa_s"] == pytest.approx(0.2)
    assert {r["regime"] for r in data["regimes"]} >= {"tanner", "gravity-spreading"}


@pytest.mark.parametrize(
    ("args", "match"),
    [
        (
            [
                "--liquid",
                "glycerol-water",
                "--glycerol-mass-fraction",
                "1.5",
                "--drop-radius",
                "1 mm",
            ],
            "must lie between 0 and 1",
        ),
        (
            ["--liquid", "water", "--temperature", "150 degC", "--drop-radius", "1 mm"],
            "water at 150 °C is outside",
        ),
        (["--liquid", "watr", "--drop-radius", "1 mm"], "unknown liquid.*one of air, ethanol"),
        (["--liquid", "water"], "drops.radius: is not known"),
    ],
)
def test_predict_bad_input_is_one_line(args, match):
    import re

    line = _error_line(_run("predict", *args))
    assert line.startswith("dropkin: error: ")
    assert re.search(match, line), line


def test_predict_negative_quantity_is_a_usage_error_naming_the_option():
    # Like click's own range errors (FloatRange): exit code 2, the option named.
    result = _run("predict", "--viscosity=-1 mPa*s", "--liquid", "water", "--drop-radius", "1 mm")
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output
    assert "--viscosity = '-1 mPa*s': must be positive" in result.stderr.splitlines()[-1]


@pytest.mark.parametrize(
    ("args", "match"),
    [
        (["watr"], "one of air, ethanol, glycerol"),
        (["water", "--temperature", "150 degC"], "0 °C to 100 °C"),
        (["glycerol-water", "--glycerol-mass-fraction", "-0.2"], "must lie between 0 and 1"),
    ],
)
def test_liquids_bad_input_is_one_line(args, match):
    assert match in _error_line(_run("liquids", *args))


def test_bad_user_library_is_one_line(tmp_path):
    lib = tmp_path / "bad.toml"
    lib.write_text(
        '[liquid."x"]\nviscosity = "-5 mPa*s"\ndensity = "1 kg/m^3"\n', encoding="utf-8"
    )
    line = _error_line(_run("liquids", "--liquids", lib))
    assert str(lib) in line and "must be positive" in line
