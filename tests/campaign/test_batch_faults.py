"""dropkin batch under faults (issue 17): killed workers, a killed or terminated parent,
two batches on one OUT, paths that are not UTF-8, a full disk.

The signal tests run the real command line in a subprocess of its own session,
kill what they mean to kill, and end by killing whatever is left of that
session, so no process outlives a test. They poll with timeouts, never sleep
long: each recording's analysis takes seconds, a kill lands in the first one.
"""

from __future__ import annotations

import contextlib
import errno
import os
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from click.testing import CliRunner

from dropkin.campaign._catalogue import read_rows
from dropkin.campaign._lock import LOCK_NAME
from dropkin.campaign._runner import run_batch
from dropkin.cli import main

pytestmark = pytest.mark.skipif(
    not sys.platform.startswith("linux"), reason="reads /proc, sends POSIX signals"
)

# The entries of the conftest campaign's recordings (frame rates as it renders them).
_ENTRIES = {
    "mu050": ("mu050.tif", "50 mPa*s"),
    "mu080": ("mu080.tif", "80 mPa*s"),
    "cut": ("cut.tif", "100 mPa*s"),
}


def _manifest(campaign, folder: Path, labels, sub: str = "") -> Path:
    """A manifest in `folder` over copies of some of the campaign's recordings."""
    folder.mkdir(parents=True, exist_ok=True)
    entries = []
    for label in labels:
        name, viscosity = _ENTRIES[label]
        shutil.copy(campaign.folder / name, folder / name)
        rate = 1e5 if label == "cut" else 65e-3 / float(viscosity.split()[0]) * 1e3 / 6.25e-6
        entries += [
            "[[recordings]]",
            f'path = "{name}"',
            f'recording = {{ frame_rate = "{rate!r} Hz" }}',
            f'liquid = {{ viscosity = "{viscosity}" }}',
            "",
        ]
    return campaign.write_manifest(folder, entries, bootstrap=10)


def _start(manifest: Path, out: Path, *options: str) -> subprocess.Popen:
    command = [sys.executable, "-m", "dropkin", "-q", "batch", str(manifest), "-o", str(out)]
    return subprocess.Popen(
        [*command, *options],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
        start_new_session=True,  # its own process group: the clean-up kills all of it
    )


@contextlib.contextmanager
def _session(proc: subprocess.Popen):
    """Run the block; then kill whatever is left of `proc`'s process group."""
    try:
        yield proc
    finally:
        with contextlib.suppress(ProcessLookupError, PermissionError):
            os.killpg(proc.pid, signal.SIGKILL)
        with contextlib.suppress(subprocess.TimeoutExpired):
            proc.communicate(timeout=10)


def _state(pid: int) -> str | None:
    """The process's state letter from /proc (None when it is gone)."""
    try:
        text = Path(f"/proc/{pid}/stat").read_text()
    except OSError:
        return None
    return text.rsplit(")", 1)[1].split()[0]


def _alive(pid: int) -> bool:
    return _state(pid) not in (None, "Z", "X")


def _children(pid: int) -> list[int]:
    found = []
    for entry in Path("/proc").iterdir():
        if entry.name.isdigit():
            try:
                text = (entry / "stat").read_text()
            except OSError:
                continue
            if int(text.rsplit(")", 1)[1].split()[1]) == pid and _alive(int(entry.name)):
                found.append(int(entry.name))
    return found


def _wait_for(condition, timeout: float, what: str):
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        value = condition()
        if value:
            return value
        time.sleep(0.05)
    raise AssertionError(f"timed out waiting for {what}")


def _work_folders(out: Path) -> list[Path]:
    return sorted(out.glob(".work-*")) if out.is_dir() else []


def _busy_workers(proc: subprocess.Popen, out: Path, n: int) -> list[int]:
    """Wait until `n` workers run a recording each; their process ids."""

    def ready():
        assert proc.poll() is None, proc.communicate()
        children = _children(proc.pid)
        return children if len(children) == n and len(_work_folders(out)) == n else None

    return _wait_for(ready, 60, f"{n} busy workers")


def _held(out: Path, label: str) -> bool:
    """Whether a worker holds `label` now (its work folder ``.work-<label>-*`` exists)."""
    return any(p.name.startswith(f".work-{label}-") for p in _work_folders(out))


def _published(out: Path) -> list[str]:
    return sorted(p.name for p in out.iterdir() if p.is_dir() and not p.name.startswith("."))


def test_a_killed_worker_becomes_a_failure_row_and_the_rest_go_on(viscosity_campaign, tmp_path):
    # Issue 17, finding 1: SIGKILL of a --jobs 2 worker (what the out-of-memory killer
    # does) hung the batch for ever. Both workers are killed in the recordings they
    # hold (the first two, or a quick one's successor: which ones is read from their
    # work folders); each of those gets a failure row naming the signal, new workers
    # do the rest.
    manifest = _manifest(viscosity_campaign, tmp_path / "m", ["mu050", "mu080", "cut"])
    out = tmp_path / "out"
    with _session(_start(manifest, out, "--jobs", "2")) as proc:
        workers = _busy_workers(proc, out, 2)
        held = {label for label in ("mu050", "mu080", "cut") if _held(out, label)}
        for pid in workers:
            os.kill(pid, signal.SIGKILL)
        _, err = proc.communicate(timeout=60)
    assert proc.returncode == 3, err
    rows = {row["label"]: row for row in read_rows(out)}
    assert sorted(rows) == ["cut", "mu050", "mu080"]
    assert len(held) == 2
    for label in held:
        error = rows[label]["error"]
        assert rows[label]["status"] == "failed" and "killed by SIGKILL" in error
        assert f"{label}.tif" in error
    for label in {"mu050", "mu080"} - held:
        assert rows[label]["status"] == "complete", rows[label]
    if "cut" not in held:
        assert rows["cut"]["status"] == "failed" and "damaged or truncated" in rows["cut"]["error"]
    assert "Traceback" not in err
    assert _published(out) == [] and _work_folders(out) == []


def _start_two_busy_workers(campaign, tmp_path):
    manifest = _manifest(campaign, tmp_path / "m", ["mu050", "mu080"])
    out = tmp_path / "out"
    proc = _start(manifest, out, "--jobs", "2")
    return proc, out


def test_a_killed_parent_takes_its_workers_with_it(viscosity_campaign, tmp_path):
    # Issue 17, finding 8: SIGKILL of the parent left its workers running; they published
    # folders without catalogue rows and printed BrokenPipeError tracebacks.
    proc, out = _start_two_busy_workers(viscosity_campaign, tmp_path)
    with _session(proc):
        workers = _busy_workers(proc, out, 2)
        os.kill(proc.pid, signal.SIGKILL)
        killed = time.monotonic()
        _wait_for(lambda: not any(map(_alive, workers)), 10, "the workers to die")
        gone_after = time.monotonic() - killed
        _, err = proc.communicate(timeout=10)
    assert gone_after < 3.0
    assert "Traceback" not in err and "BrokenPipeError" not in err
    assert _published(out) == [] and read_rows(out) == []
    # The next run takes the dead run's lock and removes its work folders.
    assert _work_folders(out) and (out / LOCK_NAME).exists()
    cut_only = _manifest(viscosity_campaign, tmp_path / "m2", ["cut"])
    summary = run_batch(cut_only, out)
    assert [label for label, _ in summary.failed] == ["cut"]
    assert sorted(p.name for p in out.iterdir() if p.name.startswith(".")) == []


def test_sigterm_to_the_parent_stops_the_batch_with_one_line_and_exit_143(
    viscosity_campaign, tmp_path
):
    # Issue 17, findings 8 and 12: SIGTERM printed nothing and left the workers running.
    proc, out = _start_two_busy_workers(viscosity_campaign, tmp_path)
    with _session(proc):
        workers = _busy_workers(proc, out, 2)
        proc.send_signal(signal.SIGTERM)
        _, err = proc.communicate(timeout=30)
        _wait_for(lambda: not any(map(_alive, workers)), 10, "the workers to die")
    assert proc.returncode == 143, err
    line = (
        "dropkin: terminated (SIGTERM): 0 of 2 recordings finished and catalogued; "
        "run the same command again to do the rest"
    )
    assert err.strip().splitlines() == [line]
    assert _published(out) == [] and read_rows(out) == []
    assert sorted(p.name for p in out.iterdir() if p.name.startswith(".")) == []


def test_a_second_batch_on_the_same_output_folder_refuses_and_leaves_the_first_alone(
    viscosity_campaign, tmp_path
):
    # Issue 17, finding 5: a second batch on the same OUT removed the first one's work
    # folders at start-up, and with no lock both analysed everything.
    manifest = _manifest(viscosity_campaign, tmp_path / "m", ["mu050"])
    out = tmp_path / "out"
    with _session(_start(manifest, out)) as proc:
        (work,) = _wait_for(lambda: _work_folders(out), 60, "the first batch's work folder")
        second = CliRunner().invoke(main, ["batch", str(manifest), "-o", str(out)])
        assert work.is_dir(), "the second batch removed the first one's work folder"
        assert proc.poll() is None
        proc.send_signal(signal.SIGTERM)
        _, err = proc.communicate(timeout=30)
    assert second.exit_code == 1
    (line,) = second.stderr.strip().splitlines()
    assert line == (
        f"dropkin: error: {out}: is in use by another dropkin batch (process {proc.pid}) "
        "(expected that batch to finish, or another output folder)"
    )
    assert proc.returncode == 143 and "Traceback" not in err
    assert not work.exists() and not (out / LOCK_NAME).exists()


def test_a_recording_whose_path_is_not_utf8_is_a_row_in_a_pool_batch(viscosity_campaign, tmp_path):
    # Issue 17, finding 2 (batch): a folder name with the bytes \xff\xfe aborted every
    # batch with a UnicodeEncodeError in the catalogue writer, losing finished rows.
    base = tmp_path / "m"
    manifest = _manifest(viscosity_campaign, base, ["mu050", "cut"])
    odd = os.path.join(os.fsencode(base), b"rec\xff\xfe")
    os.mkdir(odd)
    for name in ("mu050.tif", "cut.tif"):
        os.replace(
            os.path.join(os.fsencode(base), name.encode()), os.path.join(odd, name.encode())
        )
    text = manifest.read_text(encoding="utf-8").replace('path = "', 'glob = "*/')
    manifest.write_text(text, encoding="utf-8")
    out = tmp_path / "out"
    with _session(_start(manifest, out, "--jobs", "2")) as proc:
        _, err = proc.communicate(timeout=120)
    assert proc.returncode == 3, err  # cut.tif fails; mu050 is analysed
    assert "Traceback" not in err and "rec\\xff\\xfe/cut.tif" in err
    rows = {row["label"]: row for row in read_rows(out)}
    assert sorted(rows) == ["cut", "mu050"]
    good = rows["mu050"]
    assert good["status"] == "complete", good["error"]
    # The path's own bytes, kept whole (a BLOB); the message shows them as \xff\xfe.
    assert good["source"] == os.path.join(odd, b"mu050.tif")
    assert rows["cut"]["status"] == "failed" and "rec\\xff\\xfe/cut.tif" in rows["cut"]["error"]
    copy = (out / "mu050" / "experiment.toml").read_text(encoding="utf-8")
    assert "rec\\xff\\xfe/mu050.tif" in copy
    assert _work_folders(out) == []


def test_a_full_disk_is_a_row_naming_the_file_and_the_batch_goes_on(
    viscosity_campaign, tmp_path, monkeypatch
):
    # Issue 17, finding 12: a disk-full error named no file (write() and close() know
    # only a descriptor); it was an "internal error" row in a batch.
    import dropkin._atomic

    def full(fd):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(dropkin._atomic.os, "fsync", full)
    manifest = _manifest(viscosity_campaign, tmp_path / "m", ["mu050", "cut"])
    summary = run_batch(manifest, tmp_path / "out")
    failed = dict(summary.failed)
    assert sorted(failed) == ["cut", "mu050"]
    # The first file the analysis writes is the experiment as used.
    assert failed["mu050"].endswith("/experiment.toml: No space left on device")
    assert "internal error" not in failed["mu050"]


def test_a_full_disk_names_the_file_on_the_command_line(tmp_path):
    # Issue 17, finding 12, through the command line: a file size limit (RLIMIT_FSIZE,
    # as ulimit -f) makes the writes fail with EFBIG, a full disk's kind of error.
    import resource

    def limit():
        resource.setrlimit(resource.RLIMIT_FSIZE, (16384, 16384))

    target = tmp_path / "shot.tif"
    command = [sys.executable, "-m", "dropkin", "synth", str(target), "--frames", "8"]
    done = subprocess.run(command, capture_output=True, text=True, timeout=120, preexec_fn=limit)
    assert done.returncode == 1
    assert done.stderr.strip().splitlines() == [f"dropkin: error: {target}: File too large"]
    # The catalogue: one line naming it, not an sqlite3 traceback.
    cut = tmp_path / "c"
    cut.mkdir()
    (cut / "m.toml").write_text('[[recordings]]\npath = "x.tif"\n', encoding="utf-8")
    (cut / "x.tif").write_bytes(b"not a tiff")
    out = tmp_path / "out"
    command = [sys.executable, "-m", "dropkin", "batch", str(cut / "m.toml"), "-o", str(out)]

    def tiny():
        resource.setrlimit(resource.RLIMIT_FSIZE, (4096, 4096))

    done = subprocess.run(command, capture_output=True, text=True, timeout=120, preexec_fn=tiny)
    assert done.returncode == 1, done.stderr
    (line,) = done.stderr.strip().splitlines()
    assert line.startswith(
        f"dropkin: error: {out / 'catalogue.sqlite'}: cannot be opened or written"
    )


def test_a_crash_by_signal_with_one_job_is_a_row_and_the_batch_goes_on(
    viscosity_campaign, tmp_path
):
    # Issue 17, "a recording's failure is a row, never an abort": with --jobs 1 the
    # analysis ran in the batch's own process, so a crash by signal there (a native
    # decoder's) ended the whole batch. The test hook makes the analysis of "cut" send
    # its own process SIGSEGV.
    from dropkin.campaign._task import TEST_CRASH_LABEL

    manifest = _manifest(viscosity_campaign, tmp_path / "m", ["cut", "mu050"])
    out = tmp_path / "out"
    command = [sys.executable, "-m", "dropkin", "-q", "batch", str(manifest), "-o", str(out)]
    env = {**os.environ, TEST_CRASH_LABEL: "cut"}
    with _session(
        subprocess.Popen(
            command,
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
            env=env,
            start_new_session=True,
        )
    ) as proc:
        _, err = proc.communicate(timeout=120)
    assert proc.returncode == 3, err
    rows = {row["label"]: row for row in read_rows(out)}
    assert sorted(rows) == ["cut", "mu050"]
    assert rows["cut"]["status"] == "failed"
    assert "cut.tif: the process analysing it was killed by SIGSEGV" in rows["cut"]["error"]
    assert rows["mu050"]["status"] == "complete", rows["mu050"]["error"]
    assert "Traceback" not in err and "killed by SIGSEGV" in err
    assert _published(out) == ["mu050"] and _work_folders(out) == []


def test_a_worker_that_dies_before_starting_its_task_hands_it_back_once(
    viscosity_campaign, tmp_path
):
    # A worker that died idle just as it was handed a task gave that task a "killed"
    # row though it never started. The test hook makes a worker handed a task take a
    # token file and kill itself with SIGKILL before starting it.
    from dropkin.campaign._workers import TEST_DIE_ON_HANDOUT

    manifest = _manifest(viscosity_campaign, tmp_path / "m", ["cut", "mu050"])
    tokens = tmp_path / "tokens"
    tokens.mkdir()
    (tokens / "1").touch()
    out = tmp_path / "out"
    command = [sys.executable, "-m", "dropkin", "-q", "batch", str(manifest), "-o", str(out)]
    env = {**os.environ, TEST_DIE_ON_HANDOUT: str(tokens)}
    done = subprocess.run(
        [*command, "--jobs", "2"], capture_output=True, text=True, timeout=120, env=env
    )
    assert not any(tokens.iterdir())  # the hook did kill a worker
    assert done.returncode == 3, done.stderr  # cut.tif is damaged: its own failure
    rows = {row["label"]: row for row in read_rows(out)}
    assert rows["mu050"]["status"] == "complete", rows["mu050"]["error"]
    assert "damaged or truncated" in rows["cut"]["error"]
    assert "killed" not in rows["cut"]["error"]
    # Handed back once only: a task whose workers die twice before starting is a row.
    for name in ("1", "2"):
        (tokens / name).touch()
    done = subprocess.run(command, capture_output=True, text=True, timeout=120, env=env)
    assert done.returncode == 3, done.stderr  # mu050 is unchanged: cut alone is run again
    row = next(row for row in read_rows(out) if row["label"] == "cut")
    assert "the process analysing it was killed by SIGKILL" in row["error"]
    assert "Traceback" not in done.stderr and _work_folders(out) == []


def test_a_recording_that_crashes_its_dask_workers_is_a_row(
    viscosity_campaign, tmp_path, monkeypatch
):
    # On a Dask cluster the scheduler gives a task whose worker died to another one,
    # and after `allowed-failures` deaths gives up (KilledWorker): that ended the whole
    # batch with a traceback. Now it is the recording's failed row.
    distributed = pytest.importorskip("distributed")
    import dask

    from dropkin.campaign._task import TEST_CRASH_LABEL

    monkeypatch.setenv(TEST_CRASH_LABEL, "cut")  # the workers' processes inherit it
    manifest = _manifest(viscosity_campaign, tmp_path / "m", ["cut"])
    out = tmp_path / "out"
    with (
        dask.config.set({"distributed.scheduler.allowed-failures": 0}),
        distributed.LocalCluster(
            n_workers=1, threads_per_worker=1, processes=True, dashboard_address=":0"
        ) as cluster,
    ):
        summary = run_batch(manifest, out, scheduler=cluster.scheduler_address)
    ((label, error),) = summary.failed
    assert label == "cut" and "its Dask task failed (KilledWorker" in error
    (row,) = read_rows(out)
    assert row["status"] == "failed" and row["error"] == error
