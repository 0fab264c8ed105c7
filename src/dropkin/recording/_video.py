"""Reader for a video file, via OpenCV's ``cv2.VideoCapture``.

The container's frame count is checked at open time by decoding its last
frame (and making sure no frame follows); when that fails the frames are
counted by decoding them all, and the recording gets the length found, with a
note; when fewer frames decode than the container lists (a file cut short), the
last one that decodes is dropped too, because a decoder fills a frame cut in
the middle without complaint. Frames are read in order without seeking; a jump seeks with
``CAP_PROP_POS_FRAMES``. OpenCV decodes to blue-green-red colour, which is
converted to grayscale.

The stream's codec tag (``CAP_PROP_FOURCC``) tells a lossy codec (MPEG-4,
H.264, Motion JPEG...; see :mod:`dropkin.recording._lossy`): ``lossy``
describes it, or is None.

The container's frame rate is a playback rate on high-speed cameras (a
20 000 fps recording is typically saved to play at 30 fps), so it is never used
as the frame rate; it is only reported in the notes.
"""

from __future__ import annotations

import math
import os
from contextlib import contextmanager
from pathlib import Path

import cv2
import numpy as np

from ..errors import RecordingError
from ._gray import notes_for_channels, to_gray
from ._libtiff import opencv_path
from ._lossy import video_codec

__all__ = ["VIDEO_SUFFIXES", "Video", "open_video"]

#: Suffixes of the video files dropkin opens (compared without case); any
#: format OpenCV's FFmpeg back end decodes will do.
VIDEO_SUFFIXES = (".avi", ".mp4", ".mov", ".mkv", ".m4v", ".wmv", ".mpg", ".mpeg")


@contextmanager
def opencv_errors(path, frame: int | None = None):
    """Turn an exception OpenCV raises on a damaged file into a RecordingError.

    OpenCV's own AVI reader asserts on damaged chunks (``cv2.error``) where
    FFmpeg would return no frame; both are the file's fault.
    """
    try:
        yield
    except cv2.error as exc:
        said = " ".join(str(exc).split())[-160:]
        raise RecordingError(
            f"cannot be decoded by OpenCV ({said})", path=path, frame=frame
        ) from None


class Video:
    """The frames of a video file; made by :func:`open_video`."""

    kind = "video"
    files = None
    timing = None

    def __init__(self, path: Path) -> None:
        self.path = path
        self._capture = None
        self._next: int | None = None
        try:
            with opencv_errors(path):
                self._inspect()
        except BaseException:
            self.close()
            raise

    def _inspect(self) -> None:
        path = self.path
        capture = self._open()
        ok, image = capture.read()
        if not ok:
            self.close()
            raise RecordingError("holds no frame OpenCV can decode", path=path)
        self.shape = tuple(image.shape[:2])
        self.dtype = image.dtype
        self.bit_depth = 8 * self.dtype.itemsize
        notes = list(notes_for_channels(1 if image.ndim == 2 else image.shape[2]))
        self.codec, self.lossy = video_codec(capture.get(cv2.CAP_PROP_FOURCC))
        fps = capture.get(cv2.CAP_PROP_FPS)
        self.container_fps = fps if math.isfinite(fps) and fps > 0 else None
        if self.container_fps is not None:
            notes.append(f"container frame rate {fps:g} fps is a playback rate and was not used")
        count = capture.get(cv2.CAP_PROP_FRAME_COUNT)
        claimed = int(count) if math.isfinite(count) else 0
        # Every frame takes at least a byte of the file: a count above the size
        # is a damaged header, which FFmpeg's seek (clamped to the last frame)
        # would not reveal; 4294967291 frames claimed by a 5 kB AVI became a
        # recording of that length. Such a file is counted by decoding.
        plausible = 1 <= claimed <= os.path.getsize(path)
        if plausible and self._last_frame_is(claimed - 1):
            self._n = claimed
        else:
            self._n = decoded = self._count_by_decoding()
            if decoded < claimed:
                # A file cut short: its last decodable frame is usually cut too,
                # and a decoder fills the missing part silently. Drop it.
                self._n = max(1, decoded - 1)
                notes.append(
                    f"the container says {claimed} frames but only {decoded} decode "
                    "(a truncated file?); the last of them may be incomplete and was "
                    f"dropped: the recording has {self._n}"
                )
            elif claimed >= 1:
                notes.append(
                    f"the container says {claimed} frames but {decoded} decode; "
                    f"the recording has {decoded}"
                )
            else:
                notes.append(
                    f"the container gives no frame count; {self._n} frames counted by decoding"
                )
        self.notes = tuple(notes)

    def _open(self):
        if self._capture is None:
            capture = cv2.VideoCapture(opencv_path(self.path))
            if not capture.isOpened():
                raise RecordingError(
                    "cannot be opened by OpenCV (not a video format it decodes, or damaged)",
                    path=self.path,
                )
            self._capture, self._next = capture, 0
        return self._capture

    def _last_frame_is(self, last: int) -> bool:
        """Whether frame `last` decodes and no frame follows it."""
        capture = self._open()
        capture.set(cv2.CAP_PROP_POS_FRAMES, last)
        ok = capture.read()[0] and not capture.grab()
        self._next = None
        return bool(ok)

    def _count_by_decoding(self) -> int:
        self.close()
        capture = self._open()
        count = 0
        while capture.grab():
            count += 1
        self.close()
        return count

    def __len__(self) -> int:
        return self._n

    def _read(self, i: int) -> np.ndarray:
        try:
            with opencv_errors(self.path, frame=i):
                capture = self._open()
                if i != self._next:
                    capture.set(cv2.CAP_PROP_POS_FRAMES, i)
                ok, image = capture.read()
        except RecordingError:
            self._next = None
            raise
        if not ok:
            self._next = None
            raise RecordingError(
                "cannot be decoded (the video is damaged or ends early)",
                path=self.path,
                frame=i,
            )
        self._next = i + 1
        return to_gray(image, order="BGR")

    def close(self) -> None:
        """Release the capture, if open; the next read reopens it."""
        if self._capture is not None:
            self._capture.release()
            self._capture = None
        self._next = None

    def __getstate__(self) -> dict:
        state = dict(self.__dict__)
        state["_capture"] = state["_next"] = None
        return state


def open_video(path: Path) -> Video:
    """Open a video file (see the module docstring)."""
    return Video(path)
