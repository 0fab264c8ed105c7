"""Multi-page TIFF files written by tifffile (and OpenCV's libtiff)."""

from __future__ import annotations

import tracemalloc

import cv2
import numpy as np
import pytest
import tifffile

from dropkin.errors import RecordingError
from dropkin.recording import open_recording


def test_a_stack_gives_back_the_written_frames(tmp_path, frames):
    path = tmp_path / "stack.tif"
    tifffile.imwrite(path, frames, photometric="minisblack")
    with open_recording(path, frame_rate=2000.0) as rec:
        assert rec.kind == "multi-page TIFF"
        assert (len(rec), rec.frame_shape, rec.dtype) == (7, (24, 32), frames.dtype)
        assert rec.bit_depth == 8 * frames.dtype.itemsize
        assert rec.path == path and rec.files is None
        # Expected: the array tifffile wrote, bit for bit.
        np.testing.assert_array_equal(np.stack([rec[k] for k in range(7)]), frames)


@pytest.mark.parametrize(
    "options",
    [
        {"compression": "zlib"},  # decoded page by page
        {"byteorder": ">"},  # big-endian samples, read raw and swapped
        {"imagej": True},  # ImageJ hyperstack: one series, only its first page listed
    ],
    ids=["zlib", "big-endian", "imagej"],
)
def test_stack_layouts_give_back_the_written_frames(tmp_path, frames12, options):
    path = tmp_path / "stack.tif"
    tifffile.imwrite(path, frames12, photometric="minisblack", **options)
    with open_recording(path, frame_rate=1.0) as rec:
        np.testing.assert_array_equal(np.concatenate([b for _, b in rec.chunks(3)]), frames12)
        np.testing.assert_array_equal(rec[-1], frames12[-1])


def test_pages_written_one_by_one_are_frames(tmp_path, frames12):
    path = tmp_path / "pages.tif"
    with tifffile.TiffWriter(path) as writer:  # each write is its own series
        for frame in frames12:
            writer.write(frame, photometric="minisblack")
    with open_recording(path, frame_rate=1.0) as rec:
        assert len(rec) == 7
        np.testing.assert_array_equal(np.stack(list(rec)), frames12)


def test_a_colour_stack_becomes_gray(tmp_path, rng):
    colour = rng.integers(0, 256, size=(5, 24, 32, 3), dtype=np.uint8)
    path = tmp_path / "colour.tif"
    tifffile.imwrite(path, colour, photometric="rgb")
    with open_recording(path, frame_rate=1.0) as rec:
        assert rec.notes == ("colour frames converted to grayscale (ITU-R BT.601 weights)",)
        expected = colour.astype(float) @ np.array([0.299, 0.587, 0.114])  # numpy BT.601
        # OpenCV's fixed-point weights round to within one gray level of numpy's.
        np.testing.assert_allclose(np.stack(list(rec)), expected, atol=1)


def test_an_lzw_stack_is_read_through_opencv(tmp_path, frames12):
    path = tmp_path / "lzw.tif"
    assert cv2.imwritemulti(str(path), list(frames12))  # OpenCV's libtiff: LZW
    with open_recording(path, frame_rate=1.0) as rec:
        assert any("LZW decoded by OpenCV" in note for note in rec.notes)
        np.testing.assert_array_equal(rec[4], frames12[4])
        np.testing.assert_array_equal(np.concatenate([b for _, b in rec.chunks(4)]), frames12)


# -- timing from the file -----------------------------------------------------


def test_imagej_frame_interval_gives_the_frame_rate(tmp_path, frames12):
    path = tmp_path / "ij.tif"
    tifffile.imwrite(path, frames12, imagej=True, metadata={"finterval": 1e-4, "axes": "TYX"})
    with open_recording(path) as rec:
        assert rec.frame_rate == pytest.approx(1e4, rel=1e-12)
        assert rec.frame_rate_origin == "file metadata (ImageJ finterval)"
        np.testing.assert_allclose(rec.times, np.arange(7) * 1e-4, rtol=1e-12, atol=0)


def test_a_given_frame_rate_wins_over_the_file_and_says_so(tmp_path, frames12):
    path = tmp_path / "ij.tif"
    tifffile.imwrite(path, frames12, imagej=True, metadata={"finterval": 1e-4, "axes": "TYX"})
    with open_recording(path, frame_rate=2e4, frame_rate_origin="command line") as rec:
        assert (rec.frame_rate, rec.frame_rate_origin) == (2e4, "command line")
        np.testing.assert_allclose(rec.times, np.arange(7) / 2e4, rtol=1e-12)
        assert any("ImageJ finterval" in note and "10000 Hz" in note for note in rec.notes)


def test_ome_time_increment_gives_the_frame_rate(tmp_path, frames12):
    path = tmp_path / "t.ome.tif"
    metadata = {"axes": "TYX", "TimeIncrement": 0.05, "TimeIncrementUnit": "ms"}
    tifffile.imwrite(path, frames12, ome=True, metadata=metadata)
    with open_recording(path) as rec:
        assert rec.frame_rate == pytest.approx(2e4, rel=1e-12)
        assert rec.frame_rate_origin == "file metadata (OME TimeIncrement)"


def test_irregular_ome_timestamps_are_the_times(tmp_path, frames12):
    path = tmp_path / "t.ome.tif"
    delta = [0.0, 1.0, 2.5, 3.0, 4.0, 6.0, 6.5]  # ms
    plane = {"DeltaT": delta, "DeltaTUnit": ["ms"] * 7}
    tifffile.imwrite(path, frames12, ome=True, metadata={"axes": "TYX", "Plane": plane})
    with open_recording(path) as rec:
        assert rec.frame_rate is None
        assert rec.frame_rate_origin == "file timestamps (OME DeltaT)"
        np.testing.assert_allclose(rec.times, np.array(delta) * 1e-3, rtol=1e-12)
    with open_recording(path, first_frame=2, last_frame=4) as part:
        np.testing.assert_allclose(part.times, [0.0, 0.5e-3, 1.5e-3], rtol=1e-12)


def test_a_stack_without_timing_needs_a_frame_rate(tmp_path, frames12):
    path = tmp_path / "plain.tif"
    tifffile.imwrite(path, frames12, photometric="minisblack")
    with pytest.raises(RecordingError, match="plain.tif: recording.frame_rate: no frame rate"):
        open_recording(path)


# -- damaged files ------------------------------------------------------------


def test_a_truncated_stack_names_the_file_and_the_first_missing_frame(tmp_path, frames12):
    path = tmp_path / "cut.tif"
    tifffile.imwrite(path, frames12, photometric="minisblack")
    data = path.read_bytes()
    path.write_bytes(data[: len(data) // 2])
    with pytest.raises(RecordingError, match=r"cut\.tif: frame \d: is truncated") as info:
        open_recording(path, frame_rate=1.0)
    frame_bytes = 24 * 32 * 2
    assert info.value.frame < 7 and info.value.frame * frame_bytes < len(data) // 2


@pytest.mark.parametrize("cut", [0.4, 0.9])
def test_a_truncated_compressed_stack_is_refused(tmp_path, frames12, cut):
    path = tmp_path / "cut.tif"
    tifffile.imwrite(path, frames12, photometric="minisblack", compression="zlib")
    data = path.read_bytes()
    path.write_bytes(data[: int(len(data) * cut)])
    with pytest.raises(RecordingError, match=r"cut\.tif: .*(truncated|damaged)"):
        open_recording(path, frame_rate=1.0)


def test_a_file_that_is_not_a_tiff_is_named(tmp_path):
    path = tmp_path / "fake.tif"
    path.write_bytes(b"GIF89a" + bytes(100))
    with pytest.raises(RecordingError, match=r"fake\.tif: cannot be read as a TIFF file"):
        open_recording(path, frame_rate=1.0)


# -- bounded memory -----------------------------------------------------------


@pytest.mark.parametrize("compression", [None, "zlib"])
def test_streaming_keeps_only_a_few_chunks_in_memory(tmp_path, rng, compression):
    stack = rng.integers(0, 4096, size=(200, 128, 128), dtype=np.uint16)  # 6.6 MB
    path = tmp_path / "long.tif"
    tifffile.imwrite(path, stack, photometric="minisblack", compression=compression)
    expected = int(stack.sum(dtype=np.uint64))
    chunk_bytes = 16 * stack[0].nbytes
    del stack
    with open_recording(path, frame_rate=1.0) as rec:
        tracemalloc.start()  # numpy reports its buffers to tracemalloc
        try:
            total = 0
            for _, block in rec.chunks(16):
                total += int(block.sum(dtype=np.uint64))
            peak = tracemalloc.get_traced_memory()[1]
        finally:
            tracemalloc.stop()
    assert total == expected  # every frame was read (numpy sum of the written stack)
    # The caller's block plus the one being read, plus decoder scratch space; the
    # whole stack is 12.5 chunks.
    assert peak < 3 * chunk_bytes, f"peak {peak} B for chunks of {chunk_bytes} B"


def test_an_imagej_interval_in_milliseconds_is_converted(tmp_path, frames12):
    path = tmp_path / "ij.tif"
    metadata = {"finterval": 0.5, "tunit": "ms", "axes": "TYX"}
    tifffile.imwrite(path, frames12, imagej=True, metadata=metadata)
    with open_recording(path) as rec:
        assert rec.frame_rate == pytest.approx(2000.0, rel=1e-12)  # 1 / 0.5 ms


def test_an_imagej_interval_over_channels_is_not_a_frame_rate(tmp_path, frames12):
    path = tmp_path / "ij.tif"  # tifffile stores a plain 3-D ImageJ stack as channels
    tifffile.imwrite(path, frames12, imagej=True, metadata={"finterval": 1e-4})
    with pytest.raises(
        RecordingError, match=r"no frame rate: .* \(ImageJ finterval not used: .*axes 'C'"
    ):
        open_recording(path)


def test_max_sample_value_tag_gives_the_bit_depth(tmp_path):
    # TIFF 6.0 tag 281 (MaxSampleValue) = 4095: a 12-bit camera in 16-bit words.
    import numpy as np
    import tifffile

    from dropkin.recording import open_recording

    frames = np.arange(3 * 4 * 5, dtype=np.uint16).reshape(3, 4, 5) * 60
    path = tmp_path / "twelve.tif"
    tifffile.imwrite(path, frames, photometric="minisblack", extratags=[(281, "H", 1, 4095, True)])
    rec = open_recording(path, frame_rate=1000.0)
    assert rec.bit_depth == 12
    assert np.array_equal(rec[2], frames[2])  # never rescaled
