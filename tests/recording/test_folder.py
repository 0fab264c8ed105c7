"""Image folders: frames written by OpenCV (PNG, BMP, JPEG) and tifffile (TIFF)."""

from __future__ import annotations

import struct
import zlib

import cv2
import numpy as np
import pytest
import tifffile

from dropkin.errors import RecordingError
from dropkin.recording import FRAME_SUFFIXES, open_recording


def write_frames(folder, frames, suffix, *, stem="frame_"):
    """Write one file per frame; TIFF with tifffile, everything else with OpenCV."""
    folder.mkdir(exist_ok=True)
    paths = []
    for k, frame in enumerate(frames):
        path = folder / f"{stem}{k}{suffix}"
        if suffix.lower() in (".tif", ".tiff"):
            tifffile.imwrite(path, frame)
        else:
            assert cv2.imwrite(str(path), frame)
        paths.append(path)
    return paths


@pytest.mark.parametrize("suffix", [".png", ".tif"])
def test_png_and_tiff_folders_give_back_the_written_frames(tmp_path, frames, suffix):
    paths = write_frames(tmp_path / "run", frames, suffix)
    with open_recording(tmp_path / "run", frame_rate=1000.0) as rec:
        assert rec.kind == "image folder"
        assert len(rec) == len(frames)
        assert rec.frame_shape == frames.shape[1:]
        assert rec.dtype == frames.dtype
        assert rec.bit_depth == 8 * frames.dtype.itemsize
        assert rec.files == tuple(paths)
        assert rec.notes == ()
        for k, frame in enumerate(frames):
            # Expected: the array OpenCV / tifffile wrote, bit for bit (no rescaling
            # of the 12-bit values in 16-bit words).
            np.testing.assert_array_equal(rec[k], frame)


def test_bmp_folder_gives_back_the_written_frames(tmp_path, frames8):
    write_frames(tmp_path, frames8, ".bmp")
    rec = open_recording(tmp_path, frame_rate=1000.0)
    assert rec.dtype == np.uint8
    # Expected: the arrays cv2.imwrite stored as 8-bit BMP (lossless).
    np.testing.assert_array_equal(np.stack(list(rec)), frames8)


def test_jpeg_folder_is_close_to_the_written_frames(tmp_path, smooth8, nearest):
    write_frames(tmp_path, smooth8, ".jpg")
    rec = open_recording(tmp_path, frame_rate=1000.0)
    assert (len(rec), rec.frame_shape, rec.dtype) == (10, (48, 64), np.uint8)
    for k, frame in enumerate(smooth8):
        got = rec[k].astype(int)
        # JPEG is lossy: OpenCV's default quality 95 quantises each 8 x 8 block's
        # cosine coefficients, which on this smooth pattern moves values by a few
        # gray levels; 12 levels (5 % of the range) bounds that with room to spare.
        assert np.abs(got - frame).max() <= 12
        assert np.abs(got - frame).mean() <= 2
        # ...and each frame is still the one written at that place.
        assert nearest(rec[k], smooth8) == k


def test_natural_order_compares_numbers_anywhere_in_the_name(tmp_path, frames8):
    names = ["shot_10.png", "shot_2.png", "Shot_1.png", "shot_9.PNG", "run2_x10.png"]
    names += ["run10_x2.png", "shot_02b.png"]
    for name, frame in zip(names, frames8, strict=True):
        assert cv2.imwrite(str(tmp_path / name), frame)
    rec = open_recording(tmp_path, frame_rate=1.0)
    order = ["run2_x10.png", "run10_x2.png", "Shot_1.png", "shot_2.png", "shot_02b.png"]
    order += ["shot_9.PNG", "shot_10.png"]
    assert [path.name for path in rec.files] == order
    for k, name in enumerate(order):
        np.testing.assert_array_equal(rec[k], frames8[names.index(name)])


def test_other_files_hidden_files_and_subfolders_are_ignored(tmp_path, frames8):
    write_frames(tmp_path, frames8[:3], ".png")
    (tmp_path / "experiment.toml").write_text('[recording]\nframe_rate = "1 kHz"\n')
    (tmp_path / "truth.json").write_text("{}")
    (tmp_path / "notes.txt").write_text("camera 2")
    assert cv2.imwrite(str(tmp_path / ".hidden.png"), frames8[3])
    write_frames(tmp_path / "sub", frames8[4:], ".png")
    rec = open_recording(tmp_path, frame_rate=1.0)
    assert [path.name for path in rec.files] == ["frame_0.png", "frame_1.png", "frame_2.png"]


def test_a_folder_may_mix_image_kinds_of_the_same_size(tmp_path, frames8):
    write_frames(tmp_path, frames8[:2], ".png", stem="a")
    write_frames(tmp_path, frames8[2:4], ".tiff", stem="b")
    write_frames(tmp_path, frames8[4:6], ".bmp", stem="c")
    rec = open_recording(tmp_path, frame_rate=1.0)
    assert [path.suffix for path in rec.files] == [".png"] * 2 + [".tiff"] * 2 + [".bmp"] * 2
    # Expected: the arrays handed to OpenCV and tifffile, in name order.
    np.testing.assert_array_equal(np.stack(list(rec)), frames8[:6])


def bt601(colour, order):
    """Gray from colour with the ITU-R BT.601 weights, computed here with numpy."""
    weights = {"RGB": (0.299, 0.587, 0.114), "BGR": (0.114, 0.587, 0.299)}[order]
    return colour[..., :3].astype(float) @ np.array(weights)


def test_colour_and_alpha_pngs_become_gray_with_notes(tmp_path, rng):
    colour = rng.integers(0, 256, size=(3, 24, 32, 4), dtype=np.uint8)
    for k in range(2):
        assert cv2.imwrite(str(tmp_path / f"c{k}.png"), colour[k, ..., :3])
    assert cv2.imwrite(str(tmp_path / "c2.png"), colour[2])  # with alpha
    rec = open_recording(tmp_path, frame_rate=1.0)
    assert "colour frames converted to grayscale (ITU-R BT.601 weights)" in rec.notes
    assert "alpha channel dropped" in rec.notes
    for k in range(3):
        # Expected: numpy's BT.601 sum of the BGR array OpenCV wrote; OpenCV
        # rounds with fixed-point weights, so allow one gray level.
        np.testing.assert_allclose(rec[k], bt601(colour[k], "BGR"), atol=1)


def test_colour_tiff_frames_use_red_green_blue_order(tmp_path):
    red = np.zeros((24, 32, 3), np.uint16)
    red[..., 0] = 4000  # pure red in tifffile's RGB order
    tifffile.imwrite(tmp_path / "f0.tif", red, photometric="rgb")
    rec = open_recording(tmp_path, frame_rate=1.0)
    assert rec.dtype == np.uint16
    # Expected: 0.299 x 4000 = 1196 (BT.601 red weight), not 0.114 x 4000.
    np.testing.assert_allclose(rec[0], 1196, atol=1)


def test_png_significant_bits_give_the_bit_depth(tmp_path, frames12):
    paths = write_frames(tmp_path, frames12[:2], ".png")
    chunk_data = b"sBIT" + bytes([12])
    chunk = struct.pack(">I", 1) + chunk_data + struct.pack(">I", zlib.crc32(chunk_data))
    for path in paths:  # insert an sBIT chunk right after IHDR (8 + 25 bytes)
        data = path.read_bytes()
        path.write_bytes(data[:33] + chunk + data[33:])
    rec = open_recording(tmp_path, frame_rate=1.0)
    assert rec.bit_depth == 12
    np.testing.assert_array_equal(rec[1], frames12[1])  # the data are not shifted


def test_tiff_compression_tifffile_cannot_decode_is_read_by_opencv(tmp_path, frames12):
    for k, frame in enumerate(frames12[:3]):  # OpenCV writes LZW-compressed TIFF
        assert cv2.imwrite(str(tmp_path / f"f{k}.tif"), frame)
    rec = open_recording(tmp_path, frame_rate=1.0)
    assert any("decoded by OpenCV" in note for note in rec.notes)
    np.testing.assert_array_equal(np.stack(list(rec)), frames12[:3])


def test_frame_suffixes_are_the_documented_ones():
    assert set(FRAME_SUFFIXES) == {".png", ".tif", ".tiff", ".bmp", ".jpg", ".jpeg"}


# -- bad folders --------------------------------------------------------------


def test_a_folder_without_frames_is_refused_by_name(tmp_path):
    folder = tmp_path / "empty_run"
    folder.mkdir()
    (folder / "experiment.toml").write_text("")
    with pytest.raises(RecordingError, match=r"empty_run: holds no frames .*\.png") as info:
        open_recording(folder, frame_rate=1.0)
    assert info.value.path == str(folder)


def test_mixed_sizes_name_the_first_file_that_differs(tmp_path, frames8):
    write_frames(tmp_path, frames8[:3], ".png")
    assert cv2.imwrite(str(tmp_path / "frame_1.png"), frames8[3, :20, :30])
    assert cv2.imwrite(str(tmp_path / "frame_2.png"), frames8[4, :10, :30])
    with pytest.raises(
        RecordingError,
        match=r"frame_1\.png: frame 1: is 20 x 30 uint8, the first frame "
        r"\(frame_0\.png\) is 24 x 32 uint8",
    ):
        open_recording(tmp_path, frame_rate=1.0)


def test_mixed_bit_depths_are_refused(tmp_path, frames8, frames12):
    write_frames(tmp_path, frames8[:2], ".png")
    assert cv2.imwrite(str(tmp_path / "frame_2.png"), frames12[2])
    with pytest.raises(RecordingError, match=r"frame_2\.png: frame 2: is 24 x 32 uint16, the"):
        open_recording(tmp_path, frame_rate=1.0)


@pytest.mark.parametrize("suffix", [".png", ".tif", ".bmp", ".jpg"])
def test_a_zero_byte_frame_is_named(tmp_path, frames8, suffix):
    write_frames(tmp_path, frames8[:3], suffix)
    (tmp_path / f"frame_1{suffix}").write_bytes(b"")
    with pytest.raises(RecordingError, match=rf"frame_1\{suffix}: frame 1: is empty"):
        open_recording(tmp_path, frame_rate=1.0)


@pytest.mark.parametrize("suffix", [".png", ".bmp", ".jpg", ".tif"])
def test_a_truncated_frame_is_named_at_open(tmp_path, frames8, suffix):
    write_frames(tmp_path, frames8[:3], suffix)
    path = tmp_path / f"frame_2{suffix}"
    data = path.read_bytes()
    path.write_bytes(data[: len(data) * 2 // 3])
    with pytest.raises(RecordingError, match=rf"frame_2\{suffix}: frame 2: .*truncated"):
        open_recording(tmp_path, frame_rate=1.0)


def test_a_damaged_png_is_named_with_its_frame_when_read(tmp_path, frames8):
    write_frames(tmp_path, frames8[:3], ".png")
    path = tmp_path / "frame_1.png"
    data = bytearray(path.read_bytes())
    data[60:90] = bytes(30)  # garble the pixel data; header and end chunk intact
    path.write_bytes(bytes(data))
    rec = open_recording(tmp_path, frame_rate=1.0)  # the headers look fine
    np.testing.assert_array_equal(rec[0], frames8[0])
    with pytest.raises(RecordingError, match=r"frame_1\.png: frame 1: cannot be decoded"):
        rec[1]


def test_a_file_that_is_not_what_its_suffix_says_is_named(tmp_path, frames8):
    write_frames(tmp_path, frames8[:2], ".png")
    (tmp_path / "frame_1.png").write_text("not an image")
    with pytest.raises(RecordingError, match=r"frame_1\.png: frame 1: is not a PNG file"):
        open_recording(tmp_path, frame_rate=1.0)
