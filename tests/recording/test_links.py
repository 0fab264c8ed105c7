"""Symbolic links inside a recording's folder stay inside it, or are refused by name.

Issue 17, findings 9 and 12: frame files and the recording's
``experiment.toml`` that were symbolic links to files outside were read (and
a campaign copied the experiment into its OUT), and a looping frame link was
skipped in silence. The rule (docs/architecture.md, "The experiment file"
and README): a link in a recording's folder must lead inside that folder, as
resolved; otherwise the command stops with one line naming the link.
"""

from __future__ import annotations

import json
import os
import shutil
import sqlite3
from pathlib import Path

import pytest
from click.testing import CliRunner

from dropkin.cli import main

SAMPLES = Path(__file__).resolve().parents[2] / "sample_frames"

pytestmark = pytest.mark.skipif(not hasattr(os, "symlink"), reason="symbolic links")


def _shot(folder: Path, frames: int = 4) -> Path:
    """A few frames of the viscous sample and its experiment file."""
    folder.mkdir(parents=True)
    for k in range(frames):
        name = f"frame_{k:05d}.png"
        shutil.copyfile(SAMPLES / "viscous_pair" / name, folder / name)
    shutil.copyfile(SAMPLES / "viscous_pair" / "experiment.toml", folder / "experiment.toml")
    return folder


def _one_error(result) -> str:
    lines = [line for line in result.output.splitlines() if line.startswith("dropkin: error")]
    assert result.exit_code == 1 and len(lines) == 1, result.output
    return lines[0]


def test_a_frame_linked_out_of_the_folder_is_refused_by_name(tmp_path):
    shot = _shot(tmp_path / "shot")
    outside = tmp_path / "elsewhere.png"
    shutil.copyfile(SAMPLES / "viscous_pair" / "frame_00010.png", outside)
    (shot / "frame_00004.png").symlink_to(outside)
    result = CliRunner().invoke(main, ["measure", str(shot), "-o", str(tmp_path / "out")])
    line = _one_error(result)
    assert "frame_00004.png" in line and "leading out of the recording's folder" in line
    assert not (tmp_path / "out").exists()


def test_a_frame_linked_inside_the_folder_is_read(tmp_path):
    shot = _shot(tmp_path / "shot")
    (shot / "kept").mkdir()
    shutil.move(shot / "frame_00003.png", shot / "kept" / "frame.png")
    (shot / "frame_00003.png").symlink_to(Path("kept") / "frame.png")
    result = CliRunner().invoke(main, ["info", str(shot), "--json"])
    assert result.exit_code == 0, result.output
    assert json.loads(result.output)["frames"] == 4  # the linked frame among them


def test_a_looping_frame_link_is_refused_by_name(tmp_path):
    shot = _shot(tmp_path / "shot")
    (shot / "frame_00009.png").symlink_to("frame_00009.png")
    line = _one_error(CliRunner().invoke(main, ["info", str(shot)]))
    assert "frame_00009.png" in line and "loops or leads nowhere" in line


def test_an_experiment_file_linked_out_of_the_folder_is_refused(tmp_path):
    shot = _shot(tmp_path / "shot")
    outside = tmp_path / "secret.toml"
    shutil.move(shot / "experiment.toml", outside)
    (shot / "experiment.toml").symlink_to(outside)
    line = _one_error(CliRunner().invoke(main, ["info", str(shot)]))
    assert "experiment.toml" in line and "leading out of the recording's folder" in line


def test_a_campaign_records_the_refusal_and_copies_nothing(tmp_path):
    shot = _shot(tmp_path / "campaign" / "shot")
    outside = tmp_path / "secret.toml"
    shutil.move(shot / "experiment.toml", outside)
    (shot / "experiment.toml").symlink_to(outside)
    manifest = tmp_path / "campaign" / "campaign.toml"
    manifest.write_text('[campaign]\nname = "links"\n\n[[recordings]]\npath = "shot"\n')
    out = tmp_path / "out"
    result = CliRunner().invoke(main, ["batch", str(manifest), "-o", str(out)])
    assert result.exit_code == 3, result.output
    with sqlite3.connect(out / "catalogue.sqlite") as db:
        status, error = db.execute("select status, error from recordings").fetchone()
    assert status == "failed" and "leading out of the recording's folder" in error
    copies = [p for p in out.rglob("experiment.toml")]
    assert not copies
