"""The recording's fingerprint: SHA-256 of its bytes, and the input pinned for a run.

:func:`recording_sha256` hashes a recording's files in one pass (a campaign
uses it to tell whether a recording changed since its last run).
:class:`PinnedInput` is what a measurement uses: it opens every file of the
recording when the run starts, hashes them from those open descriptors in a
thread beside the measurement (``hashlib`` releases the GIL, so the hash runs
on another core), and when the run ends checks that no file was replaced or
written to meanwhile. A file whose identity (device, inode), size,
modification or change time differ at the end from the start fails the run
with one line: the bytes hashed are then the bytes measured.
"""

from __future__ import annotations

import hashlib
import os
import threading
from pathlib import Path

from ..errors import RecordingError

__all__ = ["recording_sha256", "PinnedInput", "check_unchanged"]

_BLOCK = 1 << 20


def _files(recording) -> tuple[Path, ...]:
    return tuple(recording.files) if recording.files is not None else (Path(recording.path),)


def recording_sha256(recording) -> str:
    """SHA-256 of the recording's bytes (a folder: every frame file, in order)."""
    if recording.files is None:
        with open(recording.path, "rb") as handle:
            return hashlib.file_digest(handle, "sha256").hexdigest()
    digest = hashlib.sha256()
    for path in recording.files:
        with open(path, "rb") as handle:
            for block in iter(lambda h=handle: h.read(_BLOCK), b""):
                digest.update(block)
    return digest.hexdigest()


def _identity(status: os.stat_result) -> tuple:
    # ctime cannot be set by a user: any write or replacement moves it
    return (status.st_dev, status.st_ino, status.st_size, status.st_mtime_ns, status.st_ctime_ns)


class PinnedInput:
    """A recording's files held open for a run, hashed beside it, checked at its end.

    Use as a context manager around everything that reads the frames, then
    call :meth:`sha256` (inside or after it) for the digest::

        with PinnedInput(rec) as pinned:
            ...  # measure
            digest = pinned.sha256()  # raises RecordingError if a file changed

    Raises
    ------
    RecordingError
        From :meth:`sha256`: naming the file that was replaced or written to
        during the run, or that could not be read.
    """

    def __init__(self, recording) -> None:
        self._paths = _files(recording)
        self._handles = []
        self._start: list[tuple] = []
        self._digest = hashlib.sha256()
        self._error: BaseException | None = None
        self._thread: threading.Thread | None = None

    def __enter__(self) -> PinnedInput:
        try:
            for path in self._paths:
                handle = open(path, "rb")  # noqa: SIM115 - held open for the run
                self._handles.append(handle)
                self._start.append(_identity(os.fstat(handle.fileno())))
        except BaseException:
            self.close()
            raise
        self._thread = threading.Thread(target=self._hash, name="dropkin-hash", daemon=True)
        self._thread.start()
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def _hash(self) -> None:
        try:
            buffer = bytearray(_BLOCK)
            view = memoryview(buffer)
            for handle in self._handles:
                while n := handle.readinto(buffer):
                    self._digest.update(view[:n])
        except BaseException as exc:  # handed to the caller of sha256()
            self._error = exc

    def close(self) -> None:
        if self._thread is not None:
            self._thread.join()
        for handle in self._handles:
            handle.close()
        self._handles = []

    @property
    def identities(self) -> tuple:
        """Each file's identity (device, inode, size, modification and change
        times) when the run started, for :func:`check_unchanged`."""
        return tuple(zip(self._paths, self._start, strict=True))

    def sha256(self) -> str:
        """The digest of the files as they were when the run started, once it is known
        that none of them changed since."""
        if self._thread is not None:
            self._thread.join()
        if self._error is not None:
            path = getattr(self._error, "filename", None) or self._paths[0]
            raise RecordingError(f"cannot be read to hash it: {self._error}", path=path)
        for path, handle, before in zip(self._paths, self._handles, self._start, strict=True):
            try:
                now = _identity(os.stat(path))
            except OSError:
                now = None
            if now != before or _identity(os.fstat(handle.fileno())) != before:
                raise RecordingError(
                    "changed while it was being measured (replaced or written to); "
                    "nothing was written: run again once the file is complete",
                    path=path,
                )
        return self._digest.hexdigest()


def check_unchanged(recording, identities) -> None:
    """Raise if a file of `recording` differs from its identity in `identities`.

    For frames read again after the run's hash was taken (the overlay frames,
    drawn when the files are written): `identities` is
    :attr:`PinnedInput.identities`; None checks nothing.

    Raises
    ------
    RecordingError
        Naming the file that was replaced or written to.
    """
    for path, before in identities or ():
        try:
            now = _identity(os.stat(path))
        except OSError:
            now = None
        if now != before:
            raise RecordingError(
                "changed after it was measured (replaced or written to); "
                "the overlay frames would not show the bytes measured: run again",
                path=path,
            )
