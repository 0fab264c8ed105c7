"""Atomic outputs: a run killed at any moment leaves only complete files.

``dropkin analyze`` and ``dropkin measure`` run as real subprocesses of the
installed console script on a small synthetic recording, and are sent
SIGKILL (which no handler can catch or clean up after) at seeded random
moments spread over a run's duration, measured first on a complete run.
After each run, killed or not, every file in the output folder must be either

- one of dropkin's temporary files (name starting ``.dropkin-tmp.``: hidden
  from ``ls`` and from shell globs, skipped by dropkin's readers, removed by
  the next run), or
- a file the complete run also writes, complete (PNG chunks and IEND, JSON
  and SVG that parse, CSV rows of equal width, HTML closed; see conftest.py)
  and byte for byte equal to the complete run's (the outputs are
  deterministic: the plots carry no date), once the record of the run is
  set aside (:func:`_comparable`: each run has its own time and command
  line, which names its output folder).

The kills go into one folder (with ``--overwrite``: a complete run's folder
holds another run's results), so each run also meets what the earlier killed
runs left. Since the output folder is built aside and published whole, a
killed run leaves the folder as it was and its hidden build folder beside it.
A final run into that folder must clean the temporaries and give
exactly the complete run's files.

A deterministic companion kills a process inside a write (between the
temporary file and the rename), which random moments rarely hit.

Measured: 12 kills (7 of analyze, 5 of measure), 45 to 60 s for the file on
2 cores shared with other work (about 35 s of CPU).
"""

from __future__ import annotations

import glob
import json
import re
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from dropkin._atomic import TEMPORARY_PREFIX, is_temporary, remove_temporaries
from dropkin.cli import main

pytestmark = pytest.mark.skipif(
    not hasattr(signal, "SIGKILL"), reason="SIGKILL is POSIX (the atomic rename is not)"
)

#: (arguments, number of kills, seed) per command.
RUNS = {
    "analyze": (["--bootstrap", "10", "--overlays", "3", "--overwrite"], 7, 2024),
    "measure": (["--overlays", "3", "--overwrite"], 5, 2025),
}


def _program() -> str:
    beside = Path(sys.executable).with_name("dropkin")
    found = str(beside) if beside.is_file() else shutil.which("dropkin")
    assert found, "the dropkin console script is not installed (pip install -e .)"
    return found


@pytest.fixture(scope="module")
def recording(tmp_path_factory) -> Path:
    """48 frames of 120 x 192 px: two 1 mm water drops at 25 µm per pixel, 50 kfps."""
    folder = tmp_path_factory.mktemp("kill") / "pair"
    args = ["--frames", "48", "--size", "120x192", "--pixel-size", "25 um"]
    args += ["--frame-rate", "50 kHz", "--contact-frame", "3.5"]
    result = CliRunner().invoke(main, ["synth", str(folder), *args])
    assert result.exit_code == 0, result.output
    return folder


def _argv(command, recording, out):
    extra, _, _ = RUNS[command]
    return [_program(), command, str(recording), "-o", str(out), *extra]


def _complete_run(command, recording, out) -> float:
    start = time.perf_counter()
    done = subprocess.run(
        _argv(command, recording, out), capture_output=True, text=True, timeout=300, check=False
    )
    assert done.returncode == 0, done.stderr
    return time.perf_counter() - start


def _files(folder: Path) -> dict[str, bytes]:
    return {
        p.relative_to(folder).as_posix(): p.read_bytes()
        for p in sorted(folder.rglob("*"))
        if p.is_file()
    }


_RUN_ROWS = re.compile(rb"<tr><th>(command line|measured \(UTC\))</th>.*?</tr>")


def _comparable(rel: str, data: bytes) -> bytes:
    """The file without the record of its run: ``provenance.run`` of the JSON files,
    the rows of the report that show it; the rest byte for byte."""
    if rel in ("measure.json", "fit.json"):
        info = json.loads(data)
        info["provenance"].pop("run")
        return json.dumps(info).encode()
    if rel == "report.html":
        return _RUN_ROWS.sub(b"", data)
    return data


def _problems(folder: Path, expected: dict[str, bytes], complete) -> tuple[list[str], int]:
    """What is wrong in `folder` after a kill, and how many temporaries it holds."""
    problems, temporaries = [], 0
    for rel, data in _files(folder).items():
        path = folder / rel
        if is_temporary(path):
            temporaries += 1
            continue
        if rel not in expected:
            problems.append(f"{rel}: not a file the complete run writes")
            continue
        problem = complete(path)
        if problem:
            problems.append(f"{rel}: {problem}")
        elif _comparable(rel, data) != _comparable(rel, expected[rel]):
            problems.append(f"{rel}: differs from the complete run's")
    # What a shell script would pick up: only complete outputs (hidden names skipped).
    for pattern in ("*", "*/*"):
        for name in glob.glob(str(folder / pattern)):
            if Path(name).is_file() and is_temporary(name):
                problems.append(f"{name}: a temporary matched by glob {pattern!r}")
    return problems, temporaries


@pytest.mark.parametrize("command", list(RUNS))
def test_killed_runs_leave_only_complete_files(command, recording, tmp_path, complete):
    _, kills, seed = RUNS[command]
    reference = tmp_path / "reference"
    duration = _complete_run(command, recording, reference)
    expected = _files(reference)
    assert expected and not any(TEMPORARY_PREFIX in rel for rel in expected)
    out = tmp_path / "out"
    rng = np.random.default_rng(seed)
    killed = survived = temporaries = attempts = 0
    failures, moments = [], []
    # Moments uniform over a run's duration; a run that ends before its moment
    # (the machine's load changes) shortens the duration the next are drawn from.
    while killed < kills and attempts < 3 * kills:
        attempts += 1
        moment = float(rng.uniform(0.0, duration))
        start = time.perf_counter()
        process = subprocess.Popen(
            _argv(command, recording, out), stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL
        )
        try:
            process.wait(timeout=moment)
        except subprocess.TimeoutExpired:
            process.send_signal(signal.SIGKILL)
            process.wait()
        was_killed = process.returncode == -signal.SIGKILL
        if was_killed:
            killed += 1
            moments.append(moment)
        else:
            duration = min(duration, time.perf_counter() - start)
        problems, left = _problems(out, expected, complete)
        temporaries += left
        if problems:
            failures.append(f"after the run stopped at {moment:.2f} s: {problems}")
        else:
            survived += was_killed
    _complete_run(command, recording, out)
    final = _files(out)
    summary = (
        f"{command}: {attempts} runs, {killed} killed (at {', '.join(f'{m:.2f}' for m in moments)}"
        f" s), {survived} survived, {temporaries} temporaries seen"
    )
    print(summary)
    assert not failures, summary + "\n" + "\n".join(failures)
    assert killed == kills and survived == killed, summary
    assert {rel: _comparable(rel, data) for rel, data in final.items()} == {
        rel: _comparable(rel, data) for rel, data in expected.items()
    }, "the next run did not clean up or differs: " + summary


CHILD = """
import os, signal, sys
from dropkin._atomic import atomic_path
with atomic_path(sys.argv[1]) as tmp:
    with open(tmp, "w") as handle:
        handle.write("frame,time_s\\n0,")  # half a row
        handle.flush()
        os.kill(os.getpid(), signal.SIGKILL)
"""


def test_a_kill_inside_a_write_keeps_the_old_file_and_a_named_temporary(tmp_path):
    from dropkin._atomic import completed_files

    target = tmp_path / "radius.csv"
    target.write_text("frame,time_s\n0,0.0\n")
    done = subprocess.run([sys.executable, "-c", CHILD, str(target)], check=False)
    assert done.returncode == -signal.SIGKILL
    assert target.read_text() == "frame,time_s\n0,0.0\n"  # the old, complete file
    (left,) = [p for p in tmp_path.iterdir() if p != target]
    assert left.name.startswith(TEMPORARY_PREFIX) and left.suffix == ".csv"
    assert left.read_text() == "frame,time_s\n0,"
    assert completed_files(tmp_path, "*.csv") == [target]
    assert glob.glob(str(tmp_path / "*.csv")) == [str(target)]
    assert remove_temporaries(tmp_path) == [left]


def test_reports_skip_a_temporary_overlay_and_the_next_run_removes_it(recording, tmp_path):
    """A killed run's half-written overlay frame is not inlined, then removed."""
    out = tmp_path / "out"
    runner = CliRunner()
    args = ["analyze", str(recording), "-o", str(out), "--bootstrap", "10", "--overlays", "3"]
    assert runner.invoke(main, args).exit_code == 0
    reference = (out / "report.html").read_bytes()
    frame = sorted((out / "overlays").iterdir())[1]
    half = frame.read_bytes()[:500]
    stray = frame.with_name(f"{TEMPORARY_PREFIX}{frame.stem}.k2j4xq.png")
    stray.write_bytes(half)

    from dropkin.pipeline import write_analysis_outputs

    write_analysis_outputs(out)  # the report and plots alone, as a script would redo them
    assert (out / "report.html").read_bytes() == reference
    assert stray.exists()
    args = ["measure", str(recording), "-o", str(out), "--overlays", "3", "--overwrite"]
    result = runner.invoke(main, args)
    assert result.exit_code == 0, result.output
    assert not stray.exists()  # the folder was replaced whole


def test_remove_temporaries_removes_only_temporaries(tmp_path):
    keep = [tmp_path / "radius.csv", tmp_path / ".hidden.csv", tmp_path / "dropkin-tmp.csv"]
    for path in keep:
        path.write_text("x")
    gone = tmp_path / f"{TEMPORARY_PREFIX}radius.abc123.csv"
    gone.write_text("half")
    (tmp_path / "sub").mkdir()
    deeper = tmp_path / "sub" / f"{TEMPORARY_PREFIX}frame.x.png"
    deeper.write_text("half")
    assert remove_temporaries(tmp_path, tmp_path / "missing") == [gone]
    assert all(p.exists() for p in keep) and deeper.exists()  # sub-folders only when named
