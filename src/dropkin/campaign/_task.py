"""One recording of a campaign: analysed into its folder, and its catalogue row.

:func:`run_task` is what every way of running a batch (this process, a
process pool, a Dask cluster) calls for each recording. The outputs are made
in a hidden work folder ``OUT/.work-<label>-*`` and renamed to
``OUT/<label>`` when done, so an interrupted batch leaves either a
recording's whole folder or none of it. A recording that fails gets a row
with its error.
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
import os
import shutil
import signal
import tempfile
import time
from datetime import UTC, datetime
from pathlib import Path

from .._provenance import invoked
from .._version import __version__
from ..errors import DropkinError, readable
from ..pipeline import analyze_into, open_source
from ._manifest import Task
from ._row import sample_columns, series_columns, verdict_columns

__all__ = [
    "run_task",
    "analyze_task",
    "failed_row",
    "make_work_folder",
    "publish_work",
    "settings_sha256",
    "input_fingerprint",
    "WORK_PREFIX",
    "OLD_PREFIX",
]

WORK_PREFIX = ".work-"
OLD_PREFIX = ".old-"

#: For tests only: the label of a recording whose analysis crashes its process by a
#: signal (SIGSEGV, as a native decoder's crash would), to check that a campaign
#: records such a crash as the recording's row.
TEST_CRASH_LABEL = "DROPKIN_TEST_CRASH_LABEL"


def _test_crash(label: str) -> None:
    """The test hook :data:`TEST_CRASH_LABEL` (nothing when it is not set)."""
    if os.environ.get(TEST_CRASH_LABEL) == label:
        os.kill(os.getpid(), signal.SIGSEGV)


def input_fingerprint(source) -> list:
    """Name, size, modification and change times, device and inode of every file
    of a recording.

    A cheap stand-in for reading the whole recording: when it is unchanged, the
    input hash stored in the catalogue is reused. The change time and the inode
    cannot be set back by a user (``touch -r`` and ``cp -p`` set only the
    modification time), so a file rewritten with its size and modification
    time kept is hashed again; any other difference only costs that hash.
    """
    path = Path(source)
    files = sorted(p for p in path.iterdir() if p.is_file()) if path.is_dir() else [path]
    out = []
    for f in files:
        st = f.stat()
        out.append([f.name, st.st_size, st.st_mtime_ns, st.st_ctime_ns, st.st_dev, st.st_ino])
    return out


def settings_sha256(experiment, settings, liquids=None) -> str:
    """SHA-256 of everything but the frames that decides a recording's result.

    That is the experiment as merged (every value, in SI) and the analysis
    settings that change outputs (not the number of jobs or the chunk size).
    A background image and a user's liquid library (`liquids`) enter by
    their content.
    """
    exp = dataclasses.asdict(experiment)
    exp.pop("path", None)
    analysis = settings.result_settings()
    if analysis["background"] is not None:
        with open(analysis["background"], "rb") as handle:
            analysis["background"] = hashlib.file_digest(handle, "sha256").hexdigest()
    hashed = {"experiment": exp, "analysis": analysis}
    if liquids is not None:
        with open(liquids, "rb") as handle:
            hashed["liquids"] = hashlib.file_digest(handle, "sha256").hexdigest()
    text = json.dumps(hashed, sort_keys=True)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def _now() -> str:
    return datetime.now(UTC).isoformat(timespec="milliseconds")


def _publish(work: Path, target: Path) -> None:
    """Put a finished work folder in place of `target` (two renames)."""
    old = None
    if target.exists():
        old = target.with_name(f"{OLD_PREFIX}{target.name}-{os.getpid()}-{time.time_ns()}")
        os.replace(target, old)
    os.replace(work, target)
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)


def _measured_sha256(folder: Path) -> str | None:
    """The input hash a measurement wrote before its analysis failed, if any."""
    try:
        info = json.loads((folder / "measure.json").read_text(encoding="utf-8"))
        return info["provenance"]["sha256"]
    except (OSError, ValueError, KeyError, TypeError):
        return None


def _folder_mode() -> int:
    """The mode a new folder gets under the process's umask (read without changing it
    for long: os.umask only sets and returns)."""
    mask = os.umask(0o022)
    os.umask(mask)
    return 0o777 & ~mask


def _analyze(task: Task, work: Path, out_dir: Path):
    """The analysis of `task` into the work folder `work`, published as ``OUT/<label>``."""
    return analyze_into(
        task.source,
        work,
        task.settings,
        experiment=task.experiment_file,
        overrides=task.overrides,
        origin="campaign manifest",
        liquids=task.liquids_file,
        experiment_copy=True,
        published_dir=out_dir / task.label,
    )


def make_work_folder(out_dir: Path, label: str) -> Path:
    """A new hidden work folder ``OUT/.work-<label>-*`` for one recording (mode by umask)."""
    work = Path(tempfile.mkdtemp(prefix=f"{WORK_PREFIX}{label}-", dir=out_dir))
    work.chmod(_folder_mode())  # mkdtemp makes it private (0700); the umask decides
    return work


def failed_row(task: Task, message: str) -> dict:
    """The row of a recording whose analysis ended without one (its worker died)."""
    now = _now()
    return {
        "label": task.label,
        "source": task.source,
        "dropkin_version": __version__,
        "output": task.label,
        "started_utc": now,
        "finished_utc": now,
        "status": "failed",
        "error": readable(f"{task.source}: {message}"),
    }


def publish_work(work: Path | None, out_dir: Path, label: str) -> None:
    """Publish a work folder as ``OUT/<label>`` (an empty one is removed instead)."""
    if work is None:
        return
    if any(work.iterdir()):
        _publish(work, out_dir / label)
    else:
        shutil.rmtree(work, ignore_errors=True)


def analyze_task(task: Task, work: Path, out_dir: Path, invocation: dict | None = None) -> dict:
    """Analyse one recording into the work folder `work`; its catalogue row.

    `invocation` is the command line's record for the provenance
    (:func:`dropkin._provenance.current_invocation`), handed over to a worker
    process that does not have it. Never raises for the recording's own
    faults: a :class:`DropkinError`, an ``OSError`` (a full disk) and, so that
    one bad recording cannot stop a campaign, any other exception becomes a
    row with status ``failed`` and the message. The caller publishes `work`
    (:func:`publish_work`): whatever was written, the frames measured before
    a failure say, is kept all the same.

    The fit's bootstrap runs on one thread here, unless ``$DROPKIN_FIT_THREADS``
    says otherwise: a campaign's recordings are its parallel work.
    """
    os.environ.setdefault("DROPKIN_FIT_THREADS", "1")
    start, clock = _now(), time.perf_counter()
    row: dict = {
        "label": task.label,
        "source": task.source,
        "dropkin_version": __version__,
        "output": task.label,
        "started_utc": start,
    }
    try:
        _test_crash(task.label)
        row["input_stat"] = input_fingerprint(task.source)
        exp, _ = open_source(
            task.source,
            experiment=task.experiment_file,
            overrides=task.overrides,
            origin="campaign manifest",
        )
        row["settings_sha256"] = settings_sha256(exp, task.settings, task.liquids_file)
        row["settings"] = task.settings.result_settings()
        row.update(sample_columns(exp))
        with invoked(invocation):
            result = _analyze(task, work, out_dir)
        row.update(sample_columns(result.experiment))
        row.update(series_columns(result.series))
        row.update(verdict_columns(result.verdict))
        if result.verdict:
            row["status"] = "complete"
        else:
            row["status"], row["error"] = "failed", f"no verdict: {result.verdict.reason}"
    except DropkinError as exc:
        row["status"], row["error"] = "failed", str(exc)
        row["input_sha256"] = _measured_sha256(work)
    except OSError as exc:  # the machine's fault (a full disk): one line naming the file
        where = exc.filename if exc.filename is not None else work
        row["status"], row["error"] = "failed", readable(f"{where}: {exc.strerror or exc}")
    except Exception as exc:  # noqa: BLE001 - one recording must not stop a campaign
        row["status"] = "failed"
        row["error"] = f"internal error, please report it: {type(exc).__name__}: {exc}"
        row["error"] = readable(row["error"].replace("\n", " "))
    row["finished_utc"] = _now()
    row["seconds"] = round(time.perf_counter() - clock, 3)
    return row


def run_task(task: Task, out_dir, invocation: dict | None = None) -> dict:
    """Analyse one recording of a campaign into ``OUT/<label>``; its catalogue row.

    What :func:`analyze_task` does, in a work folder of its own that is then
    published (in this process, or on a Dask worker). An interruption
    (KeyboardInterrupt) removes the work folder: a partial folder is never published.
    """
    out_dir = Path(out_dir)
    work = make_work_folder(out_dir, task.label)
    try:
        row = analyze_task(task, work, out_dir, invocation)
    except BaseException:
        shutil.rmtree(work, ignore_errors=True)
        raise
    publish_work(work, out_dir, task.label)
    return row
