"""Files that are either complete or absent, and folders published whole.

Every file dropkin writes goes to a temporary name in the same folder and is
renamed into place when complete (``os.replace`` is atomic on one file
system), so a killed run never leaves a half-written CSV that a later script
would trust.

A run killed while writing leaves its temporary file behind. Temporary names
start with :data:`TEMPORARY_PREFIX` (``.dropkin-tmp.``): hidden from ``ls``
and from shell globs such as ``*.csv``, recognisable by :func:`is_temporary`,
skipped by every dropkin reader of an output folder, and removed by
:func:`remove_temporaries` when the next run writes into the same folder.

A folder of outputs is built the same way, one level up
(:func:`staged_folder`): in a sibling folder ``.dropkin-tmp.<name>.<random>``
of the same parent (so on the same file system), renamed into place when
complete by :func:`publish_folder`. A folder that was there is moved aside
first and removed once the new one is in place, so a reader sees the old
folder or the new one, never a mixture; between the two renames the name
is absent for an instant. The hidden sibling's name carries its owner
(``.dropkin-tmp.<name>.<pid>@<host>.<random>``: the process id and a short
digest of the machine's name), so a run killed while building leaves it
behind only until the next run that makes a folder beside it:
:func:`remove_stale_folders` removes the ones whose process is gone on this
machine, never one a live process may be building (a process id still in
use, or a folder made on another machine, is left).

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
import hashlib
import os
import shutil
import socket
import tempfile
from pathlib import Path

__all__ = [
    "replaceable_target",
    "TEMPORARY_PREFIX",
    "staged_folder",
    "publish_folder",
    "new_folder_beside",
    "remove_stale_folders",
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
    as it was. An ``OSError`` that names no file (a full disk: ``write()``
    and ``close()`` know only a descriptor) is raised again naming `path`.
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
    except OSError as exc:
        if exc.filename is not None or exc.errno is None:
            raise
        raise OSError(exc.errno, exc.strerror, str(path)) from exc
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

    Text from a path whose bytes are not UTF-8 (Python keeps each such byte
    as a lone surrogate) is written with each such byte as ``\\xff``.
    """
    from .errors import readable

    return write_bytes_atomic(path, readable(text).encode("utf-8"))


def _umask_mode(mode: int) -> int:
    umask = os.umask(0o022)
    os.umask(umask)
    return mode & ~umask


def _host() -> str:
    """A short digest of this machine's name (names may hold dots, or any character)."""
    return hashlib.sha256(socket.gethostname().encode("utf-8", "replace")).hexdigest()[:8]


def _owner() -> str:
    """The owner part of a staging folder's name: ``<pid>@<host>``."""
    return f"{os.getpid()}@{_host()}"


def _process_is_gone(pid: int) -> bool:
    """Whether no process `pid` runs on this machine (one we may not signal is alive)."""
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return True
    except OSError:  # PermissionError: another user's, alive
        return False
    return False


def _stale(name: str, host: str) -> bool:
    """Whether the staging folder `name` was made on this machine by a process now gone."""
    parts = name.rsplit(".", 2)
    if len(parts) != 3 or "@" not in parts[1]:
        return False  # not named by its owner: left alone
    pid, _, made_on = parts[1].partition("@")
    if made_on != host or not pid.isdigit() or int(pid) <= 0:
        return False
    return _process_is_gone(int(pid))


def remove_stale_folders(folder) -> list[Path]:
    """Remove the staging folders in `folder` that runs killed while building left.

    A staging folder (:func:`new_folder_beside`) is removed only when the
    process named in it is gone and was on this machine; returns the paths
    removed. A folder that does not exist holds none.
    """
    folder, host, removed = Path(folder), _host(), []
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return removed
    for entry in entries:
        if not entry.name.startswith(TEMPORARY_PREFIX):
            continue
        if entry.is_dir(follow_symlinks=False) and _stale(entry.name, host):
            shutil.rmtree(entry.path, ignore_errors=True)
            removed.append(Path(entry.path))
    return removed


def new_folder_beside(target, tag: str = "") -> Path:
    """A new, empty hidden folder in `target`'s parent (made if needed), with the
    permissions the umask gives a new folder (not mkdtemp's private 0700).

    Its name carries this process's id and machine; the stale staging folders of
    runs killed there are removed first (:func:`remove_stale_folders`)."""
    target = Path(target)
    target.parent.mkdir(parents=True, exist_ok=True)
    remove_stale_folders(target.parent)
    prefix = f"{TEMPORARY_PREFIX}{tag}{target.name}.{_owner()}."
    folder = Path(tempfile.mkdtemp(prefix=prefix, dir=target.parent))
    folder.chmod(_umask_mode(0o777))
    return folder


def publish_folder(stage, target) -> Path:
    """Put the complete folder `stage` in place of `target`, whole; return `target`.

    `stage` must lie in `target`'s parent (see :func:`new_folder_beside`). A
    folder at `target` is renamed aside first, then removed.
    """
    stage, target = Path(stage), Path(target)
    old = None
    if target.exists() or target.is_symlink():
        old = new_folder_beside(target, "old.")
        os.replace(target, old / target.name)
    os.replace(stage, target)
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)
    return target


def replaceable_target(out, error) -> Path:
    """The folder `out` names (a symbolic link followed), if it may be built aside and
    published in its place; raise `error` (a :class:`~dropkin.errors.DropkinError`
    class) when `out` is a file, or is or holds the working directory (published in
    its place, the folder would leave the shell in a removed one)."""
    target = Path(os.path.abspath(out))
    if target.is_symlink():
        target = target.resolve()
    if target.exists() and not target.is_dir():
        raise error("exists and is not a folder", path=out)
    here = Path(os.path.abspath(os.getcwd()))
    if target.exists() and (here == target or target in here.parents):
        raise error("is the working directory or holds it; give a folder below it", path=out)
    return target


def _link_or_copy(source, dest) -> None:
    """A hard link of `source` at `dest` (a copy where links cannot be made)."""
    try:
        os.link(source, dest)
    except OSError:
        shutil.copy2(source, dest)


@contextlib.contextmanager
def staged_folder(target, *, keep=(), publish_on=()):
    """Yield a new folder beside `target`; publish it as `target` when the block ends.

    Parameters
    ----------
    target : path-like
        The folder to make or replace whole.
    keep : iterable of str
        Names in the folder at `target` to carry into the new one before the
        block runs (hard links where possible): the inputs of a step that
        writes into its own input's folder.
    publish_on : tuple of exception types
        Exceptions after which what the block wrote is still published (when
        it wrote anything), the exception then going on; after any other
        exception the new folder is removed and `target` is left as it was.
    """
    target = Path(target)
    stage = new_folder_beside(target)
    try:
        for name in keep:
            source = target / name
            if source.is_dir() and not source.is_symlink():
                shutil.copytree(source, stage / name, copy_function=_link_or_copy)
            elif source.is_file():
                _link_or_copy(source, stage / name)
        yield stage
    except publish_on:
        if any(stage.iterdir()):
            publish_folder(stage, target)
        else:
            shutil.rmtree(stage, ignore_errors=True)
        raise
    except BaseException:
        shutil.rmtree(stage, ignore_errors=True)
        raise
    publish_folder(stage, target)
