"""End to end: ``dropkin synth --contrast bright-drops`` then ``dropkin analyze``.

Bright drops on a dark field (front light, fluorescence), plain and glowing,
made by the command line with the inertial law: ``analyze`` tells the
contrast from the frames (written to measure.json), finds the contact within
one frame of the truth and names the inertial regime with its exponent within
0.05 of 1/2 (inertial coalescence, r ~ t^(1/2): Phys. Rev. Lett. 95, 164503
(2005)).
"""

import json

import pytest
from click.testing import CliRunner

from dropkin.cli import main

RATE = 2e5
ARGS = [
    "--frames", "200", "--size", "300x360", "--pixel-size", "15 um",
    "--frame-rate", "200 kHz", "--contact-frame", "4.6", "--dust", "4", "--seed", "3",
]  # fmt: skip


@pytest.mark.parametrize("glow", ["0", "0.6"])
def test_analyze_measures_bright_drops_and_names_the_law(tmp_path, glow):
    rec = tmp_path / "bright.tif"
    made = CliRunner().invoke(
        main, ["synth", str(rec), *ARGS, "--contrast", "bright-drops", "--glow", glow]
    )
    assert made.exit_code == 0, made.output
    truth = json.loads((tmp_path / "bright.truth.json").read_text())
    assert truth["contrast"] == "bright-drops" and truth["glow"] == float(glow)
    out = tmp_path / "out"
    result = CliRunner().invoke(main, ["analyze", str(rec), "-o", str(out), "--bootstrap", "50"])
    assert result.exit_code == 0, result.output
    measured = json.loads((out / "measure.json").read_text())
    assert measured["contrast"] == "bright-drops"
    assert measured["contrast_origin"].startswith("told from the frame")
    assert abs(measured["contact_time_s"] - truth["contact_time_s"]) < 1.0 / RATE
    dominant = json.loads((out / "fit.json").read_text())["dominant"]
    assert dominant["regime"] == "inertial"
    assert abs(dominant["exponent_fit"] - 0.5) <= 0.05


def test_contrast_option_overrides_the_frames(tmp_path):
    # Said the wrong way round on the command line, the drops are not found:
    # exit code 1 and one line naming the setting.
    rec = tmp_path / "bright.tif"
    small = ["--frames", "12", "--size", "200x260", "--pixel-size", "20 um"]
    made = CliRunner().invoke(main, ["synth", str(rec), *small, "--contrast", "bright-drops"])
    assert made.exit_code == 0, made.output
    result = CliRunner().invoke(
        main, ["measure", str(rec), "-o", str(tmp_path / "out"), "--contrast", "dark-drops"]
    )
    assert result.exit_code == 1
    lines = result.output.strip().splitlines()
    assert len(lines) == 1 and "looked for as dark-drops (recording.contrast)" in lines[0]
