"""Lossy exports of a synthetic recording: MPEG-4 video and JPEG frames.

As labs share recordings: an ``.mp4`` as camera viewer software exports it
(MPEG-4 Part 2, OpenCV's ``mp4v`` encoder through its FFmpeg back end, at a
chosen bit rate and a 30 fps playback rate), or a folder of JPEG frames at a
chosen quality. Both hold 8-bit frames only. A writer that is not available
fails with an error, never silently: the tests of lossy sources rely on it.
"""

from __future__ import annotations

from pathlib import Path

from .._atomic import atomic_path
from ..errors import ExperimentError

__all__ = ["write_mp4", "write_jpeg_frames", "PLAYBACK_FPS"]

#: The playback rate written into the video container (a viewer's choice;
#: readers take the frame rate from the experiment file).
PLAYBACK_FPS = 30.0


def frames_folder(out: Path, overwrite: bool, pattern: str) -> None:
    """Make `out` ready for a folder of frames named like `pattern`: refuse a file, or
    frames already there unless `overwrite`, which removes them."""
    if out.exists() and not out.is_dir():
        raise ExperimentError("exists and is not a folder", path=out)
    if not overwrite and out.is_dir() and any(out.glob(pattern)):
        raise ExperimentError(
            "already holds frames", path=out, expected="an empty or new folder, or --overwrite"
        )
    out.mkdir(parents=True, exist_ok=True)
    for stale in out.glob(pattern) if overwrite else ():
        stale.unlink()


def _check_8bit(recording, what: str) -> None:
    if recording.sensor.bit_depth != 8:
        raise ExperimentError(
            f"holds 8-bit frames only, not {recording.sensor.bit_depth}-bit",
            key="format",
            value=what,
        )


def write_mp4(recording, out: Path, *, overwrite: bool, bit_rate: float | None, progress):
    """The frames as an MPEG-4 Part 2 video `out` (``.mp4``), checked by reading it back.

    Parameters
    ----------
    bit_rate : float or None
        Bits per second at the playback rate (:data:`PLAYBACK_FPS`); the
        encoder's default when None.

    Returns
    -------
    experiment, truth : pathlib.Path
        ``<stem>.toml`` and ``<stem>.truth.json`` beside `out`.
    """
    import cv2

    _check_8bit(recording, "mp4")
    rows, cols = recording.camera.shape
    if rows % 2 or cols % 2:
        raise ExperimentError(
            f"is {rows} x {cols}: MPEG-4 video needs an even number of rows and columns",
            key="size",
        )
    if out.exists() and not overwrite:
        raise ExperimentError("already exists", path=out, expected="a new file, or --overwrite")
    out.parent.mkdir(parents=True, exist_ok=True)
    params = [cv2.VIDEOWRITER_PROP_IS_COLOR, 0]
    if bit_rate is not None:
        prop = getattr(cv2, "VIDEOWRITER_PROP_BITRATE", None)
        if prop is None:
            raise ExperimentError(
                f"cannot be set with OpenCV {cv2.__version__} (no VIDEOWRITER_PROP_BITRATE)",
                key="bit_rate",
            )
        params += [prop, int(round(bit_rate))]
    total = recording.frames
    with atomic_path(out) as tmp:  # the temporary name keeps the suffix OpenCV reads
        fourcc = cv2.VideoWriter_fourcc(*"mp4v")
        writer = cv2.VideoWriter(
            str(tmp), cv2.CAP_FFMPEG, fourcc, PLAYBACK_FPS, (cols, rows), params
        )
        if not writer.isOpened():
            raise OSError(f"OpenCV {cv2.__version__} cannot write MPEG-4 (mp4v) video here")
        for index, frame in enumerate(recording.iter_frames()):
            writer.write(frame)
            if progress is not None:
                progress(index + 1, total)
        writer.release()
        _check_video(tmp, total)
    return out.with_suffix(".toml"), out.with_name(out.stem + ".truth.json")


def _check_video(path: Path, frames: int) -> None:
    """Read the video back: every frame must decode (else OSError)."""
    import cv2

    capture = cv2.VideoCapture(str(path))
    count = 0
    try:
        while capture.grab():
            count += 1
    finally:
        capture.release()
    if count != frames:
        raise OSError(f"wrote {frames} frames of MPEG-4 video, but {count} decode")


def write_jpeg_frames(recording, out: Path, *, overwrite: bool, quality: int, progress):
    """One JPEG per frame (``frame_00000.jpg``...) at `quality` (1-100) in the folder `out`.

    Returns
    -------
    experiment, truth : pathlib.Path
        ``experiment.toml`` and ``truth.json`` in `out`.
    """
    import cv2

    _check_8bit(recording, "jpeg")
    if not 1 <= quality <= 100:
        raise ExperimentError("must be from 1 to 100", key="quality", value=quality)
    frames_folder(out, overwrite, "frame_*.*")
    total = recording.frames
    for index, frame in enumerate(recording.iter_frames()):
        path = out / f"frame_{index:05d}.jpg"
        with atomic_path(path) as tmp:
            if not cv2.imwrite(str(tmp), frame, [cv2.IMWRITE_JPEG_QUALITY, int(quality)]):
                raise OSError(f"cannot write {path}")
        if progress is not None:
            progress(index + 1, total)
    return out / "experiment.toml", out / "truth.json"
