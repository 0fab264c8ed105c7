"""Which of a TIFF file's image series and pages are the frames of the recording.

The frames are the first image series of the file, its leading axes flattened
(an ImageJ hyperstack with axes ``TYX``, a tifffile stack ``QYX``, a single
page ``YX``). When a file holds several one-page series of the same size (what
tifffile writes for pages added one by one), every page is a frame;
reduced-resolution previews are skipped; any other mix of images is refused.
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import RecordingError
from ._tiffpage import sample_bits

__all__ = ["frame_layout", "choose_frames"]


def frame_layout(series, path) -> tuple[str, tuple[int, ...], int]:
    """Split a series into frames: (frame axes, frame shape, number of frames)."""
    axes, shape = series.axes, tuple(int(s) for s in series.shape)
    if axes.endswith("YXS"):
        tail = 3
    elif axes.endswith("YX"):
        tail = 2
    else:
        raise RecordingError(
            f"has image axes {axes!r}; expected frames of rows and columns "
            "(axes ending in YX or YXS)",
            path=path,
        )
    if "S" in axes[:-tail]:
        raise RecordingError(
            "stores the samples of each pixel in separate planes (PlanarConfiguration 2); "
            "expected gray frames or interleaved colour samples",
            path=path,
        )
    if tail == 3 and not 1 <= shape[-1] <= 4:
        raise RecordingError(f"has {shape[-1]} samples per pixel; expected 1 to 4", path=path)
    return axes[:-tail], shape[-tail:], math.prod(shape[:-tail])


def choose_frames(tif, series, frame_axes, frame_shape, n: int, notes: list[str], path):
    """How the frames are read, and which pages they are: ``(mode, pages)``.

    `mode` is "raw" (uncompressed frames back to back; `pages` is None) or
    "pages" (one frame per page; `pages` lists them). A note on skipped
    previews is added to `notes`.
    """
    everything = tif.series
    same = [
        s for s in everything if s.axes == series.axes and s.shape == series.shape and len(s) == 1
    ]
    if not frame_axes and len(everything) > 1 and len(same) == len(everything):
        return "pages", [s[0] for s in everything]  # pages written one by one: each a series
    alike = [s for s in everything if _frames_of(s, path) == _frames_of(series, path)]
    if len(alike) > 1:
        counts = ", ".join(str(math.prod(s.shape[: -len(frame_shape)])) for s in alike)
        rows, cols = frame_shape[:2]
        raise RecordingError(
            f"holds {len(alike)} image series of {rows} x {cols} {series.dtype} frames "
            f"({counts} frames); cannot tell which one is the recording",
            path=path,
        )
    others = everything[1:]
    if any(not _is_preview(s) for s in others):
        sizes = ", ".join(" x ".join(map(str, s.shape)) + f" {s.dtype}" for s in everything[:4])
        raise RecordingError(
            f"holds {len(everything)} images of different sizes ({sizes}); "
            "expected one stack of frames",
            path=path,
        )
    if others:
        notes.append(f"{len(others)} reduced-resolution preview image(s) were not read")
    key = series.keyframe
    if (
        series.dataoffset is not None
        and key.is_final
        and sample_bits(key, path) == 8 * np.dtype(series.dtype).itemsize
    ):
        return "raw", None
    if len(series) == n:
        return "pages", list(series)
    raise RecordingError(
        f"stores {n} frames in {len(series)} compressed pages; "
        "only one frame per page can be streamed",
        path=path,
    )


def _frames_of(series, path):
    """(frame shape, dtype) of a series, or None when it is not made of frames."""
    try:
        return frame_layout(series, path)[1], np.dtype(series.dtype)
    except RecordingError:
        return None


def _is_preview(series) -> bool:
    """Whether a series is a reduced-resolution image (NewSubfileType bit 0, TIFF 6.0)."""
    try:
        return bool(series.keyframe.is_reduced)
    except AttributeError:
        return False
