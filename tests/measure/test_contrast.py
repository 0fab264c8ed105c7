"""Bright drops on a dark field (front light, fluorescence) measured to the
same standard as backlit ones, against the synthetic truth.

The recordings come from :mod:`dropkin.synth` with ``contrast="bright-drops"``
(the backlit picture turned inside out, a dark centre spot in each drop), plain
or with a glow (each drop brighter inside and off-centre than at its rim,
``glow=0.6``: the peak 1.6 times the rim's brightness). Bounds as in
``test_measure.py`` (the measurement issue's standard): over frames where the
true radius is at least 4 px and the gap beside the neck is at least three blur
sigmas, >= 90 % ``ok`` with an RMS error <= 0.5 px; the contact instant within
one frame; no frame before the true contact ``ok``.
"""

import math

import numpy as np
import pytest

from dropkin import synth
from dropkin.errors import ExperimentError, MeasurementError
from dropkin.experiment import load_experiment
from dropkin.measure import measure
from dropkin.measure._prepare import _noise
from dropkin.recording import open_recording

PIXEL = 15e-6
RATE = 2e5
LAW = synth.inertial_law(surface_tension=0.072, density=998.0, drop_radius=1e-3)

CASES = {
    "plain-horizontal-8bit": dict(angle_deg=0.0, bits=8, glow=0.0),
    "plain-vertical-12bit": dict(angle_deg=-90.0, bits=12, glow=0.0),
    "plain-tilted-unequal": dict(angle_deg=35.0, bits=8, glow=0.0, second=0.7e-3),
    "glow-horizontal-8bit": dict(angle_deg=0.0, bits=8, glow=0.6),
    "glow-tilted-8bit": dict(angle_deg=35.0, bits=8, glow=0.6),
    "glow-steep-12bit": dict(angle_deg=-60.0, bits=12, glow=0.6, blur=1.3),
}


def _recording(case, contrast="bright-drops"):
    setup = synth.Coalescence(
        drop_radius=1e-3, second_radius=case.get("second"), angle_deg=case["angle_deg"]
    )
    return synth.synthesize(
        setup,
        LAW,
        camera=synth.Camera(RATE, PIXEL, (300, 360)),
        frames=100,
        contact_frame=4.6,
        optics=synth.Optics(
            blur_px=case.get("blur", 1.0), dust_count=4, contrast=contrast, glow=case["glow"]
        ),
        sensor=synth.Sensor(bit_depth=case["bits"]),
        seed=3,
    )


def _measure(path):
    exp = load_experiment(path)
    rec = open_recording(
        path, frame_rate=exp.recording.frame_rate, pixel_size=exp.recording.pixel_size
    )
    return measure(rec, exp)


@pytest.fixture(scope="module")
def measured(tmp_path_factory):
    out = {}
    for name, case in CASES.items():
        rec = _recording(case)
        path = tmp_path_factory.mktemp(name) / "pair.tif"
        synth.write_recording(rec, path)
        out[name] = (case, rec, *_measure(path))
    return out


@pytest.mark.parametrize("name", list(CASES))
def test_bright_drops_meet_the_measurement_standard(measured, name):
    case, rec, series, _ = measured[name]
    truth_px = rec.truth.radius / PIXEL
    got_px = series.radius / PIXEL
    r0, r1 = (r / PIXEL for r in rec.setup.radii)
    sigma = math.hypot(case.get("blur", 1.0), 1 / math.sqrt(12))
    gap = truth_px**2 / 2 * (1 / r0 + 1 / r1)
    resolvable = (truth_px >= 4) & (gap >= 3 * sigma)
    ok = np.array(series.status) == "ok"
    assert resolvable.sum() >= 30
    assert ok[resolvable].mean() >= 0.90
    error = got_px[ok & resolvable] - truth_px[ok & resolvable]
    assert math.sqrt(np.mean(error**2)) <= 0.5
    assert not ok[rec.truth.time_since_contact < 0].any()
    assert abs(series.contact_time - rec.truth.contact_time) < 1.0 / RATE
    # told from the frames, and written down
    assert series.details["contrast"] == "bright-drops"
    assert series.details["contrast_origin"].startswith("told from the frame")


def test_bright_drops_measure_as_their_backlit_twin(measured, tmp_path):
    # The same scene, noise seed and optics, lit from behind: the plain
    # inversion's radii agree with the backlit ones frame by frame to a
    # tenth of a pixel on average (both are checked against the truth above
    # and in test_measure.py; here against each other).
    case, _, bright, _ = measured["plain-horizontal-8bit"]
    path = tmp_path / "backlit.tif"
    synth.write_recording(_recording(case, contrast="dark-drops"), path)
    backlit, _ = _measure(path)
    assert backlit.details["contrast"] == "dark-drops"
    both = (np.array(bright.status) == "ok") & (np.array(backlit.status) == "ok")
    assert both.sum() >= 50
    diff = (bright.radius[both] - backlit.radius[both]) / PIXEL
    assert abs(float(np.mean(diff))) < 0.1 and float(np.max(np.abs(diff))) < 0.5


def _with_contrast(path, value):
    toml = path.with_suffix(".toml")
    text = toml.read_text().replace("[recording]\n", f'[recording]\ncontrast = "{value}"\n', 1)
    toml.write_text(text)


def test_contrast_set_in_the_experiment_file(tmp_path):
    case = CASES["plain-horizontal-8bit"]
    path = tmp_path / "pair.tif"
    synth.write_recording(_recording(case), path)
    _with_contrast(path, "bright-drops")
    series, _ = _measure(path)
    assert series.details["contrast"] == "bright-drops"
    assert series.details["contrast_origin"] == "experiment file"
    # Said the wrong way round, the drops are not found: one line that says why.
    path.with_suffix(".toml").write_text(
        path.with_suffix(".toml").read_text().replace("bright-drops", "dark-drops")
    )
    with pytest.raises(MeasurementError) as err:
        _measure(path)
    assert "looked for as dark-drops (recording.contrast)" in str(err.value)
    path.with_suffix(".toml").write_text(
        path.with_suffix(".toml").read_text().replace('"dark-drops"', '"inverted"')
    )
    with pytest.raises(ExperimentError) as bad:
        load_experiment(path)
    assert bad.value.key == "recording.contrast"


def test_noise_below_one_grey_count_is_measured():
    # A dark field on an 8-bit camera: Gaussian noise of 0.45 counts about
    # 16 counts, rounded. Most neighbours are equal (the median absolute
    # difference is 0), yet the noise is the rounded values' own standard
    # deviation (numpy), in transmission units of a 150-count span.
    rng = np.random.default_rng(11)
    counts = np.rint(16.0 + rng.normal(0.0, 0.45, (200, 240)))
    field, drops = 16.0, 166.0
    trans = ((counts - drops) / (field - drops)).astype(np.float32)
    assert np.median(np.abs(np.diff(counts, axis=1))) == 0
    expected = float(np.std(counts)) / (drops - field)
    assert _noise(trans, np.full(trans.shape, field), drops) == pytest.approx(expected, rel=0.1)
