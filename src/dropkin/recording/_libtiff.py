"""The errors libtiff reports while OpenCV decodes a TIFF page, as a RecordingError.

OpenCV decodes LZW and JPEG pages (which tifffile cannot without the optional
imagecodecs package) with libtiff. When the data are damaged, libtiff reports
it ("LZWDecode: Not enough data at scanline 0", "Strip 0 not terminated with
EOI code") through OpenCV's log, on the process's standard error, and OpenCV
returns the frame anyway, zeros where libtiff gave up. Nothing in OpenCV's
Python interface tells the caller. So, while OpenCV decodes, the standard
error descriptor is sent to a temporary file (and OpenCV's log level raised to
errors at least); a ``TIFF_Error`` line in it becomes a RecordingError naming
the file and frame. The rest of OpenCV's output in that window (libtiff's
warnings about unknown tags) is dropped: dropkin reports what matters in one
line.

The redirection is process-wide for the duration of one decode; like the
readers themselves, it is not meant to run in several threads at once. When
file descriptor 2 cannot be duplicated (closed), decoding runs unchecked.
"""

from __future__ import annotations

import os
import tempfile
from contextlib import contextmanager

import cv2

from ..errors import RecordingError

__all__ = ["libtiff_errors", "libpng_errors", "opencv_path"]

_LOG = cv2.utils.logging


def opencv_path(path) -> str:
    """`path` as the text OpenCV's file functions take, or a RecordingError.

    OpenCV takes a file name as UTF-8 text; a name that is not valid UTF-8
    (bytes such as ``\\xff`` in a folder's name, kept by Python as lone
    surrogates) crashed the process by a signal inside OpenCV. Readers that
    can, hand OpenCV the file's bytes instead (``cv2.imdecode``); the video
    reader and the TIFF pages OpenCV decodes need a name, and refuse here.
    """
    text = str(path)
    try:
        text.encode("utf-8")
    except UnicodeEncodeError:
        raise RecordingError(
            "has a name that is not valid UTF-8, which OpenCV cannot open",
            path=path,
            expected="the file (or its folder) renamed in UTF-8",
        ) from None
    return text


@contextmanager
def libtiff_errors(path, frame: int | None = None):
    """Raise a RecordingError after the block if libtiff reported an error inside it."""
    try:
        saved = os.dup(2)
    except OSError:  # no standard error to redirect: decode unchecked
        yield
        return
    level = _LOG.getLogLevel()
    with tempfile.TemporaryFile() as log:
        try:
            os.dup2(log.fileno(), 2)
            if level < _LOG.LOG_LEVEL_ERROR:
                _LOG.setLogLevel(_LOG.LOG_LEVEL_ERROR)
            yield
        finally:
            os.dup2(saved, 2)
            os.close(saved)
            _LOG.setLogLevel(level)
        log.seek(0)
        text = log.read().decode("utf-8", errors="replace")
    errors = [line for line in text.splitlines() if "TIFF_Error" in line]
    if errors:
        said = " ".join(errors[0].split("TIFF_Error", 1)[1].split())[:160]
        raise RecordingError(f"cannot be decoded (libtiff: {said})", path=path, frame=frame)


@contextmanager
def libpng_errors(path, frame: int | None = None):
    """Keep libpng's complaints off standard error while OpenCV decodes a PNG.

    On a damaged PNG, libpng writes ``libpng error: ...`` straight to the
    process's standard error and OpenCV returns no image; the caller then
    raises its own one-line error. The block's output is captured, and a
    libpng error in it becomes that RecordingError here, with libpng's words.
    """
    try:
        saved = os.dup(2)
    except OSError:  # no standard error to redirect
        yield
        return
    with tempfile.TemporaryFile() as log:
        try:
            os.dup2(log.fileno(), 2)
            yield
        finally:
            os.dup2(saved, 2)
            os.close(saved)
            log.seek(0)
            text = log.read().decode("utf-8", errors="replace")
    errors = [line for line in text.splitlines() if "libpng error" in line]
    if errors:
        said = " ".join(errors[0].split("libpng error", 1)[1].lstrip(": ").split())[:160]
        raise RecordingError(f"cannot be decoded (libpng: {said})", path=path, frame=frame)
