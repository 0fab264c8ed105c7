"""Measurement of coalescence necks, checked against synthetic truth and scikit-image.

The truth comes from :mod:`dropkin.synth`, which computes the radius from the
law alone (it shares no code with ``vision`` or ``measure``). Bounds are the
ones the measurement issue asks for:

- over frames where the true radius is at least 4 px and the optics resolve
  the neck, at least 90 % are ``ok`` and their RMS radius error is at most
  0.5 px;
- the contact instant is within one frame of the truth;
- no frame before the true contact is ``ok``.

"The optics resolve the neck" is our stated criterion, applied to the truth:
the gap beside the neck, r^2/2 (1/R0 + 1/R1), is at least three blur sigmas
wide, sigma being the point-spread sigma combined with a pixel's own
averaging (1/sqrt(12) px, the standard deviation of a uniform pixel).
"""

import hashlib
import json
import math

import numpy as np
import pytest
from click.testing import CliRunner
from skimage import measure as skmeasure

from dropkin import synth
from dropkin.cli import main
from dropkin.errors import ExperimentError, MeasurementError
from dropkin.experiment import load_experiment
from dropkin.measure import MeasureOptions, measure
from dropkin.recording import open_recording
from dropkin.series import CSV_COLUMNS, read_radius_csv

PIXEL = 15e-6
RATE = 2e5
LAW = synth.inertial_law(surface_tension=0.072, density=998.0, drop_radius=1e-3)

CASES = {
    "horizontal-8bit": dict(angle_deg=0.0, blur=1.0, bits=8),
    "vertical-12bit": dict(angle_deg=-90.0, blur=1.0, bits=12),
    "tilted-unequal": dict(angle_deg=35.0, second=0.7e-3, blur=1.2, bits=8),
    "unequal-needle-12bit": dict(angle_deg=0.0, second=1.3e-3, blur=0.7, bits=12, needle=0.3e-3),
    "steep-blurred": dict(angle_deg=-60.0, blur=1.5, bits=8),
    "bottom-view": dict(angle_deg=0.0, blur=1.0, bits=8, view="bottom"),
    "bottom-unequal-12bit": dict(angle_deg=20.0, second=0.8e-3, blur=1.0, bits=12, view="bottom"),
}


def _recording(case, *, frames=100, contact_frame=4.6, seed=3, shape=(300, 360), **setup_extra):
    setup = synth.Coalescence(
        view=case.get("view", "side"),
        drop_radius=1e-3,
        second_radius=case.get("second"),
        angle_deg=case["angle_deg"],
        needle_width=case.get("needle", 0.0),
        **setup_extra,
    )
    return synth.synthesize(
        setup,
        LAW,
        camera=synth.Camera(RATE, PIXEL, shape),
        frames=frames,
        contact_frame=contact_frame,
        # uneven light (gradient, vignette), bright spot and dust are on by default
        optics=synth.Optics(blur_px=case["blur"], dust_count=4),
        sensor=synth.Sensor(bit_depth=case["bits"]),
        seed=seed,
    )


def _measure(path, **options):
    exp = load_experiment(path)
    rec = open_recording(
        path, frame_rate=exp.recording.frame_rate, pixel_size=exp.recording.pixel_size
    )
    return measure(rec, exp, options=MeasureOptions(**options))


@pytest.fixture(scope="session")
def measured(tmp_path_factory):
    """Each case written once (TIFF stacks) and measured once."""
    out = {}
    for name, case in CASES.items():
        rec = _recording(case)
        path = tmp_path_factory.mktemp(name) / "pair.tif"
        synth.write_recording(rec, path)
        series, extras = _measure(path)
        out[name] = (case, rec, series)
    return out


@pytest.mark.parametrize("name", list(CASES))
def test_accuracy_status_and_contact_against_synthetic_truth(measured, name):
    case, rec, series = measured[name]
    truth_px = rec.truth.radius / PIXEL
    got_px = series.radius / PIXEL
    r0, r1 = (r / PIXEL for r in rec.setup.radii)
    sigma = math.hypot(case["blur"], 1 / math.sqrt(12))
    gap = truth_px**2 / 2 * (1 / r0 + 1 / r1)
    resolvable = (truth_px >= 4) & (gap >= 3 * sigma)
    ok = np.array(series.status) == "ok"
    assert resolvable.sum() >= 30  # the case really tests something
    assert ok[resolvable].mean() >= 0.90
    error = got_px[ok & resolvable] - truth_px[ok & resolvable]
    assert math.sqrt(np.mean(error**2)) <= 0.5
    # No frame before the true contact is measured as a neck.
    assert not ok[rec.truth.time_since_contact < 0].any()
    assert all(s == "before-contact" for s in np.array(series.status)[rec.truth.gap > 1.0 * PIXEL])
    # The contact instant within one frame, and its stated uncertainty below one frame.
    assert abs(series.contact_time - rec.truth.contact_time) < 1.0 / RATE
    assert series.contact_time_err < 1.0 / RATE


def test_drop_radii_from_the_circle_fits(measured):
    for _case, rec, series in measured.values():
        truth = sorted(rec.setup.radii)
        got = sorted(series.details["drop_radii_m"])
        # Within 0.2 px, the bound the issue sets against CircleModel.
        assert np.allclose(got, truth, atol=0.2 * PIXEL)


def test_neck_half_width_agrees_with_regionprops_on_the_same_mask(tmp_path, monkeypatch):
    # The half-transmission contour as found is compared: the correction for
    # blur's shift of the curved outline (tests/vision/test_neck_blur_shift.py)
    # is set aside, the mask below having the same shift.
    from dropkin.vision import _neck

    monkeypatch.setattr(_neck, "blur_shift", lambda k, b, e=None: (0 * k, 0 * k))
    # Clean frames: no noise, no blur, even light; a horizontal equal pair whose
    # line of centres lies on a pixel edge (row 149.5), so that the neck column
    # of the mask holds 2 round(r) dark pixels. scikit-image counts them.
    rec = synth.synthesize(
        synth.Coalescence(drop_radius=1e-3, contact_px=(149.5, 180.0), spot_fraction=0.0),
        LAW,
        camera=synth.Camera(RATE, PIXEL, (300, 360)),
        frames=60,
        contact_frame=2.5,
        optics=synth.Optics(blur_px=0.0, gradient=0.0, vignette=0.0),
        sensor=synth.Sensor(bit_depth=12, full_well=None),
    )
    path = tmp_path / "clean"
    synth.write_recording(rec, path)
    series, extras = _measure(path, gap_blurs=0.0)
    frames = open_recording(path, frame_rate=RATE)
    light = float(np.median(frames[0][:10]))
    checked = 0
    for i in range(20, 60, 5):
        frame = frames[i].astype(float)
        dark = float(frame.min())
        mask = (frame - dark) / (light - dark) < 0.5
        column = mask[:, 180:181]
        region = max(skmeasure.regionprops(skmeasure.label(column)), key=lambda p: p.area)
        half_width = region.area / 2
        assert abs(series.radius[i] / PIXEL - half_width) <= 0.5
        checked += 1
    assert checked == 8


def test_parallel_jobs_and_small_chunks_give_the_same_series(tmp_path):
    rec = _recording(CASES["tilted-unequal"], frames=40)
    path = tmp_path / "pair.tif"
    synth.write_recording(rec, path)
    one, _ = _measure(path)
    two, _ = _measure(path, jobs=2, chunk_size=7)
    assert one.status == two.status
    assert np.array_equal(one.radius, two.radius, equal_nan=True)
    assert one.contact_time == two.contact_time


def test_drops_leaving_the_field_of_view_are_at_edge_and_earlier_frames_kept(tmp_path):
    # The bridge grows across the line of centres, which lies 21 px below the
    # top border (row 20.5, pixel edges at half rows): once the neck is wider
    # than that, the frame is at-edge.
    rec = _recording(CASES["horizontal-8bit"], frames=100, contact_px=(20.5, 180.0))
    path = tmp_path / "edge.tif"
    synth.write_recording(rec, path)
    series, _ = _measure(path)
    status = np.array(series.status)
    truth_px = rec.truth.radius / PIXEL
    assert (status[truth_px > 22.0] == "at-edge").all()
    assert (status[truth_px > 21.0] != "ok").all()
    assert (status == "ok").sum() >= 3


def test_blank_recording_means_no_drops(tmp_path):
    import tifffile

    path = tmp_path / "blank.tif"
    tifffile.imwrite(path, np.full((5, 64, 64), 200, np.uint8))
    (tmp_path / "blank.toml").write_text(
        '[recording]\nframe_rate = "1 kHz"\npixel_size = "10 um"\n'
        '[setup]\ngeometry = "coalescence"\n'
    )
    with pytest.raises(MeasurementError, match="not found"):
        _measure(path)
    result = CliRunner().invoke(main, ["measure", str(path), "-o", str(tmp_path / "out")])
    assert result.exit_code == 1
    assert "blank.tif" in result.stderr and "Traceback" not in result.output
    assert not (tmp_path / "out" / "radius.csv").exists()


def test_drops_that_never_touch(tmp_path):
    # The drops approach at 1 px per frame and touch at frame 11; only frames
    # 0-6 are kept (last_frame), so a gap of 4 px or more always shows.
    rec = _recording(
        CASES["horizontal-8bit"], frames=12, contact_frame=11.0, approach_speed=1.0 * PIXEL * RATE
    )
    path = tmp_path / "apart.tif"
    synth.write_recording(rec, path)
    toml = tmp_path / "apart.toml"
    toml.write_text(toml.read_text().replace("[recording]\n", "[recording]\nlast_frame = 6\n"))
    result = CliRunner().invoke(main, ["measure", str(path), "-o", str(tmp_path / "out")])
    assert result.exit_code == 1
    assert "no frame shows the drops in contact" in result.stderr
    csv = read_radius_csv(tmp_path / "out" / "radius.csv")
    assert len(csv.frame) == 7
    assert set(csv.status) == {"before-contact"}


def test_region_of_interest_outside_the_frame_and_missing_keys(tmp_path):
    rec = _recording(CASES["horizontal-8bit"], frames=8, contact_frame=3.5)
    path = tmp_path / "pair.tif"
    synth.write_recording(rec, path)
    with pytest.raises(ExperimentError, match=r"--roi.*outside"):
        _measure(path, roi=(0, 400, 0, 100))
    runner = CliRunner()
    result = runner.invoke(
        main, ["measure", str(path), "-o", str(tmp_path / "o"), "--roi", "10:20"]
    )
    assert result.exit_code == 1 and "--roi" in result.stderr
    toml = (tmp_path / "pair.toml").read_text()
    (tmp_path / "pair.toml").write_text(toml.replace('geometry = "coalescence"', ""))
    result = runner.invoke(main, ["measure", str(path), "-o", str(tmp_path / "o")])
    assert result.exit_code == 1 and "setup.geometry" in result.stderr


def test_measure_command_writes_the_contract(tmp_path):
    rec = _recording(CASES["horizontal-8bit"], frames=30, contact_frame=3.3)
    src = tmp_path / "pair"
    synth.write_recording(rec, src)
    out = tmp_path / "out"
    result = CliRunner().invoke(main, ["measure", str(src), "-o", str(out), "--overlays", "4"])
    assert result.exit_code == 0, result.output
    header = (out / "radius.csv").read_text().splitlines()[0]
    # The contract's columns first, unchanged; then the radius at the two other
    # edge levels (default: the main level 0.5 plus and minus 0.1).
    assert tuple(header.split(",")) == (*CSV_COLUMNS, "radius_level_0.4_m", "radius_level_0.6_m")
    csv = read_radius_csv(out / "radius.csv")
    assert len(csv.frame) == 30
    # since_contact_s = time_s - contact_time_s, empty before contact.
    info = json.loads((out / "measure.json").read_text())
    # the file's own column (the record derives its time since contact)
    since = np.genfromtxt(out / "radius.csv", delimiter=",", skip_header=1, usecols=2)
    after = np.isfinite(since)
    assert np.allclose(since[after], csv.time[after] - info["contact_time_s"], atol=1e-15)
    assert (csv.time[~after] < info["contact_time_s"]).all()
    for key in (
        "contact_time_s",
        "contact_time_err_s",
        "drop_radius_m",
        "geometry",
        "view",
        "frame_rate_hz",
        "pixel_size_m",
        "frames",
        "provenance",
    ):
        assert key in info
    assert info["frames"] == 30 and info["geometry"] == "coalescence"
    assert info["edge_levels"] == [0.4, 0.5, 0.6] and info["edge_level"] == 0.5
    assert sorted(csv.level_radii) == [0.4, 0.6]
    # Provenance: SHA-256 of the frame files in order (hashlib as the reference).
    digest = hashlib.sha256()
    for f in sorted(src.glob("frame_*.png")):
        digest.update(f.read_bytes())
    assert info["provenance"]["sha256"] == digest.hexdigest()
    assert info["provenance"]["version"]
    overlays = sorted((out / "overlays").glob("*.png"))
    assert 2 <= len(overlays) <= 4


def test_a_given_background_image_replaces_the_fitted_backlight(tmp_path):
    # A strong vignette and gradient; the empty field is synth's own backlight
    # (the light without drops), written as a 16-bit PNG.
    import cv2

    optics = synth.Optics(blur_px=1.0, vignette=0.5, gradient=0.4)
    rec = synth.synthesize(
        synth.Coalescence(drop_radius=1e-3),
        LAW,
        camera=synth.Camera(RATE, PIXEL, (300, 360)),
        frames=80,
        contact_frame=4.6,
        optics=optics,
        sensor=synth.Sensor(bit_depth=12),
        seed=5,
    )
    path = tmp_path / "pair.tif"
    synth.write_recording(rec, path)
    light = synth.backlight((300, 360), optics) * rec.sensor.max_count
    background = tmp_path / "empty.png"
    cv2.imwrite(str(background), np.round(light).astype(np.uint16))
    out = tmp_path / "out"
    result = CliRunner().invoke(
        main, ["measure", str(path), "-o", str(out), "--background", str(background)]
    )
    assert result.exit_code == 0, result.output
    info = json.loads((out / "measure.json").read_text())
    assert info["provenance"]["options"]["background"] == "given image"
    csv = read_radius_csv(out / "radius.csv")
    truth_px = rec.truth.radius / PIXEL
    ok = np.array(csv.status) == "ok"
    assert ok.sum() >= 30
    error = csv.radius[ok] / PIXEL - truth_px[ok]
    assert math.sqrt(np.mean(error**2)) <= 0.5  # the bound
    small = tmp_path / "small.png"
    cv2.imwrite(str(small), np.zeros((10, 10), np.uint16))
    result = CliRunner().invoke(
        main, ["measure", str(path), "-o", str(tmp_path / "o2"), "--background", str(small)]
    )
    assert result.exit_code == 1 and "--background" in result.stderr


SPREAD_LAW = synth.inertial_spreading_law(surface_tension=0.0201, density=935.0, drop_radius=1e-3)
SPREAD_CASES = {
    "side-opaque-8bit": dict(view="side", reflectivity=0.0, bits=8),
    "side-mirror-12bit": dict(view="side", reflectivity=0.5, bits=12),
    "bottom-8bit": dict(view="bottom", reflectivity=0.0, bits=8),
    # Front-lit or fluorescent: bright drops on a dark field, told from the frames.
    "side-bright-glow-8bit": dict(view="side", reflectivity=0.0, bits=8, glow=0.6),
    "bottom-bright-12bit": dict(view="bottom", reflectivity=0.0, bits=12, glow=0.0),
}


@pytest.mark.parametrize("name", list(SPREAD_CASES))
def test_spreading_contact_radius_against_synthetic_truth(tmp_path, name):
    # A silicone-oil-like drop (values of docs/physics.md 5.4, from memory there)
    # spreading inertially, C = 1.2 (an assumed value; only the truth matters).
    case = SPREAD_CASES[name]
    pixel, rate = 14e-6, 25e3
    rec = synth.synthesize(
        synth.Spreading(view=case["view"], drop_radius=1e-3, reflectivity=case["reflectivity"]),
        SPREAD_LAW,
        camera=synth.Camera(rate, pixel, (224, 320)),
        frames=60,
        contact_frame=5.3,
        optics=synth.Optics(
            blur_px=1.0,
            contrast="bright-drops" if "glow" in case else "dark-drops",
            glow=case.get("glow", 0.0),
        ),
        sensor=synth.Sensor(bit_depth=case["bits"]),
        seed=11,
    )
    path = tmp_path / "drop.tif"
    synth.write_recording(rec, path)
    out = tmp_path / "out"
    result = CliRunner().invoke(main, ["measure", str(path), "-o", str(out)])
    assert result.exit_code == 0, result.output
    csv = read_radius_csv(out / "radius.csv")
    info = json.loads((out / "measure.json").read_text())
    truth_px = rec.truth.radius / pixel
    ok = np.array(csv.status) == "ok"
    after = truth_px >= 4
    # The bounds, over frames with a true radius of 4 px or more
    # (these drops wet at angles below 90 degrees by then: all resolvable).
    assert ok[after].mean() >= 0.90
    error = csv.radius[ok & after] / pixel - truth_px[ok & after]
    assert math.sqrt(np.mean(error**2)) <= 0.5
    assert not ok[rec.truth.time_since_contact < 0].any()
    assert abs(info["contact_time_s"] - rec.truth.contact_time) < 1.0 / rate
    assert (out / "angles.csv").exists() == (case["view"] == "side")
    assert info["contrast"] == ("bright-drops" if "glow" in case else "dark-drops")


def test_memory_mapped_and_streamed_reading_agree_and_report_progress(tmp_path):
    # The same frames as an uncompressed, contiguous TIFF (read through a
    # memory map) and as a PNG folder (decoded chunk by chunk).
    import tifffile

    rec = _recording(CASES["tilted-unequal"], frames=50)
    frames = rec.render()
    stack = tmp_path / "raw.tif"
    with tifffile.TiffWriter(stack) as tif:
        for frame in frames:
            tif.write(frame, contiguous=True, photometric="minisblack")
    (tmp_path / "raw.toml").write_text(synth.experiment_toml(rec))
    folder = tmp_path / "png"
    synth.write_recording(rec, folder)
    results = []
    for path in (stack, folder):
        exp = load_experiment(path)
        opened = open_recording(
            path, frame_rate=exp.recording.frame_rate, pixel_size=exp.recording.pixel_size
        )
        calls = []
        series, _ = measure(
            opened,
            exp,
            options=MeasureOptions(chunk_size=8),
            progress=lambda done, total, calls=calls: calls.append((done, total)),
        )
        done = [d for d, _ in calls]
        assert calls[-1] == (50, 50) and done == sorted(done)
        results.append((opened.memmap(0, 1) is not None, series))
    (mapped, one), (streamed, two) = results
    assert mapped and not streamed
    assert one.status == two.status
    assert np.array_equal(one.radius, two.radius, equal_nan=True)


def test_noise_estimate_is_the_scaled_mad_of_neighbour_differences():
    # Reference: the robust noise of the background (1.4826 x the median
    # absolute deviation, over sqrt 2 for a difference of two pixels; common
    # practice) written directly with numpy; the helper computes it in place.
    from dropkin.measure._prepare import _noise

    rng = np.random.default_rng(6)
    trans = (1.0 + rng.normal(0, 0.02, (120, 150))).astype(np.float32)
    trans[40:80, 50:100] = 0.1
    diff = np.diff(trans, axis=1)
    values = diff[(trans[:, 1:] > 0.8) & (trans[:, :-1] > 0.8)]
    mad = np.median(np.abs(values - np.median(values)))
    assert _noise(trans) == max(1.4826 * float(mad) / math.sqrt(2.0), 1e-4)
    # and it recovers the noise put in, to the few per cent a MAD allows
    assert _noise(trans) == pytest.approx(0.02, rel=0.05)
