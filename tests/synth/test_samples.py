"""The shipped sample recordings: complete, small, and true to make_samples.py."""

import doctest
import importlib
import importlib.util
import json
import tomllib
from pathlib import Path

import numpy as np
import pytest
import tifffile

from dropkin.units import parse_si

SAMPLES = Path(__file__).resolve().parents[2] / "sample_frames"


def _script():
    spec = importlib.util.spec_from_file_location("make_samples", SAMPLES / "make_samples.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_samples_are_small():
    total = sum(p.stat().st_size for p in SAMPLES.rglob("*") if p.is_file())
    assert total < 6e6


@pytest.mark.parametrize("name", ["viscous_pair", "fast_pair", "spreading_drop", "sessile_pair"])
def test_sample_truth_matches_the_script(name):
    build, target = _script().SAMPLES[name]
    recording = build()  # describes the recording and computes its truth; renders nothing
    path = SAMPLES / target
    if path.suffix == ".tif":
        experiment, truth_path = path.with_suffix(".toml"), path.with_name(name + ".truth.json")
        with tifffile.TiffFile(path) as tif:
            frames = len(tif.pages)
            assert tif.pages[0].dtype == np.uint16
    else:
        experiment, truth_path = path / "experiment.toml", path / "truth.json"
        frames = len(list(path.glob("frame_*.png")))
    truth = json.loads(truth_path.read_text())
    assert frames == recording.frames == truth["frames"]
    np.testing.assert_allclose(truth["radius_m"], recording.truth.radius, rtol=1e-12)
    assert truth["contact_time_s"] == pytest.approx(recording.truth.contact_time)
    # Well over a decade after contact, most of it with a radius of several pixels.
    after = np.array(truth["time_since_contact_s"]) > 0
    t = np.array(truth["time_since_contact_s"])[after]
    assert np.log10(t[-1] / t[0]) > 1.5
    assert np.mean(np.array(truth["radius_px"])[after] >= 3) > 0.9
    assert 3 <= np.count_nonzero(~after) <= 8  # a handful of frames before contact
    doc = tomllib.loads(experiment.read_text())
    rate = parse_si(doc["recording"]["frame_rate"], "Hz")
    assert rate == pytest.approx(recording.camera.frame_rate)


@pytest.mark.parametrize(
    "module",
    ["", "._laws", "._scenes", "._coverage", "._optics", "._recording"],
)
def test_docstring_examples_run(module):
    mod = importlib.import_module("dropkin.synth" + module)
    result = doctest.testmod(mod)
    assert result.failed == 0 and result.attempted > 0
