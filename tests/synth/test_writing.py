"""Written recordings: PNG folder, multi-page TIFF, experiment file and truth."""

import json
import math
import tomllib

import cv2
import numpy as np
import pytest
import tifffile

from dropkin._version import __version__
from dropkin.errors import ExperimentError
from dropkin.synth import (
    Camera,
    Coalescence,
    Liquid,
    Sensor,
    Spreading,
    inertial_law,
    synthesize,
    write_recording,
)
from dropkin.units import parse_si

GLYCEROL_WATER = Liquid(
    name="glycerol-water",
    surface_tension=65e-3,
    viscosity=0.1037,
    density=1221.0,
    temperature=294.15,
    glycerol_mass_fraction=0.85,
)


def _recording(setup=None, *, bit_depth=8, frames=6, contact_frame=2.3, liquid=None):
    setup = setup or Coalescence(drop_radius=0.3e-3)
    law = inertial_law(surface_tension=0.0727, density=998.0, drop_radius=setup.effective_radius)
    return synthesize(
        setup,
        law,
        camera=Camera(frame_rate=2e4, pixel_size=10e-6, shape=(48, 140)),
        frames=frames,
        contact_frame=contact_frame,
        sensor=Sensor(bit_depth=bit_depth),
        liquid=liquid,
        seed=11,
    )


def test_png_folder_holds_the_frames_experiment_and_truth(tmp_path):
    rec = _recording()
    out = tmp_path / "run"
    written = write_recording(rec, out)
    names = sorted(p.name for p in out.iterdir())
    assert names == sorted(
        [f"frame_{k:05d}.png" for k in range(6)] + ["experiment.toml", "truth.json"]
    )
    frames = rec.render()
    for k in range(6):
        on_disk = cv2.imread(str(out / f"frame_{k:05d}.png"), cv2.IMREAD_UNCHANGED)
        np.testing.assert_array_equal(on_disk, frames[k])
    assert written.experiment == out / "experiment.toml"
    assert written.format == "png"


def test_twelve_bit_png_frames_keep_their_values(tmp_path):
    rec = _recording(bit_depth=12)
    write_recording(rec, tmp_path / "run12")
    frame = cv2.imread(str(tmp_path / "run12" / "frame_00003.png"), cv2.IMREAD_UNCHANGED)
    assert frame.dtype == np.uint16 and frame.max() <= 4095
    np.testing.assert_array_equal(frame, rec.render()[3])


def test_tiff_stack_with_toml_and_truth_beside_it(tmp_path):
    rec = _recording(bit_depth=12)
    written = write_recording(rec, tmp_path / "rec.tif")
    assert written.experiment == tmp_path / "rec.toml"
    assert written.truth == tmp_path / "rec.truth.json"
    stack = tifffile.imread(tmp_path / "rec.tif")
    assert stack.shape == (6, 48, 140) and stack.dtype == np.uint16
    assert stack.max() <= 4095
    np.testing.assert_array_equal(stack, rec.render())
    with tifffile.TiffFile(tmp_path / "rec.tif") as tif:
        assert len(tif.pages) == 6
        # Baseline TIFF tag MaxSampleValue (281) says the data are 12-bit.
        assert tif.pages[0].tags[281].value == 4095
    # Nothing else is left behind (no temporary files).
    assert sorted(p.name for p in tmp_path.iterdir()) == ["rec.tif", "rec.toml", "rec.truth.json"]


def test_existing_output_is_not_overwritten_unless_asked(tmp_path):
    rec = _recording()
    write_recording(rec, tmp_path / "run")
    with pytest.raises(ExperimentError, match="already holds frames"):
        write_recording(rec, tmp_path / "run")
    write_recording(rec, tmp_path / "run", overwrite=True)
    write_recording(rec, tmp_path / "a.tiff")
    with pytest.raises(ExperimentError, match="already exists"):
        write_recording(rec, tmp_path / "a.tiff")
    with pytest.raises(ExperimentError, match="format = 'gif': is not a known format"):
        write_recording(rec, tmp_path / "b", format="gif")


UNITS = {
    ("recording", "frame_rate"): "Hz",
    ("recording", "pixel_size"): "m",
    ("liquid", "surface_tension"): "N/m",
    ("liquid", "viscosity"): "Pa*s",
    ("liquid", "density"): "kg/m^3",
    ("liquid", "temperature"): "K",
    ("medium", "viscosity"): "Pa*s",
    ("medium", "density"): "kg/m^3",
    ("drops", "radius"): "m",
}


def test_experiment_file_has_the_design_keys_with_unit_strings(tmp_path):
    rec = _recording(liquid=GLYCEROL_WATER)
    write_recording(rec, tmp_path / "run")
    doc = tomllib.loads((tmp_path / "run" / "experiment.toml").read_text())
    assert set(doc) == {"recording", "setup", "liquid", "medium", "drops"}
    assert doc["setup"] == {"geometry": "coalescence", "view": "side"}
    assert doc["liquid"]["name"] == "glycerol-water"
    assert doc["liquid"]["glycerol_mass_fraction"] == 0.85
    expected = {
        ("recording", "frame_rate"): 2e4,
        ("recording", "pixel_size"): 10e-6,
        ("liquid", "surface_tension"): 65e-3,
        ("liquid", "viscosity"): 0.1037,
        ("liquid", "density"): 1221.0,
        ("liquid", "temperature"): 294.15,
        ("medium", "viscosity"): 1.8e-5,
        ("medium", "density"): 1.2,
        ("drops", "radius"): 0.3e-3,
    }
    for (section, key), unit in UNITS.items():
        text = doc[section][key]
        assert isinstance(text, str)
        value = parse_si(text, unit, key=f"{section}.{key}")  # right dimension, or raises
        assert value == pytest.approx(expected[section, key], rel=1e-9)


def test_experiment_file_of_unequal_drops_names_the_harmonic_radius(tmp_path):
    rec = _recording(Coalescence(drop_radius=0.4e-3, second_radius=0.2e-3))
    write_recording(rec, tmp_path / "run")
    doc = tomllib.loads((tmp_path / "run" / "experiment.toml").read_text())
    radius = parse_si(doc["drops"]["radius"], "m")
    assert radius == pytest.approx(2 * 0.4e-3 * 0.2e-3 / 0.6e-3)
    truth = json.loads((tmp_path / "run" / "truth.json").read_text())
    assert truth["drop_radii_m"] == pytest.approx([0.4e-3, 0.2e-3])


def test_experiment_file_is_read_by_the_experiment_reader(tmp_path):
    from dropkin.experiment import read_experiment

    rec = _recording(Spreading(drop_radius=0.2e-3), liquid=GLYCEROL_WATER)
    write_recording(rec, tmp_path / "run")
    exp = read_experiment(tmp_path / "run" / "experiment.toml")
    assert exp.recording.frame_rate == pytest.approx(2e4)
    assert exp.recording.pixel_size == pytest.approx(10e-6)


def test_truth_json_matches_the_law_at_the_frame_times(tmp_path):
    rec = _recording(contact_frame=2.3)
    write_recording(rec, tmp_path / "run")
    truth = json.loads((tmp_path / "run" / "truth.json").read_text())
    rate, px = 2e4, 10e-6
    times = np.arange(6) / rate
    assert truth["frame_time_s"] == pytest.approx(times.tolist(), abs=1e-15)
    assert truth["contact_time_s"] == pytest.approx(2.3 / rate)
    assert truth["contact_frame"] == 2.3
    # docs/physics.md A3 with D0 = 1, written out: r = (gamma R / rho)^(1/4) t^(1/2).
    since = times - 2.3 / rate
    expected = np.where(since > 0, (0.0727 * 0.3e-3 / 998.0) ** 0.25 * np.sqrt(np.abs(since)), 0)
    np.testing.assert_allclose(truth["radius_m"], expected, rtol=1e-12)
    np.testing.assert_allclose(truth["radius_px"], expected / px, rtol=1e-12)
    assert truth["in_contact"] == [False, False, False, True, True, True]
    assert truth["law"]["name"] == "inertial"
    assert truth["law"]["parameters"]["prefactor"] == 1.0
    assert truth["geometry"] == "coalescence" and truth["view"] == "side"
    assert truth["frame_rate_hz"] == rate and truth["pixel_size_m"] == px
    assert truth["seed"] == 11
    assert truth["dropkin_version"] == __version__
    assert truth["drop_radius_m"] == pytest.approx(0.3e-3)
    assert truth["drop_volume_m3"] == pytest.approx(2 * 4 / 3 * math.pi * 0.3e-3**3)
