"""Output folders are transactions: built aside, published whole, never mixed.

Issue 17, finding 3: ``analyze`` into a folder holding another recording's
results kept its ``angles.csv`` and overlay frames and inlined them into the
new report; ``--overlays 0`` still inlined the old overlays; a failed re-run
left a new ``radius.csv`` beside the old ``fit.json``. Now a folder holding
another run's results is refused in one line, ``--overwrite`` replaces it
whole, a failed run leaves it as it was, and ``dropkin fit`` into the folder
of its own ``radius.csv`` keeps the measurement and replaces an earlier fit.
"""

from __future__ import annotations

import contextlib
import json
import os
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from click.testing import CliRunner

from dropkin._atomic import TEMPORARY_PREFIX, staged_folder
from dropkin.cli import main

SAMPLES = Path(__file__).resolve().parents[1] / "sample_frames"


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


def _snapshot(folder: Path) -> dict[str, bytes]:
    return {
        p.relative_to(folder).as_posix(): p.read_bytes()
        for p in sorted(folder.rglob("*"))
        if p.is_file()
    }


def _error(result) -> str:
    lines = [line for line in result.output.splitlines() if line.startswith("dropkin: error")]
    assert len(lines) == 1, result.output
    return lines[0]


@pytest.fixture(scope="module")
def spreading_measured(tmp_path_factory) -> Path:
    """A spreading drop's measurement: radius.csv, angles.csv, overlays/."""
    out = tmp_path_factory.mktemp("spread") / "out"
    result = _run("measure", SAMPLES / "spreading_drop", "-o", out, "--overlays", "3")
    assert result.exit_code == 0, result.output
    assert (out / "angles.csv").is_file() and len(list((out / "overlays").iterdir())) == 3
    return out


def test_a_folder_of_another_run_is_refused_and_left_as_it_was(spreading_measured, tmp_path):
    out = tmp_path / "out"
    shutil.copytree(spreading_measured, out)
    before = _snapshot(out)
    result = _run("analyze", SAMPLES / "viscous_pair", "-o", out, "--bootstrap", "0")
    assert result.exit_code == 1
    line = _error(result)
    assert str(out) in line and "--overwrite" in line and "angles.csv" in line
    assert _snapshot(out) == before
    again = _run("measure", SAMPLES / "viscous_pair", "-o", out)
    assert again.exit_code == 1 and "--overwrite" in _error(again)


def test_overwrite_replaces_the_folder_whole(spreading_measured, tmp_path):
    out = tmp_path / "out"
    shutil.copytree(spreading_measured, out)
    result = _run(
        "analyze", SAMPLES / "viscous_pair", "-o", out, "--overwrite",
        "--overlays", "0", "--bootstrap", "0",
    )  # fmt: skip
    assert result.exit_code == 0, result.output
    names = sorted(p.name for p in out.iterdir())
    assert names == [
        "datapackage.json", "fit.json", "measure.json", "plots", "radius.csv", "report.html"
    ]  # fmt: skip
    # The report inlines no overlay frame (there are none) and no angle of the other drop.
    report = (out / "report.html").read_text(encoding="utf-8")
    # (looked for by the figure's and the table's names, not the bare word, which
    # a folder's path may hold)
    assert "frame_0" not in report
    assert "contact_angle" not in report and "angles.csv" not in report
    assert "contact angle" not in report.lower()
    package = json.loads((out / "datapackage.json").read_text(encoding="utf-8"))
    assert not [r for r in package["resources"] if r["path"].startswith("overlays/")]
    assert not list(tmp_path.glob(TEMPORARY_PREFIX + "*")), "the old folder was not removed"


def test_overwrite_never_removes_files_dropkin_does_not_write(tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    (out / "notes.txt").write_text("mine")
    result = _run("measure", SAMPLES / "viscous_pair", "-o", out, "--overwrite")
    assert result.exit_code == 1 and "notes.txt" in _error(result)
    assert (out / "notes.txt").read_text() == "mine"


def test_a_failed_rerun_keeps_the_folder_and_a_failed_fit_replaces_it_whole(
    spreading_measured, tmp_path
):
    out = tmp_path / "out"
    done = _run("fit", spreading_measured / "radius.csv", "-o", out, "--bootstrap", "0")
    assert done.exit_code == 0, done.output
    before = _snapshot(out)
    assert "fit.json" in before
    # Fails after the folder is claimed (the liquid is checked inside the run).
    bad = _run("analyze", SAMPLES / "viscous_pair", "-o", out, "--overwrite", "--liquid", "nope")
    assert bad.exit_code == 1 and "nope" in _error(bad)
    assert _snapshot(out) == before
    # A recording cut to its first four frames: too few to fit. A failed fit writes
    # its files (the report says why); they replace the earlier run's whole.
    early = tmp_path / "early"
    shutil.copytree(SAMPLES / "viscous_pair", early)
    text = (early / "experiment.toml").read_text()
    (early / "experiment.toml").write_text(
        text.replace('pixel_size = "2.5 um"', 'pixel_size = "2.5 um"\nlast_frame = 3')
    )
    cut = _run("analyze", early, "-o", out, "--overwrite", "--bootstrap", "0")
    assert cut.exit_code == 1 and "Too few points" in _error(cut)
    measured = json.loads((out / "measure.json").read_text(encoding="utf-8"))
    fit = json.loads((out / "fit.json").read_text(encoding="utf-8"))
    assert measured["frames"] == 4 and fit["success"] is False
    assert len((out / "radius.csv").read_text().splitlines()) == 1 + 4
    assert (out / "report.html").read_bytes() != before["report.html"]


def test_measure_then_fit_into_the_same_folder_keeps_the_measurement(tmp_path):
    out = tmp_path / "out"
    assert _run("measure", SAMPLES / "viscous_pair", "-o", out, "--overlays", "2").exit_code == 0
    measured = _snapshot(out)
    for _ in range(2):  # a second fit replaces the first one's outputs
        result = _run("fit", out / "radius.csv", "-o", out, "--bootstrap", "0")
        assert result.exit_code == 0, result.output
        now = _snapshot(out)
        for name in ("radius.csv", "measure.json", "overlays/frame_000000.png"):
            if name in measured:
                assert now[name] == measured[name]
        assert "fit.json" in now and "report.html" in now
    fit = json.loads((out / "fit.json").read_text(encoding="utf-8"))
    assert fit["provenance"]["radius_csv"] == "radius.csv"
    # into a folder of another run: refused
    other = tmp_path / "other"
    other.mkdir()
    (other / "radius.csv").write_text("frame\n")
    refused = _run("fit", out / "radius.csv", "-o", other, "--bootstrap", "0")
    assert refused.exit_code == 1 and "--overwrite" in _error(refused)


def test_staged_folder_publishes_whole_or_not_at_all(tmp_path):
    target = tmp_path / "out"
    target.mkdir()
    (target / "a.txt").write_text("old")
    with pytest.raises(RuntimeError), staged_folder(target) as stage:
        (stage / "a.txt").write_text("new")
        raise RuntimeError("failed half-way")
    assert (target / "a.txt").read_text() == "old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"]
    with staged_folder(target, keep=["a.txt"]) as stage:
        (stage / "b.txt").write_text("new")
    assert sorted(p.name for p in target.iterdir()) == ["a.txt", "b.txt"]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"]


def test_the_working_directory_is_not_an_output_folder(tmp_path, monkeypatch):
    here = tmp_path / "here"
    here.mkdir()
    monkeypatch.chdir(here)
    result = _run("measure", SAMPLES / "viscous_pair", "-o", ".", "--overwrite")
    assert result.exit_code == 1 and "working directory" in _error(result)
    assert list(here.iterdir()) == []


def _stages(folder: Path) -> list[Path]:
    return sorted(p for p in folder.iterdir() if p.name.startswith(TEMPORARY_PREFIX))


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="POSIX signals")
def test_the_next_run_removes_a_killed_runs_staging_folder_and_no_live_ones(tmp_path):
    # Issue 17: a run killed while building its folder left the hidden staging folder
    # beside the output for good. The next run writing there removes it, but never one
    # a live process may be building (its process id alive) or one made on another
    # machine (its process id means nothing here).
    from dropkin._atomic import _host

    parent = tmp_path / "results"
    command = [sys.executable, "-m", "dropkin", "-q", "analyze", str(SAMPLES / "viscous_pair")]
    proc = subprocess.Popen(
        [*command, "-o", str(parent / "a")],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.DEVNULL,
        start_new_session=True,
    )
    try:
        deadline = time.monotonic() + 60
        while not (parent.is_dir() and _stages(parent)):
            assert proc.poll() is None and time.monotonic() < deadline
            time.sleep(0.01)
    finally:
        with contextlib.suppress(ProcessLookupError):
            os.killpg(proc.pid, signal.SIGKILL)
        proc.wait(timeout=10)
    (killed,) = _stages(parent)
    live = parent / f"{TEMPORARY_PREFIX}b.{os.getpid()}@{_host()}.x1"
    elsewhere = parent / f"{TEMPORARY_PREFIX}c.{proc.pid}@00000000.x2"
    for folder in (live, elsewhere):
        folder.mkdir()
    result = _run("measure", SAMPLES / "viscous_pair", "-o", parent / "d", "--overlays", "0")
    assert result.exit_code == 0, result.output
    assert not killed.exists()
    assert _stages(parent) == sorted([live, elsewhere])
    assert sorted(p.name for p in parent.iterdir() if p not in (live, elsewhere)) == ["d"]
