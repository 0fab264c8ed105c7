"""Files that are either complete or absent.

Every file dropkin writes goes to a temporary name in the same folder and is
renamed into place when complete (``os.replace`` is atomic on one file
system), so a killed run never leaves a half-written CSV that a later script
would trust.

A run killed while writing leaves its temporary file behind. Temporary names
start with :data:`TEMPORARY_PREFIX` (``.dropkin-tmp.``): hidden from ``ls``
and from shell globs such as ``*.csv``, recognisable by :func:`is_temporary`,
skipped by every dropkin reader of an output folder, and removed by
:func:`remove_temporaries` when the next run writes into the same folder.

Examples
--------
>>> import tempfile
>>> folder = Path(tempfile.mkdtemp())
>>> _ = write_text_atomic(folder / "fit.json", "{}")
>>> [p.name for p in folder.iterdir()]
['fit.json']
>>> is_temporary(folder / ".dropkin-tmp.fit.k2j4.json")
True
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path

__all__ = [
    "TEMPORARY_PREFIX",
    "atomic_path",
    "is_temporary",
    "remove_temporaries",
    "completed_files",
    "write_text_atomic",
    "write_bytes_atomic",
]

#: Start of every temporary file name (the final name follows, then a random part).
TEMPORARY_PREFIX = ".dropkin-tmp."


def is_temporary(path) -> bool:
    """Whether `path` names one of dropkin's temporary files."""
    return Path(path).name.startswith(TEMPORARY_PREFIX)


def completed_files(folder, pattern: str = "*") -> list[Path]:
    """The files in `folder` matching `pattern`, sorted, without temporaries.

    ``Path.glob`` matches names that start with a dot, so a temporary file left
    by a killed run would otherwise be taken for output.
    """
    return sorted(p for p in Path(folder).glob(pattern) if not is_temporary(p) and p.is_file())


def remove_temporaries(*folders) -> list[Path]:
    """Remove the temporary files a killed run left directly in each of `folders`.

    Returns the paths removed; folders that do not exist are skipped, and
    sub-folders are not searched (name them). Call it before a run writes
    into the folders; two runs writing into one folder at the same time are
    not supported (their outputs would overwrite each other's anyway).
    """
    removed = []
    for folder in map(Path, folders):
        if not folder.is_dir():
            continue
        for path in sorted(folder.glob(TEMPORARY_PREFIX + "*")):
            if path.is_file():
                with contextlib.suppress(FileNotFoundError):
                    path.unlink()
                    removed.append(path)
    return removed


@contextlib.contextmanager
def atomic_path(path, *, suffix: str | None = None):
    """Yield a temporary path beside `path`; rename it to `path` on success.

    The temporary name is ``.dropkin-tmp.<stem>.<random><suffix>``: it keeps
    the final suffix (so writers that choose a format from the suffix, such
    as OpenCV, still work). On an exception it is removed and `path` is left
    as it was.
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(
        prefix=f"{TEMPORARY_PREFIX}{path.stem}.", suffix=suffix or path.suffix, dir=path.parent
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
    """Write `text` (UTF-8) to `path` atomically; return `path`.

    A path that is not valid UTF-8 (bytes such as ``\\xff`` in a folder's
    name) reaches Python's text as lone surrogates, which UTF-8 cannot hold:
    each is written as its escape (``\\udcff``), which a JSON reader turns
    back into the same character and a person reads as the byte it stands for.
    """
    return write_bytes_atomic(path, text.encode("utf-8", errors="backslashreplace"))
