"""A campaign's local worker processes: one recording at a time each, watched one by one.

A process pool that loses a worker (the kernel's out-of-memory killer sends
SIGKILL) never hears back about the task it was running, and a batch built on
it waits for ever. Here the parent hands each worker one task over a pipe of
its own and waits on the pipes and the processes together
(:func:`multiprocessing.connection.wait`): a worker that dies gives its
recording a failure row naming the signal, a new worker takes its place, and
the rest go on. A worker says it has started a task before it analyses it: one
that dies before saying so (it died idle, just as it was handed the task)
never started the task, and the task goes back to the queue, once.

The workers die with the parent: on Linux the kernel sends them SIGKILL when
it dies (``prctl(PR_SET_PDEATHSIG)``), elsewhere a thread of each worker
watches the parent's process id. A worker never publishes anything: it
analyses into the work folder the parent made, and the parent publishes the
folder and writes the row. So a killed batch leaves no folder without its
row, only work folders that the next run removes.
"""

from __future__ import annotations

import contextlib
import multiprocessing
import os
import shutil
import signal
import sys
import threading
import time
from collections import deque
from collections.abc import Iterator
from multiprocessing.connection import wait
from pathlib import Path

from ._manifest import Task
from ._task import analyze_task, failed_row, make_work_folder

__all__ = ["worker_rows"]

_PR_SET_PDEATHSIG = 1  # <linux/prctl.h>
_WATCH_SECONDS = 0.25
_STARTED = "started"  # what a worker sends when it takes a task, before its row

#: For tests only: a folder of token files. A worker handed a task takes (removes)
#: one of them, if any, and kills itself with SIGKILL before starting the task.
TEST_DIE_ON_HANDOUT = "DROPKIN_TEST_DIE_ON_HANDOUT"


def _test_die_on_handout() -> None:
    """The test hook :data:`TEST_DIE_ON_HANDOUT` (nothing when it is not set)."""
    folder = os.environ.get(TEST_DIE_ON_HANDOUT)
    if not folder:
        return
    for token in sorted(Path(folder).iterdir()):
        try:
            token.unlink()
        except FileNotFoundError:  # another worker took it
            continue
        os.kill(os.getpid(), signal.SIGKILL)


def _die_with_parent(parent_pid: int) -> None:
    """Make this process end when `parent_pid` does (see the module notes)."""
    if sys.platform.startswith("linux"):
        with contextlib.suppress(Exception):  # no libc by that name: the thread still watches
            import ctypes

            libc = ctypes.CDLL(None, use_errno=True)
            libc.prctl(_PR_SET_PDEATHSIG, int(signal.SIGKILL), 0, 0, 0)

    def watch() -> None:
        while os.getppid() == parent_pid:
            time.sleep(_WATCH_SECONDS)
        os._exit(1)

    if os.getppid() != parent_pid:  # the parent died before the line above
        os._exit(1)
    threading.Thread(target=watch, name="dropkin-parent-watch", daemon=True).start()


def _worker(conn, parent_pid: int, out_dir: str, invocation) -> None:
    """A worker's life: take a task, analyse it, send its row; until told to stop."""
    _die_with_parent(parent_pid)
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C is the parent's to handle
    signal.signal(signal.SIGTERM, signal.SIG_DFL)  # not the parent's handler (fork)
    while True:
        try:
            message = conn.recv()
        except (EOFError, OSError):
            return
        if message is None:
            return
        task, work = message
        _test_die_on_handout()
        try:
            conn.send(_STARTED)
            row = analyze_task(task, Path(work), Path(out_dir), invocation)
            conn.send(row)
        except OSError:  # the parent is gone: nothing to say, nobody to say it to
            os._exit(1)


class _Slot:
    """A worker process, its end of the pipe, and the task it runs (None when idle)."""

    def __init__(self, context, out_dir: Path, invocation) -> None:
        self.conn, child = context.Pipe()
        args = (child, os.getpid(), str(out_dir), invocation)
        self.process = context.Process(target=_worker, args=args, daemon=True)
        self.process.start()
        child.close()
        self.task: Task | None = None
        self.work: Path | None = None
        self.started = False  # whether the worker said it started `task`

    def give(self, task: Task, work: Path) -> None:
        """Send a task (a worker that died meanwhile is seen by :meth:`take`)."""
        self.task, self.work, self.started = task, work, False
        with contextlib.suppress(OSError):
            self.conn.send((task, str(work)))

    def take(self) -> dict | None:
        """The row the worker sent, if it did (None: not yet, or it died instead)."""
        try:
            while self.conn.poll():
                message = self.conn.recv()
                if message == _STARTED:
                    self.started = True
                else:
                    return message
        except (EOFError, OSError):
            pass
        return None

    def stop(self) -> None:
        """End the worker: an idle one is told to, a busy one (an interrupted batch) killed."""
        if self.task is None:
            with contextlib.suppress(OSError):
                self.conn.send(None)
            self.process.join(timeout=2.0)
        if self.process.is_alive():
            self.process.kill()
        self.process.join()
        self.conn.close()
        if self.work is not None:
            shutil.rmtree(self.work, ignore_errors=True)


def _death(exitcode: int | None) -> str:
    """How a worker ended, in words."""
    if exitcode is not None and exitcode < 0:
        try:
            name = signal.Signals(-exitcode).name
        except ValueError:
            name = f"signal {-exitcode}"
        hint = " (the system may have run out of memory)" if exitcode == -signal.SIGKILL else ""
        return f"was killed by {name}{hint}"
    return f"ended unexpectedly (exit code {exitcode})"


def worker_rows(tasks, out_dir: Path, jobs: int, invocation) -> Iterator[tuple[dict, Path]]:
    """Analyse `tasks` in `jobs` worker processes; each row with its work folder, as done.

    The caller publishes the work folder and writes the row. A task whose
    worker died yields a failure row (and no folder: its work folder is removed).
    """
    context = multiprocessing.get_context()
    pending: deque[Task] = deque(tasks)
    slots: list[_Slot] = []
    handed_again: set[str] = set()  # labels put back once (their worker died idle)
    try:
        while pending or any(s.task is not None for s in slots):
            _hand_out(pending, slots, jobs, context, out_dir, invocation)
            busy = [s for s in slots if s.task is not None]
            ready = set(wait([s.conn for s in busy] + [s.process.sentinel for s in busy]))
            for slot in busy:
                if slot.conn in ready or slot.process.sentinel in ready:
                    outcome = _outcome(slot, slots, pending, handed_again)
                    if outcome is not None:
                        yield outcome
    finally:
        for slot in slots:
            slot.stop()


def _hand_out(pending: deque, slots: list, jobs: int, context, out_dir: Path, invocation):
    """Give every idle worker a task; start workers up to `jobs` while tasks wait."""
    for slot in [s for s in slots if s.task is None and not s.process.is_alive()]:
        slots.remove(slot)  # died while idle
        slot.stop()
    while pending and len(slots) < jobs:
        slots.append(_Slot(context, out_dir, invocation))
    for slot in slots:
        if slot.task is None and pending:
            task = pending.popleft()
            slot.give(task, make_work_folder(out_dir, task.label))


def _outcome(slot: _Slot, slots: list, pending: deque, handed_again: set):
    """The row of the task `slot` ran (a failure row when its worker died with it); None
    while it runs, or when its worker died before starting it (the task waits again, once)."""
    task, work, row = slot.task, slot.work, slot.take()
    if row is None and slot.process.is_alive():
        return None  # it said it started: the row comes later
    slot.task = slot.work = None
    if row is not None:
        return row, work
    slot.process.join()  # the worker died with the task: its work folder goes too
    shutil.rmtree(work, ignore_errors=True)
    slots.remove(slot)
    slot.conn.close()
    if not slot.started and task.label not in handed_again:
        handed_again.add(task.label)
        pending.appendleft(task)
        return None
    return failed_row(task, f"the process analysing it {_death(slot.process.exitcode)}"), None
