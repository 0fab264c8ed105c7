"""One batch at a time per output folder: an exclusive lock on ``OUT/.dropkin-batch.lock``.

A second ``dropkin batch`` on the same OUT refuses at once with one line
naming the folder and the process holding it (it does not wait: a campaign
can run for hours). The lock is the kernel's (:func:`fcntl.flock`), so a
batch that was killed leaves none behind: its lock file is stale and the
next run takes it. Because a run holds the lock before it removes the work
folders (``.work-*``) of earlier runs, it never removes those of a running
one. Without :mod:`fcntl` (Windows) there is no lock.
"""

from __future__ import annotations

import contextlib
import os
from collections.abc import Iterator
from pathlib import Path

from ..errors import DropkinError

try:
    import fcntl
except ImportError:  # pragma: no cover - not POSIX
    fcntl = None

__all__ = ["LOCK_NAME", "batch_lock"]

LOCK_NAME = ".dropkin-batch.lock"


def _holder(fd: int) -> str:
    """The process id the holder wrote into the lock file, as text ('' if none)."""
    with contextlib.suppress(OSError, ValueError):
        text = os.pread(fd, 32, 0).decode("ascii").strip()
        if text.isdigit():
            return f" (process {text})"
    return ""


def _take(path: Path) -> int:
    """An open descriptor of the lock file, locked; refuses when another run holds it."""
    while True:
        fd = os.open(path, os.O_RDWR | os.O_CREAT, 0o666)
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            holder = _holder(fd)
            os.close(fd)
            raise DropkinError(
                f"is in use by another dropkin batch{holder}",
                path=path.parent,
                expected="that batch to finish, or another output folder",
            ) from None
        except BaseException:
            os.close(fd)
            raise
        # The file may have been removed by the run that held it, between our open
        # and our lock: then we hold a lock nobody else will see; take it again.
        try:
            same = os.path.samestat(os.fstat(fd), os.stat(path))
        except FileNotFoundError:
            same = False
        if same:
            return fd
        os.close(fd)


@contextlib.contextmanager
def batch_lock(out_dir: Path) -> Iterator[None]:
    """Hold OUT's lock for the time of the block (see the module notes)."""
    if fcntl is None:  # pragma: no cover - not POSIX
        yield
        return
    path = Path(out_dir) / LOCK_NAME
    fd = _take(path)
    try:
        os.ftruncate(fd, 0)
        os.pwrite(fd, f"{os.getpid()}\n".encode("ascii"), 0)
        yield
    finally:
        with contextlib.suppress(OSError):
            path.unlink()  # before unlocking: a run waiting on this file then sees it gone
        os.close(fd)
