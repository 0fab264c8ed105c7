"""``open_recording``: pick the reader, the frames and the time axis.

A folder is a folder of frames (:mod:`._folder`); a single file is opened by
the reader its suffix names in :data:`FILE_FORMATS`. Adding a format of
single files is one entry there plus its reader module.
"""

from __future__ import annotations

import math
import operator
import os
from collections.abc import Callable
from dataclasses import dataclass
from numbers import Real
from pathlib import Path

import numpy as np

from ..errors import RecordingError
from ._base import FileTiming, Recording
from ._cine import CINE_SUFFIXES, open_cine
from ._folder import FRAME_SUFFIXES, open_image_folder
from ._mraw import MRAW_SUFFIXES, open_mraw
from ._tiff import TIFF_SUFFIXES, open_tiff_stack
from ._video import VIDEO_SUFFIXES, open_video

__all__ = ["open_recording", "RECORDING_SUFFIXES", "FILE_FORMATS", "OPENERS"]


@dataclass(frozen=True)
class FileFormat:
    """A kind of recording held in one file.

    Attributes
    ----------
    name : str
        How messages name it ("a TIFF stack").
    suffixes : tuple of str
        Its file suffixes, lower case with the dot.
    opener : callable
        ``opener(path)`` -> the reader's frame source (see :mod:`._base`).
    """

    name: str
    suffixes: tuple[str, ...]
    opener: Callable[[Path], object]


#: The kinds of single-file recordings, in the order messages list them.
FILE_FORMATS = (
    FileFormat("a TIFF stack", TIFF_SUFFIXES, open_tiff_stack),
    FileFormat("a video", VIDEO_SUFFIXES, open_video),
    FileFormat("a .cine file", CINE_SUFFIXES, open_cine),
    FileFormat("a .mraw recording with its .cih/.cihx header", MRAW_SUFFIXES, open_mraw),
)

#: Suffix (lower case) → the reader that opens a file with it.
OPENERS = {suffix: form.opener for form in FILE_FORMATS for suffix in form.suffixes}

#: Suffixes of the single files that are recordings (TIFF stacks, videos, camera files).
RECORDING_SUFFIXES = tuple(OPENERS)

NO_FRAME_RATE = "no frame rate: give recording.frame_rate in the experiment file or --frame-rate"

# Per-frame times closer than this (relative) to one interval count as regular.
_REGULAR = 1e-3


def _positive(value, *, key: str, unit: str, path) -> float | None:
    """`value` as a positive finite float, or None; else a RecordingError."""
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, Real):
        raise RecordingError(
            f"must be a number in {unit} (SI), not {type(value).__name__}",
            path=path,
            key=key,
            value=value,
            expected=f"a positive number of {unit}",
        )
    number = float(value)
    if not math.isfinite(number) or number <= 0:
        raise RecordingError(
            "must be positive and finite",
            path=path,
            key=key,
            value=value,
            expected=f"a positive number of {unit}",
        )
    return number


def _frame_index(value, *, key: str, low: int, high: int, path) -> int:
    expected = f"a frame index from {low} to {high}"
    if isinstance(value, bool):
        raise RecordingError("must be an integer", path=path, key=key, value=value)
    try:
        index = operator.index(value)
    except TypeError:
        raise RecordingError(
            "must be an integer", path=path, key=key, value=value, expected=expected
        ) from None
    if not low <= index <= high:
        raise RecordingError(
            f"comes before recording.first_frame = {low}"
            if 0 <= index < low
            else f"is out of range for this recording of {high + 1} frames",
            path=path,
            key=key,
            value=value,
            expected=expected,
        )
    return index


def _open_source(path: Path):
    if not path.exists():
        raise RecordingError("does not exist", path=path)
    if path.is_dir():
        return open_image_folder(path)
    suffix = path.suffix.lower()
    opener = OPENERS.get(suffix)
    if opener is not None:
        return opener(path)
    kinds = [f"a folder of frames ({', '.join(FRAME_SUFFIXES)})"]
    kinds += [f"{form.name} ({', '.join(form.suffixes)})" for form in FILE_FORMATS]
    raise RecordingError(
        f"is not a supported recording (suffix {suffix or 'none'!r})",
        path=path,
        expected=", ".join(kinds[:-1]) + " or " + kinds[-1],
    )


def _rate_of(timing: FileTiming) -> float | None:
    """The frame rate a file's timing implies, or None when it is irregular."""
    if timing.interval is not None:
        return 1.0 / timing.interval
    return _regular_rate(timing.times)


def _regular_rate(times: np.ndarray) -> float | None:
    """1 / interval for evenly spaced `times`, else None (also for one frame)."""
    steps = np.diff(times)
    if len(steps) == 0:
        return None
    mean = float(np.mean(steps))
    if np.max(np.abs(steps - mean)) <= _REGULAR * mean:
        return 1.0 / mean
    return None


def open_recording(
    source,
    *,
    frame_rate: float | None = None,
    frame_rate_origin: str = "given",
    pixel_size: float | None = None,
    first_frame: int = 0,
    last_frame: int | None = None,
) -> Recording:
    """Open a folder of frames, a TIFF stack, a video or a camera file as a :class:`Recording`.

    Nothing is decoded beyond what is needed to check the recording: every
    frame file's header in a folder, the page structure of a TIFF file, the
    first and last frames of a video.

    Parameters
    ----------
    source : str or os.PathLike
        A folder of PNG, TIFF, BMP or JPEG frames (see ``FRAME_SUFFIXES``), a
        multi-page TIFF file, a video file (see ``VIDEO_SUFFIXES``), a .cine
        file, or a .mraw recording (its .mraw, .cih or .cihx file).
    frame_rate : float, optional
        Frames per second, in hertz. When given it is used, whatever the file
        says. When not, the file's own timing is used: per-frame OME ``DeltaT``
        times, an OME ``TimeIncrement`` or an ImageJ ``finterval``; a camera
        file's per-frame time stamps or its saved-frame rate (record rate over
        save step). A video container's frame rate is never used (it is a
        playback rate).
    frame_rate_origin : str, optional
        Where a given `frame_rate` came from, e.g. "experiment file" or
        "command line"; kept as ``Recording.frame_rate_origin``.
    pixel_size : float, optional
        Length of one pixel in the object plane, in metres.
    first_frame : int, optional
        Index of the first frame kept (frames before it are skipped).
    last_frame : int, optional
        Index of the last frame kept, inclusive; the last frame of the source
        by default. ``first_frame=10, last_frame=19`` keeps 10 frames.

    Returns
    -------
    recording : Recording
        Its ``times`` start at 0 at `first_frame`.

    Raises
    ------
    RecordingError
        For a missing or unsupported source, unreadable or inconsistent frames,
        a `frame_rate` or `pixel_size` that is not a positive finite number, a
        frame range outside the recording (key ``recording.first_frame`` or
        ``recording.last_frame``), or no frame rate at all (key
        ``recording.frame_rate``).
    """
    try:
        path = Path(os.fspath(source))
    except TypeError:
        raise RecordingError(f"source must be a path, not {type(source).__name__}") from None
    rate = _positive(frame_rate, key="recording.frame_rate", unit="Hz", path=path)
    pixel_size = _positive(pixel_size, key="recording.pixel_size", unit="m", path=path)
    if not isinstance(frame_rate_origin, str) or not frame_rate_origin:
        raise TypeError("frame_rate_origin must be a non-empty str")
    frames = _open_source(path)
    try:
        return _select(frames, path, rate, frame_rate_origin, pixel_size, first_frame, last_frame)
    except BaseException:
        close = getattr(frames, "close", None)
        if close is not None:
            close()
        raise


def _select(frames, path, rate, origin, pixel_size, first_frame, last_frame):
    n = len(frames)
    first = _frame_index(first_frame, key="recording.first_frame", low=0, high=n - 1, path=path)
    last = n - 1
    if last_frame is not None:
        last = _frame_index(
            last_frame, key="recording.last_frame", low=first, high=n - 1, path=path
        )
    kept = range(first, last + 1)
    notes = []
    if len(kept) != n:
        notes.append(f"frames {first} to {last} of {n} kept")
    timing = frames.timing
    given_rate = rate
    if rate is not None:
        times = np.arange(len(kept)) / rate
        if timing is not None:
            file_rate = _rate_of(timing)
            if file_rate is None or not math.isclose(file_rate, rate, rel_tol=1e-6):
                said = "irregular times" if file_rate is None else f"{file_rate:g} Hz"
                notes.append(f"{timing.origin} gives {said}; the given {rate:g} Hz was used")
    elif timing is not None:
        origin = timing.origin
        if timing.times is not None:
            times = timing.times[first : last + 1] - timing.times[first]
            if np.any(np.diff(times) <= 0):  # rounding of times far from zero
                raise RecordingError(
                    f"the file's frame times do not increase from frame {first} on "
                    "(rounding of times far from zero); give the frame rate instead",
                    path=path,
                    key="recording.frame_rate",
                )
            rate = _regular_rate(times)
            if rate is None and len(times) > 1:
                notes.append("the file's frame times are irregular: no single frame rate")
        else:
            rate = 1.0 / timing.interval
            times = np.arange(len(kept)) * timing.interval
    else:
        message = NO_FRAME_RATE
        fps = getattr(frames, "container_fps", None)
        if fps is not None:
            message += f" (the container's {fps:g} fps is a playback rate, not used)"
        unused = getattr(frames, "timing_notes", ())
        if unused:  # timing the file has but that could not be trusted
            message += f" ({'; '.join(unused)})"
        raise RecordingError(message, path=path, key="recording.frame_rate")
    return Recording(
        frames,
        times=times,
        frame_rate=rate,
        frame_rate_origin=origin,
        pixel_size=pixel_size,
        indices=kept,
        notes=tuple(notes),
        trigger_time=_trigger_time(frames, timing, given_rate, first),
    )


def _trigger_time(frames, timing: FileTiming | None, given_rate, first: int) -> float | None:
    """The trigger's instant on the recording's time axis (0 at frame `first`), or None.

    With a given frame rate the trigger's frame is placed on that rate's axis;
    otherwise the file's own trigger instant is moved to the axis of its times.
    """
    if given_rate is not None or timing is None or timing.trigger is None:
        place = getattr(frames, "trigger_frame", None)
        if given_rate is None or place is None:
            return None
        return (float(place) - first) / given_rate
    if timing.times is not None:
        return float(timing.trigger - timing.times[first])
    return float(timing.trigger - first * timing.interval)
