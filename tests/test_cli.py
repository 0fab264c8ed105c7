"""The command line: ``dropkin info``, exit codes, one-line errors.

Recordings are written by independent writers (tifffile, OpenCV) so that what
``info`` reports can be compared with what was written.
"""

import json
import re
import subprocess
import sys

import cv2
import numpy as np
import pytest
import tifffile
from click.testing import CliRunner

from dropkin._version import __version__
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
surface_tension = "63 mN/m"
viscosity = "110 mPa*s"
density = "1220 kg/m^3"

[drops]
radius = "1 mm"
"""


def _frames(n=6, rows=24, cols=40, dtype=np.uint8, seed=0):
    rng = np.random.default_rng(seed)
    top = 255 if dtype == np.uint8 else 4095  # 12-bit data in 16-bit words
    return rng.integers(0, top + 1, size=(n, rows, cols)).astype(dtype)


@pytest.fixture
def png_folder(tmp_path):
    folder = tmp_path / "pair"
    folder.mkdir()
    for i, frame in enumerate(_frames()):
        assert cv2.imwrite(str(folder / f"f_{i}.png"), frame)
    (folder / "experiment.toml").write_text(EXPERIMENT, encoding="utf-8")
    return folder


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


def _error_line(result):
    """The stderr of a failed run: exactly one line, no traceback."""
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1, result.stderr
    assert "Traceback" not in result.output
    return lines[0]


def test_version():
    result = _run("--version")
    assert result.exit_code == 0
    assert __version__ in result.output


def test_info_reports_what_was_written(png_folder):
    result = _run("info", png_folder, "--json")
    assert result.exit_code == 0, result.output
    d = json.loads(result.stdout)
    assert (d["frames"], d["rows"], d["cols"]) == (6, 24, 40)
    assert d["dtype"] == "uint8" and d["bit_depth"] == 8
    assert d["frame_rate_hz"] == 20000.0 and d["frame_rate_origin"] == "experiment file"
    # 6 frames at 20 kHz cover 6 x 50 us = 300 us.
    assert d["duration_s"] == pytest.approx(3.0e-4, rel=1e-12)
    assert d["pixel_size_m"] == pytest.approx(5e-6, rel=1e-12)
    # Field of view = pixels x pixel size: 24 x 5 um = 0.12 mm, 40 x 5 um = 0.2 mm.
    assert d["field_of_view_m"] == pytest.approx([1.2e-4, 2.0e-4], rel=1e-12)
    assert d["geometry"] == "coalescence" and d["view"] == "side"
    assert d["liquid"]["name"] == "glycerol-water"
    assert d["liquid"]["viscosity_pa_s"] == pytest.approx(0.110, rel=1e-12)
    assert d["drop_radius_m"] == pytest.approx(1e-3, rel=1e-12)


def test_info_text_names_the_facts(png_folder):
    result = _run("info", png_folder)
    assert result.exit_code == 0, result.output
    out = result.stdout
    assert "frames          6" in out
    assert "24 rows x 40 columns" in out
    assert "20000 fps (from experiment file)" in out
    assert "300 µs" in out
    assert "0.12 mm x 0.2 mm" in out
    assert "glycerol-water" in out and "110 mPa·s" in out


def test_options_override_the_file(png_folder):
    result = _run("info", png_folder, "--json", "--frame-rate", "1 Mfps", "--view", "bottom")
    assert result.exit_code == 0, result.output
    d = json.loads(result.stdout)
    assert d["frame_rate_hz"] == 1.0e6 and d["frame_rate_origin"] == "command line"
    assert d["view"] == "bottom"


def test_sixteen_bit_tiff_stack_with_its_toml(tmp_path):
    stack = tmp_path / "fast.tif"
    tifffile.imwrite(stack, _frames(n=5, dtype=np.uint16))
    (tmp_path / "fast.toml").write_text('[recording]\nframe_rate = "100 kHz"\n')
    result = _run("info", stack, "--json")
    assert result.exit_code == 0, result.output
    d = json.loads(result.stdout)
    assert d["frames"] == 5 and d["dtype"] == "uint16"
    assert d["pixel_size_m"] is None


@pytest.mark.parametrize(
    ("toml", "pattern"),
    [
        # The bad experiment files of issue 2: the one line names the file and key.
        ("[recording\n", r"experiment\.toml: is not valid TOML"),
        (
            '[liquid]\nsurface_tension = "72 m/s"\n',
            r"liquid\.surface_tension = '72 m/s'",
        ),
        (
            "[recording]\nframe_rate = 1000\n",
            r"recording\.frame_rate = 1000.*bare number",
        ),
        ('[recording]\nframerate = "1 kHz"\n', r"recording\.framerate: unknown key"),
        ('[recording]\nframe_rate = "-1 kHz"\n', r"recording\.frame_rate.*positive"),
        ('[recording]\nframe_rate = "0 Hz"\n', r"recording\.frame_rate.*positive"),
        ('[recording]\npixel_size = "0 um"\n', r"recording\.pixel_size.*positive"),
        ('[recording]\nframe_rate = "inf Hz"\n', r"recording\.frame_rate"),
    ],
)
def test_bad_experiment_file_gives_exit_1_and_one_line(tmp_path, toml, pattern):
    folder = tmp_path / "shot"
    folder.mkdir()
    for i, frame in enumerate(_frames(n=2)):
        cv2.imwrite(str(folder / f"f_{i}.png"), frame)
    (folder / "experiment.toml").write_text(toml, encoding="utf-8")
    result = _run("info", folder)
    assert result.exit_code == 1
    line = _error_line(result)
    assert line.startswith("dropkin: error: ")
    assert str(folder / "experiment.toml") in line
    assert re.search(pattern, line), line


def test_empty_folder_gives_exit_1_naming_it(tmp_path):
    folder = tmp_path / "empty"
    folder.mkdir()
    result = _run("info", folder, "--frame-rate", "1 kHz")
    assert result.exit_code == 1
    assert str(folder) in _error_line(result)


def test_missing_frame_rate_names_the_key(tmp_path):
    folder = tmp_path / "shot"
    folder.mkdir()
    for i, frame in enumerate(_frames(n=2)):
        cv2.imwrite(str(folder / f"f_{i}.png"), frame)
    result = _run("measure", folder, "-o", tmp_path / "out")
    assert result.exit_code == 1
    line = _error_line(result)
    assert "recording.frame_rate" in line and str(folder) in line


def test_info_without_a_frame_rate_describes_the_frames(tmp_path):
    folder = tmp_path / "shot"
    folder.mkdir()
    frames = _frames(n=3)
    for i, frame in enumerate(frames):
        cv2.imwrite(str(folder / f"f_{i}.png"), frame)
    result = _run("info", folder)
    assert result.exit_code == 0, result.output
    rows, cols = frames[0].shape
    assert re.search(r"^frames\s+3$", result.output, re.M), result.output
    assert f"{rows} rows x {cols} columns" in result.output
    assert f"{frames[0].dtype}, {8 * frames[0].dtype.itemsize}-bit" in result.output
    missing = [line for line in result.output.splitlines() if line.startswith("frame rate")]
    assert len(missing) == 1 and "missing" in missing[0] and "--frame-rate" in missing[0]
    assert "duration" not in result.output  # no time axis is made up
    data = json.loads(_run("info", folder, "--json").output)
    assert data["frames"] == 3 and data["frame_rate_hz"] is None
    assert data["duration_s"] is None and "--frame-rate" in data["frame_rate_missing"]


def test_bad_option_value_is_a_usage_error(png_folder):
    result = _run("info", png_folder, "--pixel-size", "3 kg")
    assert result.exit_code == 2
    assert "--pixel-size" in result.output
    assert "Traceback" not in result.output


def test_python_dash_m_runs_the_same_command():
    done = subprocess.run(
        [sys.executable, "-m", "dropkin", "--version"],
        capture_output=True,
        text=True,
        check=False,
    )
    assert done.returncode == 0
    assert __version__ in done.stdout


def _mixed_sizes(d):
    cv2.imwrite(str(d / "a_1.png"), _frames(n=1)[0])
    cv2.imwrite(str(d / "a_2.png"), _frames(n=1, rows=30)[0])
    return d, "a_2.png"


def _mixed_depths(d):
    cv2.imwrite(str(d / "a_1.png"), _frames(n=1)[0])
    cv2.imwrite(str(d / "a_2.png"), _frames(n=1, dtype=np.uint16)[0])
    return d, "a_2.png"


def _zero_byte(d):
    cv2.imwrite(str(d / "a_1.png"), _frames(n=1)[0])
    (d / "a_2.png").write_bytes(b"")
    return d, "a_2.png"


def _truncated_png(d):
    cv2.imwrite(str(d / "a_1.png"), _frames(n=1)[0])
    data = (d / "a_1.png").read_bytes()
    (d / "a_2.png").write_bytes(data[: len(data) // 2])
    return d, "a_2.png"


def _truncated_tiff(d):
    path = d / "stack.tif"
    tifffile.imwrite(path, _frames(n=6, dtype=np.uint16), photometric="minisblack")
    data = path.read_bytes()
    path.write_bytes(data[: len(data) * 2 // 3])
    return path, "stack.tif"


def _unsupported(d):
    path = d / "shot.xyz"
    path.write_bytes(b"not a recording")
    return path, "shot.xyz"


def _bad_video(d):
    path = d / "shot.avi"
    path.write_bytes(np.random.default_rng(1).bytes(4096))
    return path, "shot.avi"


@pytest.mark.parametrize(
    "make",
    [
        _mixed_sizes,
        _mixed_depths,
        _zero_byte,
        _truncated_png,
        _truncated_tiff,
        _unsupported,
        _bad_video,
    ],
)
def test_bad_recordings_give_exit_1_and_one_line_naming_the_file(tmp_path, make):
    folder = tmp_path / "rec"
    folder.mkdir()
    source, name = make(folder)
    result = _run("info", source, "--frame-rate", "1 kHz")
    assert result.exit_code == 1, result.output
    line = _error_line(result)
    assert name in line and line.startswith("dropkin: error: ")
