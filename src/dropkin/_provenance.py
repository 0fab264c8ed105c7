"""What it takes to run an analysis again: the command line, the options as typed, the
versions, the platform and the time, and paths written relative to the output folder.

The command line hands its invocation here (:func:`invoked`) while a command
runs; the pipeline asks for :func:`run_record` when it writes ``measure.json``
and ``fit.json``. Called from Python, the record has no command line
(``command_line`` is None) and says so.

Paths in the outputs are relative to the output folder (:func:`relative_path`),
so a folder moved together with its inputs still names them; a reader
resolves them against the folder the file lies in (:func:`resolve_named`).
"""

from __future__ import annotations

import contextlib
import functools
import os
import platform
import shlex
from datetime import UTC, datetime
from pathlib import Path

from ._version import __version__

__all__ = [
    "command_line",
    "set_invocation",
    "invoked",
    "current_invocation",
    "versions",
    "run_record",
    "relative_path",
    "resolve_named",
]

#: The distributions whose versions a run records: (name in the record, names
#: the distribution may be installed under). Absent ones are recorded as None.
_DISTRIBUTIONS = (
    ("numpy", ("numpy",)),
    ("scipy", ("scipy",)),
    ("pint", ("pint",)),
    (
        "opencv",
        (
            "opencv-python-headless",
            "opencv-python",
            "opencv-contrib-python-headless",
            "opencv-contrib-python",
        ),
    ),
    ("scikit-image", ("scikit-image",)),
    ("tifffile", ("tifffile",)),
    ("pillow", ("pillow",)),
    ("matplotlib", ("matplotlib",)),
    ("click", ("click",)),
)

_invocation: dict | None = None


def command_line(args) -> str:
    """The command line of ``dropkin`` with the arguments `args`, quoted for a POSIX shell.

    Pasted into a shell, it gives the program the same arguments again.

    Examples
    --------
    >>> command_line(["analyze", "my frames", "--frame-rate", "20 kfps", "-o", "out"])
    "dropkin analyze 'my frames' --frame-rate '20 kfps' -o out"
    """
    return shlex.join(["dropkin", *map(str, args)])


def set_invocation(invocation: dict | None) -> None:
    """Name `invocation` (``command_line``, ``options_given``) in every
    :func:`run_record` from now on; None: a call from Python."""
    global _invocation
    _invocation = None if invocation is None else dict(invocation)


@contextlib.contextmanager
def invoked(invocation: dict | None):
    """Within the block, :func:`run_record` names `invocation` (``command_line``,
    ``options_given``); None leaves the current one in place."""
    global _invocation
    if invocation is None:
        yield
        return
    previous, _invocation = _invocation, dict(invocation)
    try:
        yield
    finally:
        _invocation = previous


def current_invocation() -> dict | None:
    """The invocation :func:`invoked` set (to hand to another process), or None."""
    return None if _invocation is None else dict(_invocation)


def _version_of(names) -> str | None:
    from importlib import metadata

    for name in names:
        try:
            return metadata.version(name)
        except metadata.PackageNotFoundError:
            continue
    return None


@functools.cache
def versions() -> dict:
    """dropkin's version and those of its main dependencies (None where not installed)."""
    found = {"dropkin": __version__}
    found.update({label: _version_of(names) for label, names in _DISTRIBUTIONS})
    return found


def run_record() -> dict:
    """The run as ``measure.json`` and ``fit.json`` record it (key ``run``).

    ``command_line`` and ``options_given`` (each option as typed, by its long
    name) come from the command line; both are None for a call from Python.
    ``created_utc`` is ISO 8601 in UTC.
    """
    given = _invocation or {}
    return {
        "command_line": given.get("command_line"),
        "options_given": given.get("options_given"),
        "created_utc": datetime.now(UTC).isoformat(timespec="seconds"),
        "python": f"{platform.python_implementation()} {platform.python_version()}",
        "platform": platform.platform(),
        "versions": versions(),
    }


def relative_path(path, folder) -> str:
    """`path` relative to `folder` (both made absolute first), with ``/`` separators.

    Where no relative path exists (another drive on Windows), the absolute
    path. `folder` need not exist yet.

    Examples
    --------
    >>> relative_path("/data/run1/frames.tif", "/data/results/run1")
    '../../run1/frames.tif'
    """
    target = Path(os.path.abspath(path))
    base = Path(os.path.abspath(folder))
    try:
        return Path(os.path.relpath(target, base)).as_posix()
    except ValueError:
        return target.as_posix()


def resolve_named(text, folder) -> Path:
    """A path read from an output file: relative ones count from `folder`
    (where the file lies), absolute ones (older files) stay as they are."""
    path = Path(text)
    return path if path.is_absolute() else Path(folder) / path
