"""Lossy sources are named by the readers: the codec of a video, JPEG frames.

The files are written here by OpenCV's own encoders (``cv2.VideoWriter`` with
the four-character code of each codec, ``cv2.imwrite``), so what the reader
says is checked against what was asked of an independent writer. A writer
missing from this OpenCV build fails the test instead of skipping it: the
package depends on opencv-python-headless, whose FFmpeg back end writes
these (common practice: its wheels ship FFmpeg's encoders for them).
"""

from __future__ import annotations

import struct

import cv2
import numpy as np
import pytest

from dropkin.experiment import experiment_from_mapping
from dropkin.recording import LOSSY_CAUTION, open_recording
from dropkin.recording._describe import describe, format_description
from dropkin.recording._headers import read_header
from dropkin.recording._lossy import fourcc_text, video_codec


def _frames(k=6, rows=48, cols=64):
    rng = np.random.default_rng(0)
    base = np.linspace(20, 220, cols)[None, :] + np.zeros((rows, 1))
    return [
        np.clip(base + rng.normal(0, 3, base.shape), 0, 255).astype(np.uint8) for _ in range(k)
    ]


def _video(path, fourcc, frames):
    rows, cols = frames[0].shape
    writer = cv2.VideoWriter(str(path), cv2.VideoWriter_fourcc(*fourcc), 30.0, (cols, rows), False)
    assert writer.isOpened(), f"this OpenCV build cannot write {fourcc} to {path.suffix}"
    for frame in frames:
        writer.write(frame)
    writer.release()
    return path


@pytest.mark.parametrize(
    ("name", "fourcc", "family"),
    [
        ("clip.mp4", "mp4v", "MPEG-4 Part 2"),
        ("clip.avi", "XVID", "MPEG-4 Part 2"),
        ("clip.avi", "MJPG", "Motion JPEG"),
        ("clip.avi", "FFV1", None),  # lossless
        ("clip.mkv", "FFV1", None),
    ],
)
def test_the_video_reader_names_a_lossy_codec(tmp_path, name, fourcc, family):
    path = _video(tmp_path / name, fourcc, _frames())
    with open_recording(path, frame_rate=1e4) as rec:
        assert len(rec) == 6
        if family is None:
            assert rec.lossy is None
        else:
            assert rec.lossy.startswith(f"{family} video (codec tag ")
        # A slice keeps its source's compression.
        assert rec[2:4].lossy == rec.lossy


def test_codec_tags(tmp_path):
    assert video_codec(cv2.VideoWriter_fourcc(*"avc1"))[1] == "H.264 video (codec tag avc1)"
    assert video_codec(cv2.VideoWriter_fourcc(*"HFYU")) == ("HFYU", None)
    assert fourcc_text(0) == "" and fourcc_text(float("nan")) == "" and fourcc_text(-1) == ""
    assert video_codec(0.0) == ("", None)


def test_jpeg_frames_are_lossy_png_frames_are_not(tmp_path):
    frames = _frames()
    for kind in ("png", "jpg"):
        folder = tmp_path / kind
        folder.mkdir()
        for k, frame in enumerate(frames):
            assert cv2.imwrite(str(folder / f"f{k}.{kind}"), frame)
    with open_recording(tmp_path / "png", frame_rate=1.0) as rec:
        assert rec.lossy is None
    with open_recording(tmp_path / "jpg", frame_rate=1.0) as rec:
        assert rec.lossy == "JPEG frames"
        facts = describe(rec, experiment_from_mapping({}))
        assert facts["lossy_compression"] == "JPEG frames"
        assert "compression     lossy: JPEG frames" in format_description(facts)
    # One JPEG among PNG frames: said, with the count.
    assert cv2.imwrite(str(tmp_path / "png" / "f9.jpg"), frames[0])
    with open_recording(tmp_path / "png", frame_rate=1.0) as rec:
        assert rec.lossy == "JPEG frames (1 of 7)"


def _jpeg_bytes(sof: int) -> bytes:
    """A JPEG whose header ends at its start-of-frame marker `sof`, 8 x 8 gray
    (enough for the header reader, which decodes nothing)."""
    frame = struct.pack(">HBHHB", 11, 8, 8, 8, 1) + bytes([1, 0x11, 0])
    return b"\xff\xd8" + bytes([0xFF, sof]) + frame + b"\xff\xd9"


@pytest.mark.parametrize(("sof", "lossy"), [(0xC0, "JPEG"), (0xC2, "JPEG"), (0xC3, None)])
def test_lossless_jpeg_is_told_by_its_start_of_frame_marker(tmp_path, sof, lossy):
    # ITU-T T.81 (1992), Table B.1: SOF0 baseline and SOF2 progressive are
    # DCT-based (lossy); SOF3 is lossless.
    path = tmp_path / "frame.jpg"
    path.write_bytes(_jpeg_bytes(sof))
    header = read_header(path)
    assert (header.rows, header.cols, header.lossy) == (8, 8, lossy)


def test_the_caution_says_what_to_expect():
    assert LOSSY_CAUTION.startswith("sub-pixel accuracy is not expected")


def test_jpeg_compressed_tiff_is_lossy(tmp_path):
    # Written by OpenCV's libtiff with compression 7 (JPEG, TIFF Technical
    # Note 2); the same frames deflated (8) are not lossy.
    frames = _frames(k=3)
    for code, name in ((7, "jpeg"), (8, "deflate")):
        stack = tmp_path / f"{name}.tif"
        assert cv2.imwritemulti(str(stack), frames, [cv2.IMWRITE_TIFF_COMPRESSION, code])
        folder = tmp_path / name
        folder.mkdir()
        for k, frame in enumerate(frames):
            assert cv2.imwrite(
                str(folder / f"f{k}.tif"), frame, [cv2.IMWRITE_TIFF_COMPRESSION, code]
            )
        with (
            open_recording(stack, frame_rate=1.0) as rec,
            open_recording(folder, frame_rate=1.0) as fold,
        ):
            assert len(rec) == len(fold) == 3
            if code == 7:
                assert rec.lossy == "JPEG TIFF pages" and fold.lossy == "JPEG frames"
            else:
                assert rec.lossy is None and fold.lossy is None
