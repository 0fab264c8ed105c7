"""A campaign: many recordings analysed alike, with a results catalogue.

:func:`run_batch` reads a manifest (see :mod:`dropkin.campaign._manifest`), skips the
recordings whose input and settings are unchanged since a complete row of the
catalogue, and analyses the rest: in `jobs` local worker processes (one job
too: a recording whose analysis crashes its process by a signal, a native
decoder's crash say, is then a failure row and not the end of the batch) or
on a Dask ``distributed`` cluster (a scheduler address), all through the same
:func:`~dropkin.campaign._task.analyze_task`. Each
recording's row is written to ``OUT/catalogue.sqlite`` in a transaction of
its own as soon as it is done, so an interrupted batch keeps every row it
finished.
"""

from __future__ import annotations

import contextlib
import dataclasses
import json
import shutil
import signal
import sqlite3
import threading
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from pathlib import Path

from .._provenance import current_invocation
from ..errors import DropkinError, Terminated
from ..measure import recording_sha256
from ..pipeline import open_source
from ._catalogue import CATALOGUE_NAME, open_catalogue, read_rows, write_row
from ._lock import batch_lock
from ._manifest import Task, read_manifest
from ._task import (
    OLD_PREFIX,
    WORK_PREFIX,
    failed_row,
    input_fingerprint,
    publish_work,
    run_task,
    settings_sha256,
)
from ._workers import worker_rows

__all__ = ["BatchSummary", "run_batch"]


@dataclass
class BatchSummary:
    """What a batch did.

    Attributes
    ----------
    total : int
        Recordings in the manifest.
    done, skipped : list of str
        Labels analysed now, and labels left as they were (unchanged).
    failed : list of (str, str)
        Labels that failed, with their messages.
    interrupted : bool
        Whether the batch was stopped before the end (Ctrl-C or SIGTERM).
    terminated : bool
        Whether that was SIGTERM (:class:`dropkin.errors.Terminated`).
    """

    total: int
    done: list[str] = dataclasses.field(default_factory=list)
    skipped: list[str] = dataclasses.field(default_factory=list)
    failed: list[tuple[str, str]] = dataclasses.field(default_factory=list)
    interrupted: bool = False
    terminated: bool = False


def _pool_rows(tasks, out_dir, jobs) -> Iterable[tuple[dict, Path | None]]:
    invocation = current_invocation()  # for the provenance, in the worker processes
    return worker_rows(tasks, out_dir, jobs, invocation)


def _dask_rows(tasks, out_dir, scheduler) -> Iterable[dict]:
    try:
        from distributed import Client, as_completed
    except ImportError:
        raise DropkinError(
            "needs Dask's distributed package",
            key="--scheduler",
            expected="pip install 'dropkin[dask]'",
        ) from None
    try:
        client = Client(scheduler, timeout="20s")
    except (OSError, TimeoutError, ValueError) as exc:
        raise DropkinError(
            f"cannot reach the scheduler ({exc})", key="--scheduler", value=scheduler
        ) from None
    futures = []
    try:
        futures = [
            client.submit(
                run_task,
                t,
                str(out_dir),
                invocation=current_invocation(),
                pure=False,
                key=f"dropkin-{t.label}-{i}",
            )
            for i, t in enumerate(tasks)
        ]
        task_of = {future.key: task for future, task in zip(futures, tasks, strict=True)}
        for future in as_completed(futures):
            yield _dask_row(future, task_of[future.key]), None  # published by the worker
    finally:
        with contextlib.suppress(Exception):
            client.cancel(futures)
        client.close()


def _dask_row(future, task: Task) -> dict:
    """The row a Dask task returned; a failure row when it raised instead (its workers
    died running it, Dask's ``KilledWorker``: a crash by signal, say)."""
    try:
        return future.result()
    except Exception as exc:  # noqa: BLE001 - one recording must not stop a campaign
        text = f"{exc}".replace("\n", " ")
        return failed_row(task, f"its Dask task failed ({type(exc).__name__}: {text})")


def _clean_leftovers(out_dir: Path) -> None:
    """Remove the work folders of an earlier batch that was stopped."""
    for entry in out_dir.iterdir():
        if entry.is_dir() and entry.name.startswith((WORK_PREFIX, OLD_PREFIX)):
            shutil.rmtree(entry, ignore_errors=True)


def _is_unchanged(task: Task, previous: dict | None, out_dir: Path) -> bool:
    """A complete row whose input and settings hashes still hold, and its folder."""
    if not previous or previous.get("status") != "complete":
        return False
    if not (out_dir / task.label / "fit.json").is_file():
        return False
    try:
        exp, rec = open_source(
            task.source, experiment=task.experiment_file, overrides=task.overrides
        )
        hashed = settings_sha256(exp, task.settings, task.liquids_file)
        if hashed != previous.get("settings_sha256"):
            return False
        stat = json.loads(previous.get("input_stat") or "null")
        if stat == input_fingerprint(task.source):
            return True
        return recording_sha256(rec) == previous.get("input_sha256")
    except (DropkinError, OSError, ValueError):
        return False


@contextlib.contextmanager
def _signals_held():
    """Hold Ctrl-C and SIGTERM back for the block (in the main thread, on POSIX): they
    arrive when it ends, so a folder is never published without its row."""
    held = {signal.SIGINT, signal.SIGTERM}
    if not hasattr(signal, "pthread_sigmask") or (
        threading.current_thread() is not threading.main_thread()
    ):
        yield
        return
    before = signal.pthread_sigmask(signal.SIG_BLOCK, held)
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, before)


def _record(conn, row: dict, work: Path | None, out_dir: Path) -> None:
    """Publish a recording's work folder, then write its row (a full disk: one line)."""
    with _signals_held():
        publish_work(work, out_dir, row["label"])
        try:
            write_row(conn, row)
        except sqlite3.Error as exc:
            raise DropkinError(
                f"cannot record the row of {row['label']} ({exc})", path=out_dir / CATALOGUE_NAME
            ) from None


def _catalogue_rows(rows, conn, summary: BatchSummary, report, out_dir: Path) -> None:
    """Write each row to the catalogue as it comes; count it in the summary."""
    try:
        for row, work in rows:
            _record(conn, row, work, out_dir)
            if row["status"] == "complete":
                summary.done.append(row["label"])
            else:
                summary.failed.append((row["label"], row.get("error") or ""))
            if report:
                count = len(summary.skipped) + len(summary.done) + len(summary.failed)
                report(count, summary.total, row["label"], row)
    finally:
        with contextlib.suppress(Exception):
            rows.close()


def run_batch(
    manifest,
    out_dir,
    *,
    jobs: int = 1,
    scheduler: str | None = None,
    redo: bool = False,
    allow_outside: bool = False,
    report: Callable[[int, int, str, dict | None], None] | None = None,
) -> BatchSummary:
    """Analyse every recording of a manifest; write their rows to the catalogue.

    Parameters
    ----------
    manifest : str or os.PathLike
        The campaign manifest (TOML).
    out_dir : str or os.PathLike
        Gets ``catalogue.sqlite`` and a folder per recording.
    jobs : int
        Recordings analysed at once on this machine, each in a worker process
        (1 too, so that a crash is the recording's row).
    scheduler : str, optional
        Address of a Dask ``distributed`` scheduler (``tcp://host:8786``); the
        work then runs on its workers, which must see `out_dir` and the
        recordings at the same paths. They publish their recordings' folders
        themselves and do not die with this process (docs/cluster.md).
    redo : bool
        Analyse every recording again, even those unchanged since a complete row.
    allow_outside : bool
        Let the manifest name recordings outside its own folder.
    report : callable, optional
        ``report(done, total, label, row)`` after each recording (``row`` None
        for one skipped as unchanged).

    Returns
    -------
    BatchSummary
        ``interrupted`` is set, and the rows finished so far are kept, when
        the batch is stopped with Ctrl-C (KeyboardInterrupt).

    Raises
    ------
    DropkinError
        When the manifest is unusable (nothing is run then).
    """
    campaign = read_manifest(manifest, allow_outside=allow_outside)
    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    with batch_lock(out_dir):
        return _run_locked(campaign, out_dir, jobs, scheduler, redo, report)


def _run_locked(campaign, out_dir: Path, jobs, scheduler, redo, report) -> BatchSummary:
    """:func:`run_batch` once OUT's lock is held."""
    _clean_leftovers(out_dir)  # an earlier run's, which is over: the lock says so
    conn = open_catalogue(out_dir)
    summary = BatchSummary(total=len(campaign.tasks))
    try:
        previous = {row["label"]: row for row in read_rows(conn)}
        pending = []
        for task in campaign.tasks:
            if not redo and _is_unchanged(task, previous.get(task.label), out_dir):
                summary.skipped.append(task.label)
                if report:
                    report(len(summary.skipped), summary.total, task.label, None)
            else:
                pending.append(task)
        if scheduler is not None:
            rows = _dask_rows(pending, out_dir, scheduler)
        else:  # one job too: a crash by signal is the recording's row, not the batch's end
            rows = _pool_rows(pending, out_dir, max(1, min(jobs, len(pending))))
        _catalogue_rows(rows, conn, summary, report, out_dir)
    except KeyboardInterrupt as exc:
        summary.interrupted = True
        summary.terminated = isinstance(exc, Terminated)
        _clean_leftovers(out_dir)
    finally:
        conn.close()
    return summary
