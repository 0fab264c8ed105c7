"""Where ``dropkin synth`` writes a folder of frames: built aside and published whole.

A folder of PNG or JPEG frames is rendered into a hidden staging folder
beside `OUT` and renamed into place when complete
(:func:`dropkin._atomic.staged_folder`), as the analysis commands do with
their output folders: a run that fails or is killed leaves `OUT` as it was,
and ``--overwrite`` replaces a folder of an earlier synthetic recording
whole, never frame by frame. A folder holding anything else is refused.
"""

from __future__ import annotations

import contextlib
import os
import re
from pathlib import Path

from .._atomic import TEMPORARY_PREFIX, replaceable_target, staged_folder
from ..errors import ExperimentError

__all__ = ["is_folder_output", "staged_synth_folder"]

_FILE_SUFFIXES = (".tif", ".tiff", ".mp4")
_WRITTEN = re.compile(r"frame_\d+\.(png|jpg)|experiment\.toml|truth\.json")


def is_folder_output(out, fmt: str | None) -> bool:
    """Whether `out` with the format `fmt` is a folder of frames (png, jpeg)."""
    return fmt in (None, "png", "jpeg") and Path(out).suffix.lower() not in _FILE_SUFFIXES


def _claim(out, overwrite: bool) -> Path:
    """The folder to publish `out` as; refuse one a new synthetic recording may not replace."""
    target = replaceable_target(out, ExperimentError)
    names = (
        sorted(n for n in os.listdir(target) if not n.startswith(TEMPORARY_PREFIX))
        if target.is_dir()
        else []
    )
    if not names:
        return target
    if not overwrite:
        held = (
            "frames"
            if any(n.startswith("frame_") for n in names)
            else f"files ({', '.join(names[:4])})"
        )
        raise ExperimentError(
            f"already holds {held}", path=out, expected="an empty or new folder, or --overwrite"
        )
    foreign = [n for n in names if not _WRITTEN.fullmatch(n)]
    if foreign:
        raise ExperimentError(
            f"holds files dropkin synth does not write ({', '.join(foreign[:4])}); --overwrite "
            "replaces only a synthetic recording's folder",
            path=out,
            expected="a new or empty folder",
        )
    return target


@contextlib.contextmanager
def staged_synth_folder(out, overwrite: bool):
    """Yield a new folder to render `out` into; publish it as `out`, whole, at the end.

    An ``OSError`` naming a file in the staging folder (a full disk) is raised
    again naming the file in `out`.
    """
    target = _claim(out, overwrite)
    with staged_folder(target) as stage:
        try:
            yield stage
        except OSError as exc:
            raise _renamed(exc, stage, Path(out)) from None


def _renamed(exc: OSError, stage: Path, out: Path) -> OSError:
    """`exc` with the staging folder's name replaced by `out` in its file and message."""

    def fix(text):
        return None if text is None else str(text).replace(str(stage), str(out))

    if exc.errno is None:
        return OSError(fix(str(exc)))
    return OSError(exc.errno, exc.strerror, fix(exc.filename))
