"""``dropkin synth``: files written, exit codes, one-line errors."""

import json
import math
import tomllib

import numpy as np
import pytest
import tifffile
from click.testing import CliRunner
from PIL import Image

from dropkin.cli import main
from dropkin.cli._synth import law_choices, synth_command
from dropkin.synth import REGIME_NAMES
from dropkin.units import parse_si

SMALL = ["--frames", "6", "--size", "48x96", "--pixel-size", "25 um"]


def _run(*args):
    return CliRunner().invoke(main, ["synth", *args])


def test_synth_writes_a_png_folder(tmp_path):
    out = tmp_path / "run"
    result = _run(str(out), *SMALL, "--frame-rate", "20 kfps", "--contact-frame", "2.5")
    assert result.exit_code == 0, result.output
    assert len(result.output.strip().splitlines()) == 1
    assert result.output.startswith("wrote 6 frames (48 x 96, 8-bit png)")
    assert sorted(p.name for p in out.glob("frame_*.png")) == [
        f"frame_{k:05d}.png" for k in range(6)
    ]
    doc = tomllib.loads((out / "experiment.toml").read_text())
    assert parse_si(doc["recording"]["frame_rate"], "Hz") == pytest.approx(2e4)
    assert parse_si(doc["recording"]["pixel_size"], "m") == pytest.approx(25e-6)
    truth = json.loads((out / "truth.json").read_text())
    assert truth["contact_time_s"] == pytest.approx(2.5 / 2e4)
    assert truth["law"]["name"] == "inertial"


def test_synth_writes_a_twelve_bit_tiff_of_a_spreading_drop(tmp_path):
    out = tmp_path / "drop.tif"
    result = _run(
        str(out),
        *SMALL,
        "--geometry",
        "spreading",
        "--bit-depth",
        "12",
        "--reflectivity",
        "0.5",
        "--drop-radius",
        "0.3 mm",
        "--law",
        "tanner",
    )
    assert result.exit_code == 0, result.output
    stack = tifffile.imread(out)
    assert stack.shape == (6, 48, 96) and stack.dtype == np.uint16 and stack.max() <= 4095
    assert (tmp_path / "drop.toml").exists()
    truth = json.loads((tmp_path / "drop.truth.json").read_text())
    assert truth["geometry"] == "spreading" and truth["law"]["name"] == "tanner"


def test_synth_power_law_with_sub_frame_contact(tmp_path):
    out = tmp_path / "p"
    result = _run(
        str(out),
        *SMALL,
        "--law",
        "power",
        "--exponent",
        "0.5",
        "--prefactor",
        "0.01",
        "--contact-frame",
        "1.75",
        "--frame-rate",
        "10 kHz",
        "--noise",
        "0",
    )
    assert result.exit_code == 0, result.output
    truth = json.loads((out / "truth.json").read_text())
    since = np.arange(6) / 1e4 - 1.75 / 1e4
    expected = np.where(since > 0, 0.01 * np.sqrt(np.abs(since)), 0.0)
    np.testing.assert_allclose(truth["radius_m"], expected, rtol=1e-12)


def test_synth_law_names_are_the_library_regimes():
    (law,) = [p for p in synth_command.params if p.name == "law"]
    assert law.type.choices == law_choices()
    assert set(law_choices()) == {*REGIME_NAMES, "power"}
    (then,) = [p for p in synth_command.params if p.name == "then"]
    assert set(then.type.choices) == set(REGIME_NAMES)


def test_synth_then_blends_two_laws_and_records_where_they_meet(tmp_path):
    # --law inertially-limited-viscous --then inertial: 1/r = 1/r1 + 1/r2 (docs/physics.md
    # section 3) of r1 = C (gamma/eta) t and r2 = D0 (gamma R/rho)^(1/4) t^(1/2), written
    # out here; the laws meet at t_c = (D0/C)^2 (gamma R/rho)^(1/2) (eta/gamma)^2.
    out = tmp_path / "x"
    gamma, eta, rho, radius, d0 = 0.0658, 0.1002, 1221.0, 1e-3, 1.2
    result = _run(
        str(out), *SMALL, "--law", "inertially-limited-viscous", "--then", "inertial",
        "--then-prefactor", "1.2", "--surface-tension", "65.8 mN/m",
        "--viscosity", "100.2 mPa*s", "--density", "1221 kg/m^3", "--frame-rate", "2 kHz",
        "--contact-frame", "0.5", "--noise", "0",
    )  # fmt: skip
    assert result.exit_code == 0, result.output
    assert "harmonic-blend(inertially-limited-viscous,inertial) law" in result.output
    law = json.loads((out / "truth.json").read_text())["law"]
    t_c = d0**2 * math.sqrt(gamma * radius / rho) * (eta / gamma) ** 2
    assert law["parameters"]["crossover_time"] == pytest.approx(t_c, rel=1e-9)
    since = np.arange(6) / 2e3 - 0.5 / 2e3
    tau = np.clip(since, 1e-30, None)
    r1, r2 = gamma / eta * tau, d0 * (gamma * radius / rho) ** 0.25 * np.sqrt(tau)
    expected = np.where(since > 0, r1 * r2 / (r1 + r2), 0.0)
    truth = json.loads((out / "truth.json").read_text())
    np.testing.assert_allclose(truth["radius_m"], expected, rtol=1e-12)


def _one_line_error(result):
    lines = result.output.strip().splitlines()
    assert "Traceback" not in result.output
    return lines


def test_bad_quantity_is_a_usage_error(tmp_path):
    result = _run(str(tmp_path / "x"), *SMALL, "--frame-rate", "5 m")
    assert result.exit_code == 2
    lines = _one_line_error(result)
    assert lines[-1].startswith("Error: Invalid value for '--frame-rate'")
    assert "has the dimension of a length, not of a rate like Hz" in lines[-1]


def test_bad_size_is_a_usage_error(tmp_path):
    result = _run(str(tmp_path / "x"), "--size", "big")
    assert result.exit_code == 2
    assert "'big' is not ROWSxCOLS" in _one_line_error(result)[-1]


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (["--law", "power"], "--law = 'power': needs --exponent and --prefactor"),
        (["--contact-frame", "9"], "--contact-frame = 9.0: must lie within the recording"),
        (
            ["--law", "power", "--exponent", "0.5", "--prefactor", "10", "--contact-frame", "0"],
            "reaches the smaller drop radius",
        ),
        (["--law", "viscous", "--prefactor", "2"], "does not apply to the 'viscous' law"),
        (["--then-prefactor", "1.2"], "--then-prefactor: applies only with --then"),
        (["--then", "tanner", "--then-prefactor", "2"], "does not apply to the 'tanner' law"),
    ],
)
def test_bad_values_are_one_line_errors_with_exit_code_1(tmp_path, args, message):
    result = _run(str(tmp_path / "x"), *SMALL, *args)
    assert result.exit_code == 1
    lines = _one_line_error(result)
    assert len(lines) == 1
    assert lines[0].startswith("dropkin: error: ")
    assert message in lines[0]
    assert not (tmp_path / "x").exists()


def test_existing_frames_are_kept_without_overwrite(tmp_path):
    out = tmp_path / "run"
    assert _run(str(out), *SMALL).exit_code == 0
    again = _run(str(out), *SMALL)
    assert again.exit_code == 1
    assert "already holds frames" in again.output
    assert _run(str(out), *SMALL, "--overwrite").exit_code == 0


def test_synth_renders_a_driven_drop_and_a_ringing_tail(tmp_path):
    # Drop 2 driven at 2 px per frame (25 um pixels at 20 kfps: 1 m/s), the
    # growth ending at 0.3 R; the truth's law records where, and the neck
    # shrinks somewhere after it.
    out = tmp_path / "run.tif"
    args = [*SMALL, "--frames", "40", "--frame-rate", "20 kfps", "--drop-radius", "0.5 mm"]
    result = _run(
        str(out), *args, "--approach", "second-moves", "--approach-speed", "1 m/s",
        "--ringing-at", "0.3", "--contact-frame", "3",
    )  # fmt: skip
    assert result.exit_code == 0, result.output
    truth = json.loads((tmp_path / "run.truth.json").read_text())
    assert truth["scene"]["approach"] == "second-moves"
    end = truth["law"]["parameters"]["growth_end_time"]
    radius = np.array(truth["radius_m"])
    since = np.array(truth["time_since_contact_s"])
    assert radius[since <= end].max() < 0.3 * 0.5e-3 < radius[since > end][0]
    assert (np.diff(radius[since > end]) < 0).any()
    assert (np.diff(radius[since <= end]) >= 0).all()
    # Drop 1 stays where it touches; drop 2 starts 6 px (3 frames) further off:
    # the dark run across the middle row ends 6 px further right.
    stack = tifffile.imread(out).astype(float)
    dark = stack[:, 24, :] < 0.5 * np.median(stack[:, 24, :2])
    left = [np.argmax(row) for row in dark]
    right = [len(row) - np.argmax(row[::-1]) for row in dark]
    assert left[0] == left[-1]
    assert right[0] - right[-1] == pytest.approx(6, abs=1)


@pytest.mark.parametrize(
    "extra", [["--approach", "growth"], ["--ringing-at", "0.4"]], ids=["approach", "ringing"]
)
def test_synth_refuses_coalescence_options_for_spreading(tmp_path, extra):
    result = _run(str(tmp_path / "x"), *SMALL, "--geometry", "spreading", *extra)
    assert result.exit_code != 0
    assert "applies only to coalescence" in result.output


def test_synth_drop_lowered_onto_a_mirror_with_the_surface_inside_a_pixel(tmp_path):
    # The plate's surface a quarter of a pixel into row 33: the rows above it
    # are background, the row holding it partly plate (coverage 0.75 of a
    # pixel: dropkin.synth computes exact pixel areas).
    out = tmp_path / "m"
    args = [str(out), *SMALL, "--geometry", "spreading", "--reflectivity", "0.5"]
    args += ["--drop-radius", "0.2 mm", "--noise", "0", "--blur", "0"]
    result = _run(*args, "--substrate-row", "32.75")
    assert result.exit_code == 0, result.output
    frame = np.asarray(Image.open(out / "frame_00000.png"), dtype=np.float64)
    column = frame[:, 2]  # far from the drop
    top, plate = column[31], column[35]
    assert plate < top
    assert (column[33] - plate) / (top - plate) == pytest.approx(0.25, abs=0.02)
    bad = _run(str(tmp_path / "b"), *SMALL, "--substrate-row", "10")
    assert bad.exit_code != 0 and "--substrate-row" in bad.output


def _files(folder):
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir())}


def test_overwrite_replaces_a_folder_whole_and_a_failed_run_leaves_it_as_it_was(
    tmp_path, monkeypatch
):
    # Issue 17: --overwrite removed the old frames, then wrote the new ones one by one,
    # so a run that failed half-way left neither recording. Now the folder is built
    # aside and published whole.
    import cv2

    out = tmp_path / "run"
    assert _run(str(out), *SMALL).exit_code == 0
    before = _files(out)
    calls = []
    real = cv2.imwrite

    def failing(path, *args):
        calls.append(path)
        return False if len(calls) == 3 else real(path, *args)

    monkeypatch.setattr(cv2, "imwrite", failing)
    result = _run(str(out), *SMALL, "--seed", "1", "--overwrite")
    monkeypatch.undo()
    assert result.exit_code == 1 and len(calls) == 3
    assert _one_line_error(result) == [f"dropkin: error: cannot write {out / 'frame_00002.png'}"]
    assert _files(out) == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["run"]  # no staging folder left
    # Replaced whole: the frames of the longer run before are gone.
    result = _run(str(out), *SMALL[2:], "--frames", "3", "--contact-frame", "1", "--overwrite")
    assert result.exit_code == 0, result.output
    assert f"to {out} in" in result.output
    assert sorted(p.name for p in out.iterdir()) == [
        "experiment.toml",
        "frame_00000.png",
        "frame_00001.png",
        "frame_00002.png",
        "truth.json",
    ]
    assert json.loads((out / "truth.json").read_text())["frames"] == 3


def test_a_folder_of_other_files_is_refused_even_with_overwrite(tmp_path):
    out = tmp_path / "run"
    out.mkdir()
    (out / "notes.txt").write_text("mine")
    for extra in ([], ["--overwrite"]):
        result = _run(str(out), *SMALL, *extra)
        assert result.exit_code == 1
        (line,) = _one_line_error(result)
        assert line.startswith(f"dropkin: error: {out}: ")
        assert "notes.txt" in line
    assert sorted(p.name for p in out.iterdir()) == ["notes.txt"]
