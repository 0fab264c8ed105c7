"""``-v``: detail lines on stderr (experiment file, settings, contact method); the
results on stdout and the default stderr stay as they are."""

import json
from pathlib import Path

import numpy as np
import tifffile
from click.testing import CliRunner

from dropkin.cli import main

SAMPLES = Path(__file__).resolve().parents[1] / "sample_frames"


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


def test_verbose_measure_says_what_was_used_on_stderr_only(tmp_path):
    sample = SAMPLES / "fast_pair.tif"
    plain = _run("measure", sample, "-o", tmp_path / "plain", "--overlays", "0")
    loud = _run("-v", "measure", sample, "-o", tmp_path / "loud", "--overlays", "0")
    assert plain.exit_code == 0 and loud.exit_code == 0, loud.output
    assert plain.stderr == ""
    assert loud.stdout == plain.stdout.replace("plain", "loud")
    method = json.loads((tmp_path / "loud" / "measure.json").read_text())["contact_method"]
    assert loud.stderr.splitlines() == [
        f"dropkin: experiment file: {(SAMPLES / 'fast_pair.toml').resolve()}",
        (
            "dropkin: settings: roi = None, threshold = 0.5, background = None, jobs = 1, "
            "chunk_size = 64, overlays = 0"
        ),
        f"dropkin: contact: {method}",
    ]


def test_verbose_fit_names_its_settings_and_experiment(tmp_path):
    out = tmp_path / "m"
    assert _run("-q", "measure", SAMPLES / "fast_pair.tif", "-o", out, "--overlays", "0").stdout
    plain = _run("fit", out / "radius.csv", "-o", out, "--bootstrap", "5")
    loud = _run("-v", "fit", out / "radius.csv", "-o", out, "--bootstrap", "5", "--seed", "2")
    assert loud.exit_code == 0, loud.output
    assert plain.stderr == ""
    assert loud.stderr.splitlines() == [
        "dropkin: settings: t0 = None, seed = 2, bootstrap = 5, initial_radius = False",
        f"dropkin: experiment file: {(SAMPLES / 'fast_pair.toml').resolve()}",
    ]


def test_verbose_info_names_the_experiment_file_or_none(tmp_path):
    stack = tmp_path / "bare.tif"
    tifffile.imwrite(stack, np.zeros((3, 16, 16), np.uint8), photometric="minisblack")
    result = _run("-v", "info", stack, "--frame-rate", "1 kHz")
    assert result.exit_code == 0, result.output
    assert result.stderr == "dropkin: experiment file: none (options and defaults only)\n"
    (tmp_path / "bare.toml").write_text('[recording]\nframe_rate = "1 kHz"\n')
    result = _run("-v", "info", stack)
    assert result.exit_code == 0, result.output
    assert result.stderr == f"dropkin: experiment file: {(tmp_path / 'bare.toml').resolve()}\n"


def test_quiet_wins_over_verbose(tmp_path):
    result = _run("-v", "-q", "info", SAMPLES / "viscous_pair")
    assert result.exit_code == 0 and result.stderr == ""
