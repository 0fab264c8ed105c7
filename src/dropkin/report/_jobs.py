"""A few independent jobs shared between this process and one forked child.

The figures of an analysis are drawn and saved one by one, each in a fifth
of a second or so; on a machine with two free cores a copy of the process
(``fork``: the figures' data, the imported matplotlib and its settings come
with it, nothing is pickled) takes half of them. The jobs wait as one byte
each in a pipe; the two processes read a byte in turn and run that job, so
the one that finishes first takes the next. The child sends back what each
of its jobs returned.

The child only ever runs jobs, each writing its files atomically. A job
that fails in the child is not reported from there: the child stops, and
this process runs that job again, meets the same error and raises it, as
the serial path would (one line on the command line, no traceback from a
child). A child that dies has its unfinished jobs run here. This process
waits for the child in every case, an exception here included (the child
finishes the job it holds, takes no other, and ends), so no process and no
temporary file is left behind; a parent killed outright takes the child with
it (``prctl(PR_SET_PDEATHSIG)``). The garbage collector is frozen while the child
is forked (its collections then leave the objects it was born with alone,
which a collection would otherwise copy page by page) and off in the child,
whose life ends with its jobs.

Jobs run here one after the other (no child) unless every condition holds:
Linux (``fork`` is safe there; macOS and Windows start processes by
``spawn``), at least two cores this process may use, a single thread (a
fork copies no other thread, and a lock another thread holds would stay
locked in the copy: a notebook's kernel has threads), and not a daemonic
process (a campaign's workers already keep every core busy).
"""

from __future__ import annotations

import contextlib
import gc
import multiprocessing
import os
import signal
import sys
import threading
from collections.abc import Callable, Iterator, Sequence

__all__ = ["run_jobs", "two_cores"]

#: At most this many jobs (each is one byte in the pipe).
_MAX_JOBS = 256
_PR_SET_PDEATHSIG = 1  # <linux/prctl.h>


def two_cores() -> bool:
    """Whether :func:`run_jobs` may fork a child (see the module notes)."""
    if not sys.platform.startswith("linux") or not hasattr(os, "sched_getaffinity"):
        return False
    if threading.current_thread() is not threading.main_thread():
        return False
    if threading.active_count() > 1 or multiprocessing.current_process().daemon:
        return False
    return len(os.sched_getaffinity(0)) >= 2


def run_jobs(jobs: Sequence[Callable[[], object]], *, parallel: bool | None = None) -> list:
    """Run each of `jobs` once; return what they returned, in the order of `jobs`.

    `parallel` None: in a forked child as well when :func:`two_cores`; False:
    here only; True: with a child wherever ``fork`` exists (for tests). Put
    the longest jobs first: the last one to start sets the end.
    """
    jobs = list(jobs)
    if parallel is None:
        parallel = two_cores()
    if not parallel or len(jobs) < 2 or len(jobs) > _MAX_JOBS:
        return [job() for job in jobs]
    try:
        context = multiprocessing.get_context("fork")
    except ValueError:  # no fork on this platform
        return [job() for job in jobs]
    results: dict[int, object] = {}
    _share(jobs, context, results)
    return [results[k] if k in results else jobs[k]() for k in range(len(jobs))]


def _share(jobs, context, results: dict) -> None:
    """Run `jobs` here and in a child, filling `results` (index → value) with the
    ones that ended; one that failed in the child or was lost with it is left out."""
    tokens, feed = os.pipe()
    try:
        os.write(feed, bytes(range(len(jobs))))  # 256 bytes at most: the pipe holds them
    finally:
        os.close(feed)  # the jobs end where the pipe is empty
    receiver, sender = context.Pipe(duplex=False)
    child = _start(context, jobs, tokens, sender)
    sender.close()
    try:
        try:
            for k in _taken(tokens):
                results[k] = jobs[k]()
        finally:
            for _ in _taken(tokens):  # after an error here: the child takes no other
                pass
            if child is not None:
                results.update(_received(receiver))
                child.join()
    finally:
        receiver.close()
        os.close(tokens)
        if child is not None and child.is_alive():  # interrupted while waiting
            child.terminate()
            child.join()


def _start(context, jobs, tokens: int, sender):
    """The child, started; None where no process can be had (every job is run here)."""
    child = context.Process(
        target=_child,
        args=(jobs, tokens, sender, os.getpid()),
        name="dropkin-figures",
        daemon=True,
    )
    # frozen, this process' objects are never walked (and so copied) by the child's
    # collector; left as they are where the caller froze some itself
    freeze = gc.get_freeze_count() == 0
    if freeze:
        gc.freeze()
    try:
        child.start()
    except OSError:
        return None
    finally:
        if freeze:
            gc.unfreeze()
    return child


def _taken(tokens: int) -> Iterator[int]:
    """The jobs' indices, read one byte at a time from the shared pipe."""
    while byte := os.read(tokens, 1):
        yield byte[0]


def _received(receiver) -> dict:
    """What the child sent, (index, value) pairs, until it closed its end."""
    got = {}
    while True:
        try:
            k, value = receiver.recv()
        except (EOFError, OSError):
            return got
        got[k] = value


def _die_with(parent: int) -> None:
    """End this process (SIGKILL) when `parent` ends, killed or not: a killed run's
    hidden build folder is removed by the next run, which must find nobody writing in it."""
    with contextlib.suppress(Exception):  # no libc by that name: the jobs are short
        import ctypes

        ctypes.CDLL(None, use_errno=True).prctl(_PR_SET_PDEATHSIG, int(signal.SIGKILL), 0, 0, 0)
    if os.getppid() != parent:  # it ended before the line above
        os._exit(1)


def _child(jobs, tokens: int, sender, parent: int) -> None:
    """The child's part: take jobs until none is left or one fails."""
    _die_with(parent)
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C is the parent's to handle
    signal.signal(signal.SIGTERM, signal.SIG_DFL)  # not the parent's handler (fork)
    gc.disable()  # a short life, ended by os._exit: its cycles need no collecting
    with contextlib.suppress(BaseException):
        for k in _taken(tokens):
            value = jobs[k]()  # an error: the parent runs this job again and raises it
            sender.send((k, value))
    sender.close()
