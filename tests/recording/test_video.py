"""Video files written by OpenCV's VideoWriter."""

from __future__ import annotations

import cv2
import numpy as np
import pytest

from dropkin.errors import RecordingError
from dropkin.recording import VIDEO_SUFFIXES, open_recording


def write_video(path, frames, fourcc, *, colour=False, fps=30.0):
    """Write `frames` with cv2.VideoWriter; skip the test when the codec is missing."""
    rows, cols = frames.shape[1:3]
    writer = cv2.VideoWriter(str(path), cv2.VideoWriter_fourcc(*fourcc), fps, (cols, rows), colour)
    if not writer.isOpened():
        pytest.skip(f"this OpenCV build cannot write {fourcc} to {path.suffix}")
    try:
        for frame in frames:
            writer.write(frame)
    finally:
        writer.release()
    return path


# MJPG is motion JPEG: every frame is a JPEG at OpenCV's default quality. On the
# smooth test pattern that moves values by a few gray levels (5 at most when this
# was written); 12 levels bound it with room for other libjpeg versions.
LOSSY_MAX = 12
LOSSY_MEAN = 2.0


def test_a_gray_mjpg_avi_is_close_to_the_written_frames(tmp_path, smooth8, nearest):
    path = write_video(tmp_path / "clip.avi", smooth8, "MJPG")
    with open_recording(path, frame_rate=20000.0) as rec:
        assert (rec.kind, len(rec), rec.frame_shape, rec.dtype) == (
            "video",
            10,
            (48, 64),
            np.uint8,
        )
        assert rec.bit_depth == 8
        assert "container frame rate 30 fps is a playback rate and was not used" in rec.notes
        assert rec.frame_rate == 20000.0
        for k, got in enumerate(rec):
            error = np.abs(got.astype(int) - smooth8[k])
            assert error.max() <= LOSSY_MAX and error.mean() <= LOSSY_MEAN
            assert nearest(got, smooth8) == k  # the frame written at that place


def test_a_colour_video_becomes_gray(tmp_path, smooth8):
    bgr = np.stack([smooth8, np.roll(smooth8, 5, axis=2), 255 - smooth8], axis=-1)
    path = write_video(tmp_path / "colour.avi", bgr, "MJPG", colour=True)
    with open_recording(path, frame_rate=1.0) as rec:
        assert "colour frames converted to grayscale (ITU-R BT.601 weights)" in rec.notes
        expected = bgr.astype(float) @ np.array([0.114, 0.587, 0.299])  # numpy BT.601, BGR
        for k in (0, 9):
            # Lossy as above, and JPEG also subsamples the colour planes; the gray
            # mix averages that out to a few levels.
            error = np.abs(rec[k] - expected[k])
            assert error.max() <= LOSSY_MAX and error.mean() <= LOSSY_MEAN


@pytest.mark.parametrize("suffix", [".avi", ".mkv"])
def test_a_lossless_ffv1_video_gives_back_the_written_frames(tmp_path, frames8, suffix):
    path = write_video(tmp_path / f"clip{suffix}", frames8, "FFV1")
    with open_recording(path, frame_rate=1.0) as rec:
        # FFV1 is lossless: expected the arrays handed to cv2.VideoWriter exactly.
        np.testing.assert_array_equal(np.stack(list(rec)), frames8)


def test_random_access_and_sequential_reads_agree(tmp_path, frames8):
    path = write_video(tmp_path / "clip.avi", frames8, "MJPG")
    with open_recording(path, frame_rate=1.0) as rec:
        in_order = np.stack(list(rec))  # sequential decoding, no seeking
        for k in (5, 1, -1, 0, 3, 3):
            np.testing.assert_array_equal(rec[k], in_order[k])
        np.testing.assert_array_equal(np.concatenate([b for _, b in rec.chunks(3)]), in_order)


def test_a_video_cut_short_gets_a_corrected_length(tmp_path, smooth8, nearest):
    path = write_video(tmp_path / "clip.avi", smooth8, "MJPG")
    data = path.read_bytes()
    path.write_bytes(data[: int(len(data) * 0.9)])  # lose the last frames and the index
    with open_recording(path, frame_rate=1.0) as rec:
        assert 1 <= len(rec) < 10
        assert any("the container says 10 frames" in note for note in rec.notes)
        for k, got in enumerate(rec):  # every frame kept is whole and in its place
            assert np.abs(got.astype(int) - smooth8[k]).max() <= LOSSY_MAX
            assert nearest(got, smooth8) == k


def test_a_file_opencv_cannot_open_is_named(tmp_path, rng):
    path = tmp_path / "noise.avi"
    path.write_bytes(rng.integers(0, 256, 4096, dtype=np.uint8).tobytes())
    with pytest.raises(RecordingError, match=r"noise\.avi: cannot be opened by OpenCV"):
        open_recording(path, frame_rate=1.0)


def test_the_container_rate_is_never_the_frame_rate(tmp_path, frames8):
    path = write_video(tmp_path / "clip.avi", frames8, "MJPG", fps=25.0)
    with pytest.raises(
        RecordingError,
        match=r"clip\.avi: recording\.frame_rate: no frame rate: give recording\.frame_rate "
        r"in the experiment file or --frame-rate \(the container's 25 fps is a playback",
    ) as info:
        open_recording(path)
    assert info.value.key == "recording.frame_rate"


def test_video_suffixes_include_avi_and_mp4():
    assert {".avi", ".mp4"} <= set(VIDEO_SUFFIXES)
