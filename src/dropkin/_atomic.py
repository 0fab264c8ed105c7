"""Files that are either complete or absent.

Every file dropkin writes goes to a temporary name in the same folder and is
renamed into place when complete (``os.replace`` is atomic on one file
system), so a killed run never leaves a half-written CSV that a later script
would trust.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path

__all__ = ["atomic_path", "write_text_atomic", "write_bytes_atomic"]


@contextlib.contextmanager
def atomic_path(path, *, suffix: str | None = None):
    """Yield a temporary path beside `path`; rename it to `path` on success.

    The temporary file keeps the final suffix (so writers that choose a format
    from the suffix, such as OpenCV, still work). On an exception it is
    removed and `path` is left as it was.
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(
        prefix=f".{path.stem}.", suffix=suffix or path.suffix, dir=path.parent
    )
    os.close(fd)
    tmp = Path(tmp)
    # mkstemp creates the file private (0600); give it the usual permissions.
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(tmp, 0o666 & ~umask)
    try:
        yield tmp
        os.replace(tmp, path)
    finally:
        with contextlib.suppress(FileNotFoundError):
            tmp.unlink()


def write_bytes_atomic(path, data: bytes) -> Path:
    """Write `data` to `path` atomically; return `path`."""
    with atomic_path(path) as tmp:
        with open(tmp, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
    return Path(path)


def write_text_atomic(path, text: str) -> Path:
    """Write `text` (UTF-8) to `path` atomically; return `path`."""
    return write_bytes_atomic(path, text.encode("utf-8"))
