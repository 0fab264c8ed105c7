"""The experiment file: discovery, validation, SI conversion, overrides.

The file format is the contract in docs/architecture.md; the conversions are SI
prefix definitions (BIPM SI Brochure, 9th ed.) and 0 degC = 273.15 K.
"""

import dataclasses
import math

import pytest

from dropkin.errors import ExperimentError, QuantityError
from dropkin.experiment import (
    Experiment,
    experiment_from_toml,
    find_experiment_file,
    load_experiment,
    read_experiment,
)

DESIGN_EXAMPLE = """
[recording]
frame_rate = "20000 Hz"
pixel_size = "5 um"

[setup]
geometry = "coalescence"
view = "side"

[liquid]
name = "glycerol-water"
glycerol_mass_fraction = 0.85
temperature = "21 degC"
surface_tension = "63 mN/m"
viscosity = "110 mPa*s"
density = "1220 kg/m^3"

[medium]
viscosity = "0.018 mPa*s"
density = "1.2 kg/m^3"

[drops]
radius = "1.0 mm"
"""


def test_the_design_example_becomes_si_floats():
    exp = experiment_from_toml(DESIGN_EXAMPLE)
    assert exp.recording.frame_rate == 20000.0
    assert math.isclose(exp.recording.pixel_size, 5e-6, rel_tol=1e-12)
    assert (exp.setup.geometry, exp.setup.view) == ("coalescence", "side")
    liquid = exp.liquid
    assert liquid.name == "glycerol-water"
    assert liquid.glycerol_mass_fraction == 0.85
    assert math.isclose(liquid.temperature, 294.15, rel_tol=1e-12)
    assert math.isclose(liquid.surface_tension, 0.063, rel_tol=1e-12)
    assert math.isclose(liquid.viscosity, 0.110, rel_tol=1e-12)
    assert liquid.density == 1220.0
    assert math.isclose(exp.medium.viscosity, 1.8e-5, rel_tol=1e-12)
    assert math.isclose(exp.drops.radius, 1e-3, rel_tol=1e-12)


def test_experiment_is_frozen():
    exp = experiment_from_toml(DESIGN_EXAMPLE)
    with pytest.raises(dataclasses.FrozenInstanceError):
        exp.recording.frame_rate = 1.0  # type: ignore[misc]


def test_defaults_when_sections_are_absent():
    exp = experiment_from_toml("")
    assert exp.recording.frame_rate is None
    assert exp.recording.first_frame == 0 and exp.recording.last_frame is None
    assert exp.setup.view == "side" and exp.setup.geometry is None
    assert exp.medium.name == "air"


@pytest.mark.parametrize(
    ("text", "pattern"),
    [
        (
            '[liquid]\nsurface_tension = "72 m/s"',
            r"liquid\.surface_tension = '72 m/s'.*N/m",
        ),
        (
            "[recording]\nframe_rate = 20000",
            r"recording\.frame_rate = 20000.*bare number.*Hz",
        ),
        ('[recording]\nframe_rate = "-5 Hz"', r"recording\.frame_rate.*positive"),
        ('[recording]\nframe_rate = "0 Hz"', r"recording\.frame_rate.*positive"),
        ('[recording]\nframe_rate = "nan Hz"', r"recording\.frame_rate"),
        ('[recording]\npixel_size = "inf um"', r"recording\.pixel_size"),
        ('[recording]\npixel_size = "-2 um"', r"recording\.pixel_size.*positive"),
        (
            '[recording]\nfram_rate = "1 kHz"',
            r"recording\.fram_rate: unknown key.*frame_rate",
        ),
        ('[liquids]\nname = "water"', r"liquids.*unknown section.*liquid"),
        ('[setup]\ngeometry = "merging"', r"setup\.geometry.*coalescence or spreading"),
        ('[setup]\nview = "top"', r"setup\.view.*side or bottom"),
        (
            "[liquid]\nglycerol_mass_fraction = 1.5",
            r"glycerol_mass_fraction.*between 0 and 1",
        ),
        ("[recording]\nfirst_frame = -1", r"recording\.first_frame"),
        (
            "[recording]\nfirst_frame = 5\nlast_frame = 2",
            r"recording\.last_frame.*before",
        ),
        ('recording = "fast"', r"recording.*must be a table"),
        ('[drops]\nradius = "1 mm/s"', r"drops\.radius.*dimension"),
        ('[liquid]\ntemperature = "-300 degC"', r"liquid\.temperature.*above 0 K"),
    ],
)
def test_bad_values_are_refused_naming_the_key(tmp_path, text, pattern):
    path = tmp_path / "experiment.toml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(ExperimentError, match=pattern) as info:
        read_experiment(path)
    assert str(path) in str(info.value)
    assert "\n" not in str(info.value)


def test_quantity_errors_are_experiment_errors():
    with pytest.raises(QuantityError):
        experiment_from_toml('[liquid]\ndensity = "3 s"')


def test_malformed_toml_names_the_file(tmp_path):
    path = tmp_path / "experiment.toml"
    path.write_text('[recording\nframe_rate = "1 Hz"', encoding="utf-8")
    with pytest.raises(ExperimentError, match=r"experiment\.toml: is not valid TOML"):
        read_experiment(path)


def test_non_utf8_file_is_refused(tmp_path):
    path = tmp_path / "experiment.toml"
    path.write_bytes(b"\xff\xfe[recording]")
    with pytest.raises(ExperimentError, match="UTF-8"):
        read_experiment(path)


def test_percent_mass_fraction_is_accepted():
    exp = experiment_from_toml('[liquid]\nglycerol_mass_fraction = "85 %"')
    assert math.isclose(exp.liquid.glycerol_mass_fraction, 0.85, rel_tol=1e-12)


def test_discovery_inside_a_folder_and_beside_a_file(tmp_path):
    folder = tmp_path / "shot1"
    folder.mkdir()
    (folder / "experiment.toml").write_text('[recording]\nframe_rate = "1 kHz"')
    assert find_experiment_file(folder) == folder / "experiment.toml"
    stack = tmp_path / "shot2.tif"
    stack.write_bytes(b"")
    assert find_experiment_file(stack) is None
    (tmp_path / "shot2.toml").write_text('[recording]\nframe_rate = "2 kHz"')
    assert find_experiment_file(stack) == tmp_path / "shot2.toml"
    assert load_experiment(stack).recording.frame_rate == 2000.0
    assert load_experiment(folder).recording.frame_rate == 1000.0


def test_named_file_wins_over_discovery_and_must_exist(tmp_path):
    folder = tmp_path / "shot"
    folder.mkdir()
    (folder / "experiment.toml").write_text('[recording]\nframe_rate = "1 kHz"')
    other = tmp_path / "other.toml"
    other.write_text('[recording]\nframe_rate = "3 kHz"')
    assert load_experiment(folder, experiment=other).recording.frame_rate == 3000.0
    with pytest.raises(ExperimentError, match="no such experiment file"):
        load_experiment(folder, experiment=tmp_path / "missing.toml")


def test_no_file_gives_an_empty_experiment(tmp_path):
    exp = load_experiment(tmp_path)
    assert exp == Experiment()
    assert exp.path is None


def test_overrides_take_precedence_and_are_validated(tmp_path):
    exp = experiment_from_toml(DESIGN_EXAMPLE)
    new = exp.with_overrides(
        {
            "recording.frame_rate": 1.0e5,
            "setup.view": "bottom",
            "recording.pixel_size": None,
        }
    )
    assert new.recording.frame_rate == 1.0e5 and new.setup.view == "bottom"
    assert new.recording.pixel_size == exp.recording.pixel_size
    assert exp.recording.frame_rate == 20000.0  # the original is unchanged
    assert exp.with_overrides({"drops.radius": "2 mm"}).drops.radius == pytest.approx(2e-3)
    with pytest.raises(ExperimentError, match=r"recording\.frame_rate.*positive"):
        exp.with_overrides({"recording.frame_rate": -1.0})
    with pytest.raises(ExperimentError, match=r"recording\.speed.*unknown"):
        exp.with_overrides({"recording.speed": 1.0})


@pytest.mark.parametrize(
    ("name", "command"),
    [
        ("experiment.toml", ["info", "{dir}", "--frame-rate", "1 kHz"]),
        ("liquids.toml", ["liquids", "--liquids", "{file}"]),
        ("campaign.toml", ["batch", "{file}", "-o", "{dir}/out"]),
    ],
)
def test_deeply_nested_toml_is_one_line_naming_the_file(tmp_path, name, command):
    # Issue 17, finding 10: Python's TOML parser recurses once per nesting level; 5000
    # levels of arrays exhaust its stack (RecursionError). Every file dropkin reads
    # gives one line naming the file instead, exit 1 (a bad input file).
    import subprocess
    import sys

    from PIL import Image

    Image.new("L", (8, 8), 200).save(tmp_path / "frame_0000.png")
    Image.new("L", (8, 8), 200).save(tmp_path / "frame_0001.png")
    path = tmp_path / name
    path.write_text("x = " + "[" * 5000 + "]" * 5000 + "\n", encoding="utf-8")
    args = [a.format(dir=tmp_path, file=path) for a in command]
    done = subprocess.run(
        [sys.executable, "-m", "dropkin", *args], capture_output=True, text=True, timeout=120
    )
    assert "Traceback" not in done.stderr and "RecursionError" not in done.stderr
    lines = done.stderr.strip().splitlines()
    assert done.returncode == 1, done.stderr
    assert len(lines) == 1 and name in lines[0] and "nested too deeply" in lines[0]


def test_sessile_geometry_and_contact_angle_read_and_written_back():
    from dropkin.experiment import experiment_from_toml, experiment_to_toml

    text = '[setup]\ngeometry = "sessile-coalescence"\n[drops]\ncontact_angle = "40 deg"\n'
    exp = experiment_from_toml(text)
    assert exp.setup.geometry == "sessile-coalescence"
    assert exp.drops.contact_angle == pytest.approx(math.radians(40.0))
    assert experiment_from_toml(experiment_to_toml(exp)) == exp


@pytest.mark.parametrize("value", ["40", '"40"', '"200 deg"', '"0 rad"', '"40 m"'])
def test_contact_angle_without_unit_or_out_of_range_is_refused(value):
    from dropkin.experiment import experiment_from_toml

    with pytest.raises(ExperimentError, match="drops.contact_angle"):
        experiment_from_toml(f"[drops]\ncontact_angle = {value}\n")
