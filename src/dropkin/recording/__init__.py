"""Readers for recordings: a folder of frames, a multi-page TIFF, a video file,
a .cine file, a .mraw recording with its .cih/.cihx header.

Every reader gives the same :class:`Recording`: a lazy sequence of 2-D
grayscale frames with their times (seconds from the first kept frame), the
frame rate and where it came from, the pixel size, and notes on what the
reader did. Open one with :func:`open_recording`.

Examples
--------
>>> import tempfile, pathlib, numpy as np, tifffile
>>> with tempfile.TemporaryDirectory() as folder:
...     path = pathlib.Path(folder) / "stack.tif"
...     tifffile.imwrite(path, np.zeros((4, 8, 6), np.uint16), photometric="minisblack")
...     with open_recording(path, frame_rate=20000.0) as rec:
...         print(len(rec), rec.frame_shape, rec.dtype, rec.times[1], rec.kind)
4 (8, 6) uint16 5e-05 multi-page TIFF
"""

from ._base import Recording as Recording
from ._folder import FRAME_SUFFIXES as FRAME_SUFFIXES
from ._folder import read_image as read_image
from ._limits import frames_at_once as frames_at_once
from ._limits import frames_mapped as frames_mapped
from ._lossy import CAUTION as LOSSY_CAUTION
from ._open import RECORDING_SUFFIXES as RECORDING_SUFFIXES
from ._open import open_recording as open_recording
from ._tiff import TIFF_SUFFIXES as TIFF_SUFFIXES
from ._video import VIDEO_SUFFIXES as VIDEO_SUFFIXES

__all__ = [
    "Recording",
    "open_recording",
    "read_image",
    "frames_at_once",
    "frames_mapped",
    "FRAME_SUFFIXES",
    "TIFF_SUFFIXES",
    "VIDEO_SUFFIXES",
    "RECORDING_SUFFIXES",
    "LOSSY_CAUTION",
]
