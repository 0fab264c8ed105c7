"""The Recording type and open_recording's choices, whatever the file format."""

from __future__ import annotations

import math
import pickle

import cv2
import numpy as np
import pytest
import tifffile

from dropkin.errors import RecordingError
from dropkin.recording import RECORDING_SUFFIXES, Recording, open_recording


@pytest.fixture
def stack(tmp_path, frames12):
    """A 7-frame 12-bit stack written by tifffile; returns (path, written array)."""
    path = tmp_path / "stack.tif"
    tifffile.imwrite(path, frames12, photometric="minisblack")
    return path, frames12


@pytest.fixture
def rec(stack):
    with open_recording(stack[0], frame_rate=1000.0, frame_rate_origin="experiment file") as rec:
        yield rec


def test_indexing_reads_single_frames(rec, stack):
    written = stack[1]
    assert isinstance(rec, Recording) and len(rec) == 7
    np.testing.assert_array_equal(rec[0], written[0])  # expected: what tifffile wrote
    np.testing.assert_array_equal(rec[-1], written[6])
    np.testing.assert_array_equal(rec[np.int64(3)], written[3])
    with pytest.raises(IndexError):
        rec[7]
    with pytest.raises(IndexError):
        rec[-8]
    with pytest.raises(TypeError):
        rec[1.0]


def test_frames_are_new_arrays(rec, stack):
    frame = rec[2]
    frame[:] = 0  # the caller owns what it gets
    np.testing.assert_array_equal(rec[2], stack[1][2])


def test_times_come_from_the_frame_rate(rec):
    np.testing.assert_allclose(rec.times, np.arange(7) / 1000.0, rtol=1e-15, atol=0)
    assert rec.times.dtype == np.float64
    assert (rec.frame_rate, rec.frame_rate_origin) == (1000.0, "experiment file")
    with pytest.raises(ValueError):
        rec.times[0] = 1.0  # a passive record


def test_slices_are_lazy_recordings_with_their_times(rec, stack):
    written = stack[1]
    for key in (slice(2, 6), slice(None, None, 2), slice(None, None, -1), slice(-3, None)):
        part = rec[key]
        assert isinstance(part, Recording)
        assert len(part) == len(written[key])
        np.testing.assert_array_equal(np.stack(list(part)), written[key])
        np.testing.assert_array_equal(part.times, rec.times[key])
        assert part.source_frames == range(7)[key]
    assert rec[::2].frame_rate == 500.0
    nested = rec[1:][::3]
    np.testing.assert_array_equal(np.stack(list(nested)), written[1:][::3])
    assert len(rec[5:2]) == 0


def test_chunks_cover_every_frame_once(rec, stack):
    written = stack[1]
    for n in (1, 3, 7, 100):
        pieces = list(rec.chunks(n))
        assert [start for start, _ in pieces] == list(range(0, 7, n))
        assert all(block.shape[0] <= n and block.shape[1:] == (24, 32) for _, block in pieces)
        np.testing.assert_array_equal(np.concatenate([block for _, block in pieces]), written)
    stepped = list(rec[::2].chunks(3))  # the frame-by-frame path
    np.testing.assert_array_equal(np.concatenate([b for _, b in stepped]), written[::2])
    with pytest.raises(ValueError, match="at least 1"):
        next(rec.chunks(0))


def test_chunks_are_fresh_arrays(rec, stack):
    first = [block for _, block in rec.chunks(3)]
    first[0][:] = 0
    again = next(rec.chunks(3))[1]
    np.testing.assert_array_equal(again, stack[1][:3])
    assert not np.shares_memory(first[1], again)


def test_first_and_last_frame_select_an_inclusive_range(stack):
    path, written = stack
    with open_recording(path, frame_rate=100.0, first_frame=2, last_frame=5) as part:
        assert len(part) == 4
        np.testing.assert_array_equal(np.stack(list(part)), written[2:6])
        np.testing.assert_allclose(part.times, np.arange(4) / 100.0)  # from 0 at frame 2
        assert part.source_frames == range(2, 6)
        assert "frames 2 to 5 of 7 kept" in part.notes
    with open_recording(path, frame_rate=100.0, first_frame=6) as tail:
        np.testing.assert_array_equal(tail[0], written[6])


@pytest.mark.parametrize(
    ("first", "last", "key"),
    [
        (7, None, "recording.first_frame"),
        (-1, None, "recording.first_frame"),
        (1.5, None, "recording.first_frame"),
        (True, None, "recording.first_frame"),
        (0, 7, "recording.last_frame"),
        (4, 3, "recording.last_frame"),
    ],
)
def test_a_frame_range_outside_the_recording_names_the_key(stack, first, last, key):
    with pytest.raises(RecordingError, match=rf"stack\.tif: {key} = ") as info:
        open_recording(stack[0], frame_rate=1.0, first_frame=first, last_frame=last)
    assert info.value.key == key


@pytest.mark.parametrize("bad", [0, -5.0, math.nan, math.inf, "20 kHz", True])
@pytest.mark.parametrize(
    ("name", "key"),
    [("frame_rate", "recording.frame_rate"), ("pixel_size", "recording.pixel_size")],
)
def test_frame_rate_and_pixel_size_must_be_positive_numbers(stack, name, key, bad):
    settings = {"frame_rate": 1.0, name: bad}
    with pytest.raises(RecordingError, match=rf"stack\.tif: {key} = .*: must be"):
        open_recording(stack[0], **settings)


def test_pixel_size_is_kept(stack):
    with open_recording(stack[0], frame_rate=1.0, pixel_size=5e-6) as rec:
        assert rec.pixel_size == 5e-6
    with open_recording(stack[0], frame_rate=1.0) as rec:
        assert rec.pixel_size is None


def test_no_frame_rate_anywhere_is_refused_with_the_key(tmp_path, frames8):
    for k, frame in enumerate(frames8):
        assert cv2.imwrite(str(tmp_path / f"f{k}.png"), frame)
    with pytest.raises(RecordingError) as info:
        open_recording(tmp_path)
    assert info.value.key == "recording.frame_rate"
    assert info.value.message == (
        "no frame rate: give recording.frame_rate in the experiment file or --frame-rate"
    )
    assert info.value.path == str(tmp_path)


def test_an_unsupported_file_is_named_with_the_suffixes_allowed(tmp_path):
    path = tmp_path / "clip.xyz"
    path.write_bytes(b"data")
    with pytest.raises(RecordingError, match=r"clip\.xyz: is not a supported recording") as info:
        open_recording(path, frame_rate=1.0)
    assert all(suffix in str(info.value) for suffix in (".png", ".tif", ".avi", ".mp4"))
    assert set(RECORDING_SUFFIXES) >= {".tif", ".tiff", ".avi", ".mp4"}


def test_a_missing_path_is_named(tmp_path):
    with pytest.raises(RecordingError, match=r"nothing_here: does not exist"):
        open_recording(tmp_path / "nothing_here", frame_rate=1.0)


def test_repr_says_what_it_is(rec):
    text = repr(rec)
    assert "multi-page TIFF" in text and "7 frames of 24 x 32 uint16" in text


# -- pickling: every kind must cross a process boundary -------------------------


def make_folder(tmp_path, frames):
    folder = tmp_path / "folder"
    folder.mkdir()
    for k, frame in enumerate(frames):
        assert cv2.imwrite(str(folder / f"f{k}.png"), frame)
    return folder


def make_stack(tmp_path, frames):
    path = tmp_path / "stack.tif"
    tifffile.imwrite(path, frames, photometric="minisblack", compression="zlib")
    return path


def make_video(tmp_path, frames):
    path = tmp_path / "clip.avi"
    rows, cols = frames.shape[1:]
    writer = cv2.VideoWriter(str(path), cv2.VideoWriter_fourcc(*"MJPG"), 30, (cols, rows), False)
    assert writer.isOpened()
    for frame in frames:
        writer.write(frame)
    writer.release()
    return path


@pytest.mark.parametrize("make", [make_folder, make_stack, make_video])
def test_recordings_survive_pickling_with_files_open(tmp_path, frames8, make):
    with open_recording(make(tmp_path, frames8), frame_rate=500.0, pixel_size=2e-6) as rec:
        before = rec[3]  # the reader now holds its file open
        copy = pickle.loads(pickle.dumps(rec[1:]))
        with copy:
            assert len(copy) == 6
            assert (copy.kind, copy.path, copy.notes) == (rec.kind, rec.path, rec.notes)
            assert (copy.frame_rate, copy.pixel_size) == (500.0, 2e-6)
            np.testing.assert_array_equal(copy.times, rec.times[1:])
            np.testing.assert_array_equal(copy[2], before)  # same frame, reopened
            np.testing.assert_array_equal(np.stack(list(copy)), np.stack(list(rec[1:])))
        np.testing.assert_array_equal(rec[3], before)  # the original still reads
