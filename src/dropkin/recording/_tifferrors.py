"""What tifffile says about a damaged TIFF file, as one RecordingError.

tifffile reports many defects through its logger rather than by raising, and
on a damaged file its parser can raise anything; :func:`tifffile_reports`
turns both into one :class:`~dropkin.errors.RecordingError` naming the file
(and the frame). Used by the stack reader (:mod:`._tiff`), the frame-file
headers (:mod:`._headers`) and the folder reader (:mod:`._folder`).
"""

from __future__ import annotations

import logging
import os
import re
from contextlib import contextmanager
from pathlib import Path

import tifffile

from ..errors import RecordingError

__all__ = ["tifffile_reports", "open_tifffile"]

_TIFFFILE_DIR = os.path.dirname(os.path.abspath(tifffile.__file__))

# tifffile's warnings that mean the frames it lists may not be the file's
# frames (a series description that does not match the pages, a page without
# its required tags); its other warnings are about vendor metadata and harmless.
_STRUCTURE_WARNINGS = re.compile(
    r"series metadata|series raised|series of unknown order|missing required tags"
    r"|invalid offset to first page|ignoring predictor|failed to reshape"
    r"|cannot apply subsampling|OME series|missing \d+ pages|incompletely written"
)


class _Collect(logging.Handler):
    def __init__(self) -> None:
        super().__init__(logging.WARNING)
        self.messages: list[str] = []

    def emit(self, record: logging.LogRecord) -> None:
        # Drop tifffile's leading object repr, "<tifffile.TiffPages @8> ...".
        message = re.sub(r"^<[^>]*>\s*", "", record.getMessage())
        if record.levelno >= logging.ERROR or _STRUCTURE_WARNINGS.search(message):
            self.messages.append(message)


def _raised_in_tifffile(exc: BaseException) -> bool:
    """Whether `exc` was raised while tifffile's own code was running."""
    tb = exc.__traceback__
    while tb is not None:
        if os.path.abspath(tb.tb_frame.f_code.co_filename).startswith(_TIFFFILE_DIR):
            return True
        tb = tb.tb_next
    return False


def _brief(exc: BaseException, limit: int = 160) -> str:
    text = " ".join(str(exc).split())
    if len(text) > limit:
        text = text[: limit - 3] + "..."
    return f"{type(exc).__name__}: {text}" if text else type(exc).__name__


@contextmanager
def tifffile_reports(path, frame: int | None = None):
    """Turn what tifffile says about a damaged file inside the block into a RecordingError.

    tifffile reports many defects through its logger rather than by raising;
    and on a damaged file its parser can raise anything (``KeyError``,
    ``TypeError``, ``ZeroDivisionError``...). Both become one RecordingError
    naming `path` (and `frame`). Exceptions raised outside tifffile's code
    (dropkin's own) pass through unchanged: they are bugs, not bad input.
    """
    handler = _Collect()
    logger = logging.getLogger("tifffile")
    logger.addHandler(handler)
    try:
        yield
    except Exception as exc:
        if isinstance(exc, RecordingError) or not _raised_in_tifffile(exc):
            raise
        raise RecordingError(
            f"is damaged: tifffile cannot parse it ({_brief(exc)})", path=path, frame=frame
        ) from None
    finally:
        logger.removeHandler(handler)
    if handler.messages:
        message = " ".join(handler.messages[0].split())[:200]
        raise RecordingError(
            f"is damaged or truncated (tifffile: {message})", path=path, frame=frame
        )


def open_tifffile(path: Path) -> tifffile.TiffFile:
    """Open with tifffile, any failure becoming a RecordingError."""
    try:
        return tifffile.TiffFile(path)
    except Exception as exc:  # tifffile raises TiffFileError, ValueError, OSError...
        raise RecordingError(f"cannot be read as a TIFF file ({_brief(exc)})", path=path) from None
