"""Issue 18: the figures drawn on two cores (a forked child takes half of them).

The files must be those of the serial path; a failure in the child must come
out as the same one-line error; no process may be left behind. The images
are compared decoded by Pillow, a reader independent of matplotlib, which
wrote them.
"""

from __future__ import annotations

import multiprocessing
import os
import shutil
import sys
import time
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

import dropkin.cli
from dropkin.pipeline import read_fit
from dropkin.report import _jobs, _plots, write_plots
from dropkin.series import read_series

SAMPLES = Path(__file__).resolve().parents[2] / "sample_frames"

pytestmark = pytest.mark.skipif(
    not sys.platform.startswith("linux"), reason="the figures are drawn in parallel on Linux only"
)


@pytest.fixture(scope="module")
def analysed(tmp_path_factory):
    out = tmp_path_factory.mktemp("parallel") / "out"
    result = CliRunner().invoke(
        dropkin.cli.main,
        ["analyze", str(SAMPLES / "fast_pair.tif"), "-o", str(out), "--bootstrap", "20"],
    )
    assert result.exit_code == 0, result.output
    return out


def _copy(out: Path, to: Path) -> Path:
    """The analysis folder without its figures (its overlays kept, for the montage)."""
    shutil.copytree(out, to, ignore=shutil.ignore_patterns("plots"))
    return to


def _pixels(path: Path) -> np.ndarray:
    from PIL import Image

    with Image.open(path) as image:
        return np.asarray(image.convert("RGBA"))


def _wait_for_other(folder: Path, k: int) -> int:
    """A job that says it started, then waits (10 s at most) until two have."""
    (folder / f"{k}.started").write_text(str(os.getpid()))
    deadline = time.monotonic() + 10
    while len(list(folder.glob("*.started"))) < 2 and time.monotonic() < deadline:
        time.sleep(0.01)
    return os.getpid()


def test_two_jobs_that_wait_for_each_other_run_in_two_processes(tmp_path):
    # each job waits until the other has started: only a second process can start it
    jobs = [lambda k=k: _wait_for_other(tmp_path, k) for k in range(2)]
    pids = _jobs.run_jobs(jobs, parallel=True)
    assert os.getpid() in pids and len(set(pids)) == 2
    assert not multiprocessing.active_children()


def test_results_come_back_in_the_order_of_the_jobs():
    jobs = [lambda k=k: (time.sleep(0.02), k * k)[1] for k in range(7)]
    assert _jobs.run_jobs(jobs, parallel=True) == [k * k for k in range(7)]
    assert _jobs.run_jobs(jobs, parallel=False) == [k * k for k in range(7)]


def test_a_job_that_fails_in_the_child_is_run_again_here(tmp_path):
    parent = os.getpid()

    def fussy(k):  # fails wherever it is not the parent that runs it
        time.sleep(0.05)
        if os.getpid() != parent:
            raise RuntimeError("only in the child")
        return k

    assert _jobs.run_jobs([lambda k=k: fussy(k) for k in range(4)], parallel=True) == [0, 1, 2, 3]
    assert not multiprocessing.active_children()


def test_a_failing_job_raises_its_own_error_here_and_leaves_no_process():
    def broken():
        time.sleep(0.05)
        raise ValueError("figure 2 cannot be drawn")

    jobs = [lambda: time.sleep(0.05), lambda: time.sleep(0.05), broken, lambda: None]
    with pytest.raises(ValueError, match="^figure 2 cannot be drawn$"):
        _jobs.run_jobs(jobs, parallel=True)
    assert not multiprocessing.active_children()


def test_no_child_without_two_cores_or_with_threads(monkeypatch):
    import threading

    monkeypatch.setattr(os, "sched_getaffinity", lambda pid: {0})
    assert not _jobs.two_cores()
    monkeypatch.setattr(os, "sched_getaffinity", lambda pid: {0, 1})
    monkeypatch.setattr(threading, "active_count", lambda: 2)
    assert not _jobs.two_cores()


@pytest.mark.parametrize("formats", [("png",), ("png", "svg", "pdf")])
def test_parallel_and_serial_figures_are_the_same(analysed, tmp_path, monkeypatch, formats):
    records = {
        "series": read_series(analysed / "radius.csv"),
        "verdict": read_fit(analysed / "fit.json"),
    }
    written = {}
    for name, parallel in (("serial", False), ("parallel", True)):
        monkeypatch.setattr(_jobs, "two_cores", lambda parallel=parallel: parallel)
        folder = _copy(analysed, tmp_path / name)
        written[name] = write_plots(folder, **records, formats=formats)
    names = [p.relative_to(tmp_path / "serial") for p in written["serial"]]
    assert names == [p.relative_to(tmp_path / "parallel") for p in written["parallel"]]
    assert {p.stem for p in written["serial"]} >= {"radius", "residuals", "overlays"}
    for name in names:
        serial, parallel = tmp_path / "serial" / name, tmp_path / "parallel" / name
        if name.suffix == ".png":
            assert np.array_equal(_pixels(serial), _pixels(parallel)), name
        assert serial.read_bytes() == parallel.read_bytes(), name
    assert not multiprocessing.active_children()


def test_a_figure_that_fails_in_parallel_gives_one_line(analysed, tmp_path, monkeypatch):
    def no_space(*args, **kwargs):
        raise OSError(28, "No space left on device", str(tmp_path / "plots" / "residuals.png"))

    monkeypatch.setattr(_jobs, "two_cores", lambda: True)
    monkeypatch.setattr(_plots, "_plot_residuals", no_space)
    folder = _copy(analysed, tmp_path / "out")
    result = CliRunner().invoke(
        dropkin.cli.main,
        ["fit", str(folder / "radius.csv"), "-o", str(folder), "--bootstrap", "20"],
    )
    assert result.exit_code == 1
    lines = result.output.strip().splitlines()
    assert lines[-1] == (
        f"dropkin: error: {tmp_path / 'plots' / 'residuals.png'}: No space left on device"
    )
    assert "Traceback" not in result.output
    assert not multiprocessing.active_children()
    # the run is built aside and published whole: nothing of it is left
    assert not [p for p in folder.rglob(".*")] + [p for p in tmp_path.glob(".*")]
    assert not (folder / "plots").exists()


def test_the_montage_read_as_stored_is_the_montage_read_as_floats(analysed, tmp_path, monkeypatch):
    # the frames are read as 8-bit arrays, no longer through matplotlib's reader, which
    # gives floats in [0, 1]: the montage must not change (one frame given an alpha channel)
    import matplotlib.image as mpimg
    from PIL import Image

    records = {
        "series": read_series(analysed / "radius.csv"),
        "verdict": read_fit(analysed / "fit.json"),
    }
    monkeypatch.setattr(_jobs, "two_cores", lambda: False)
    montages = []
    for name in ("stored", "floats"):
        folder = _copy(analysed, tmp_path / name)
        first = sorted((folder / "overlays").glob("*.png"))[0]
        with Image.open(first) as image:
            image.convert("RGBA").save(first)
        if name == "floats":
            monkeypatch.setattr(_plots, "_read_frame", mpimg.imread)
        write_plots(folder, **records)
        montages.append(_pixels(folder / "plots" / "overlays.png"))
    assert montages[0].shape[1] == 1020 and montages[0].std() > 0
    assert np.array_equal(*montages)


def _gone(pid: int) -> bool:
    """Whether process `pid` has ended (a zombie no one has reaped yet counts)."""
    try:
        status = Path(f"/proc/{pid}/status").read_text()
    except FileNotFoundError:
        return True
    return "\nState:\tZ" in status


def test_a_parent_killed_outright_takes_the_child_with_it(tmp_path):
    import signal
    import subprocess

    script = (
        "import os, pathlib, sys, time\n"
        "from dropkin.report._jobs import run_jobs\n"
        "folder = pathlib.Path(sys.argv[1])\n"
        "def job(k):\n"
        "    (folder / f'{k}.pid').write_text(str(os.getpid()))\n"
        "    time.sleep(60)\n"
        "run_jobs([lambda: job(0), lambda: job(1)], parallel=True)\n"
    )
    parent = subprocess.Popen([sys.executable, "-c", script, str(tmp_path)])
    try:
        deadline = time.monotonic() + 30
        while len(list(tmp_path.glob("*.pid"))) < 2 and time.monotonic() < deadline:
            time.sleep(0.05)
        pids = {int(p.read_text()) for p in tmp_path.glob("*.pid")}
        assert parent.pid in pids and len(pids) == 2
    finally:
        parent.send_signal(signal.SIGKILL)
        parent.wait()
    (child,) = pids - {parent.pid}
    deadline = time.monotonic() + 10
    while not _gone(child) and time.monotonic() < deadline:
        time.sleep(0.05)
    assert _gone(child)
