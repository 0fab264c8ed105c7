"""Damaged and hostile files the readers once mishandled, one case each.

Each file is written by a reference writer (tifffile, OpenCV) and then changed
in a few bytes where TIFF 6.0 or the PNG specification puts the field; the
tags are located with tifffile. Before the fix, each case either raised
something other than a DropkinError or returned wrong frames without a word;
the property tests in ``tests/hardening/test_reader_properties.py`` found them.
"""

from __future__ import annotations

import struct
from pathlib import Path

import cv2
import numpy as np
import pytest
import tifffile

from dropkin.errors import RecordingError
from dropkin.recording import open_recording

STACK = np.arange(3 * 12 * 10, dtype=np.uint16).reshape(3, 12, 10) * 7


def write_stack(path, **options):
    tifffile.imwrite(path, STACK, **({"photometric": "minisblack"} | options))
    return bytearray(path.read_bytes())


def tag_entry(path, code, page=0):
    """(entry offset, value offset, byte order) of tag `code` on `page` (tifffile)."""
    with tifffile.TiffFile(path) as tif:
        tag = tif.pages[page].tags[code]
        return tag.offset, tag.valueoffset, tif.byteorder


def set_short(data, offset, value, byteorder="<"):
    data[offset : offset + 2] = struct.pack(byteorder + "H", value)


def open_all(path):
    with open_recording(path, frame_rate=1.0) as rec:
        return np.concatenate([block for _, block in rec.chunks(2)])


def test_a_broken_description_is_one_error_not_a_value_error(tmp_path):
    path = tmp_path / "stack.tif"
    data = write_stack(path)
    at = data.index(b"[3, 12, 10]")
    data[at : at + 11] = b'[3, 12,"10]'  # tifffile raised ValueError on the JSON
    path.write_bytes(data)
    with pytest.raises(RecordingError, match=r"stack\.tif: is damaged: tifffile cannot parse"):
        open_all(path)


def test_an_unknown_compression_code_is_refused_not_decoded_as_zeros(tmp_path):
    path = tmp_path / "stack.tif"
    data = write_stack(path)
    _, value, order = tag_entry(path, 259)  # Compression
    set_short(data, value, 0, order)  # code 0 exists in no TIFF standard
    path.write_bytes(data)
    with pytest.raises(RecordingError, match=r"uses compression code 0 .* cannot decode"):
        open_all(path)


def test_a_moved_first_frame_of_a_contiguous_stack_is_refused(tmp_path):
    # tifffile reads a stack it wrote from page 0's offset alone: every frame
    # came from 32 bytes further on, without a word.
    path = tmp_path / "stack.tif"
    data = write_stack(path)
    _, value, order = tag_entry(path, 273)  # StripOffsets of page 0
    (offset,) = struct.unpack(order + "I", data[value : value + 4])
    data[value : value + 4] = struct.pack(order + "I", offset + 32)
    path.write_bytes(data)
    with pytest.raises(
        RecordingError, match=r"stack\.tif: is damaged: a tag directory lies inside the pixel"
    ):
        open_all(path)


def test_a_description_claiming_fewer_frames_than_pages_is_refused(tmp_path):
    path = tmp_path / "stack.tif"
    data = write_stack(path)
    at = data.index(b"[3, 12, 10]")
    data[at + 1 : at + 2] = b"2"  # the description says 2 frames; the file holds 3 pages
    path.write_bytes(data)
    with pytest.raises(RecordingError, match=r"stack\.tif: .*damaged"):
        open_all(path)


def test_a_page_that_lost_its_compression_tag_is_refused(tmp_path):
    # The tag code of Compression (259) turned into an unknown one: the page
    # reads as uncompressed, and its deflate bytes became pixel values.
    path = tmp_path / "stack.tif"
    data = write_stack(path, compression="zlib")
    entry, _, order = tag_entry(path, 259)
    set_short(data, entry, 387, order)
    path.write_bytes(data)
    with pytest.raises(RecordingError, match=r"uncompressed pixel data hold \d+ bytes"):
        open_all(path)


@pytest.mark.parametrize(
    ("options", "message"),
    [
        ({"photometric": "miniswhite"}, r"photometric interpretation MINISWHITE"),
        ({"photometric": "palette", "colormap": np.zeros((3, 256), np.uint16)}, "PALETTE"),
    ],
    ids=["min-is-white", "palette"],
)
def test_pages_whose_values_are_not_brightness_are_refused(tmp_path, options, message):
    # MINISWHITE (0 is white) would be measured upside down; PALETTE values are
    # indices into a colour map (TIFF 6.0, PhotometricInterpretation).
    path = tmp_path / "stack.tif"
    tifffile.imwrite(path, STACK.astype(np.uint8), **options)
    with pytest.raises(RecordingError, match=message):
        open_all(path)


def test_colour_planes_stored_apart_are_not_three_gray_frames(tmp_path):
    path = tmp_path / "planar.tif"
    tifffile.imwrite(path, np.zeros((3, 12, 10), np.uint8), photometric="rgb", planarconfig=2)
    with pytest.raises(RecordingError, match=r"separate planes \(PlanarConfiguration 2\)"):
        open_all(path)


def test_one_bit_samples_are_refused(tmp_path):
    path = tmp_path / "bits.tif"
    tifffile.imwrite(path, np.zeros((2, 12, 16), bool), photometric="minisblack")
    with pytest.raises(RecordingError, match=r"has 1-bit samples of type bool"):
        open_all(path)


def test_two_stacks_of_the_same_frames_in_one_file_are_refused(tmp_path):
    # Only the first was read; the frames of the second were dropped unsaid.
    path = tmp_path / "two.tif"
    with tifffile.TiffWriter(path) as writer:
        writer.write(STACK, photometric="minisblack")
        writer.write(STACK[:2], photometric="minisblack")
    with pytest.raises(RecordingError, match=r"holds 2 image series of 12 x 10 uint16 frames"):
        open_all(path)


def test_a_damaged_lzw_page_names_its_frame_instead_of_reading_zeros(tmp_path):
    # OpenCV returned the page with zeros where libtiff gave up (libtiff said so
    # only in OpenCV's log); here ImageWidth says one column more than coded.
    path = tmp_path / "lzw.tif"
    assert cv2.imwritemulti(str(path), list(STACK))
    data = bytearray(path.read_bytes())
    _, value, order = tag_entry(path, 256, page=1)  # ImageWidth of page 1, a SHORT
    with tifffile.TiffFile(path) as tif:
        kind = tif.pages[1].tags[256].dtype
    width = tifffile.TIFF.DATA_FORMATS[kind][-1]
    data[value : value + struct.calcsize(width)] = struct.pack(order + width, 11)
    path.write_bytes(data)
    with pytest.raises(RecordingError, match=r"lzw\.tif: .*(frame 1|images of different)"):
        open_all(path)


def test_ome_times_that_overflow_or_round_away_give_no_frame_rate(tmp_path):
    path = tmp_path / "t.ome.tif"
    metadata = {"axes": "TYX", "TimeIncrement": 9e307, "TimeIncrementUnit": "s"}
    tifffile.imwrite(path, STACK, ome=True, metadata=metadata)
    # Times of 0, 9e307 and 1.8e308 s: the third is infinite. Not a frame rate.
    with pytest.raises(RecordingError, match=r"no frame rate.*TimeIncrement is not a positive"):
        open_recording(path)
    plane = {"DeltaT": [-9007199254740996.0, -1.0, 0.0], "DeltaTUnit": ["s"] * 3}
    tifffile.imwrite(path, STACK, ome=True, metadata={"axes": "TYX", "Plane": plane})
    # Increasing as written, but not once counted from the first (float64 rounding).
    with pytest.raises(RecordingError, match=r"no frame rate.*OME DeltaT not used"):
        open_recording(path)


def test_a_bmp_claiming_four_billion_palette_colours_is_refused(tmp_path):
    # The palette was read with file.read(n_colours * 4): a 17 GB request.
    folder = tmp_path / "frames"
    folder.mkdir()
    path = folder / "f.bmp"
    assert cv2.imwrite(str(path), STACK[0].astype(np.uint8))
    data = bytearray(path.read_bytes())
    data[46:50] = struct.pack("<I", 2**32 - 1)  # biClrUsed (BITMAPINFOHEADER)
    path.write_bytes(data)
    with pytest.raises(RecordingError, match=r"f\.bmp: frame 0: .*4294967295 palette colours"):
        open_recording(folder, frame_rate=1.0)


def test_a_png_header_with_a_bad_checksum_is_named_at_open(tmp_path):
    folder = tmp_path / "frames"
    folder.mkdir()
    path = folder / "f.png"
    assert cv2.imwrite(str(path), STACK[0])
    data = bytearray(path.read_bytes())
    data[19] ^= 0x01  # the width's last byte; the IHDR CRC no longer matches
    path.write_bytes(data)
    with pytest.raises(RecordingError, match=r"f\.png: frame 0: has a damaged PNG header"):
        open_recording(folder, frame_rate=1.0)


def test_colour_samples_of_different_bit_depths_are_one_error(tmp_path):
    # Found by fuzz/fuzz_readers.py: tifffile gives BitsPerSample as a tuple
    # when the samples differ, and int() of it raised TypeError.
    path = tmp_path / "rgb.tif"
    tifffile.imwrite(path, np.zeros((1, 12, 10, 3), np.uint8), photometric="rgb")
    data = bytearray(path.read_bytes())
    _, value, order = tag_entry(path, 258)  # BitsPerSample: three SHORTs out of line
    set_short(data, value, 7, order)  # (7, 8, 8)
    path.write_bytes(data)
    with pytest.raises(RecordingError, match=r"samples of different bit depths \(\(7, 8, 8\)\)"):
        open_all(path)


def test_a_png_chunk_longer_than_the_file_is_refused_at_open(tmp_path):
    # Found by fuzz/fuzz_readers.py: one flipped bit made a 200-byte PNG's IDAT
    # length 2 GB; OpenCV 5 then allocated 2 GB and took seconds to give up.
    folder = tmp_path / "frames"
    folder.mkdir()
    path = folder / "f.png"
    assert cv2.imwrite(str(path), STACK[0].astype(np.uint8))
    data = bytearray(path.read_bytes())
    at = data.index(b"IDAT") - 4  # the chunk's length field (PNG specification 5.3)
    data[at] |= 0x7A
    path.write_bytes(data)
    with pytest.raises(RecordingError, match=r"f\.png: frame 0: .*'IDAT' chunk .* past the end"):
        open_recording(folder, frame_rate=1.0)


def test_an_avi_chunk_opencv_asserts_on_is_one_error(tmp_path):
    # Found by fuzz/fuzz_readers.py (the input is kept in data/, 5.5 kB): FFmpeg
    # refuses this damaged MJPG AVI, OpenCV falls back to its own AVI reader,
    # which raised cv2.error (an assertion: chunk size <= 64 MiB). The outcome
    # must be one RecordingError, or frames if a later OpenCV reads it; never
    # cv2.error.
    path = tmp_path / "clip.avi"
    path.write_bytes((Path(__file__).parent / "data" / "avi_chunk_assertion.avi").read_bytes())
    try:
        with open_recording(path, frame_rate=1.0) as rec:
            frames = np.stack(list(rec))
    except RecordingError as exc:
        assert "clip.avi" in str(exc) and "\n" not in str(exc)
    else:
        assert frames.ndim == 3 and len(frames) >= 1


def test_a_video_frame_count_larger_than_the_file_is_not_believed(tmp_path):
    # Found by fuzz/fuzz_readers.py (the input is kept in data/, 5 kB): a damaged
    # AVI whose stream header claims 2**32 - 5 frames, and FFmpeg's seek to that
    # frame lands on a frame, so the count was believed and the times alone
    # asked for 32 GiB. A count above the file's size is now re-counted.
    path = tmp_path / "clip.avi"
    path.write_bytes((Path(__file__).parent / "data" / "avi_frame_count.avi").read_bytes())
    assert cv2.VideoCapture(str(path)).get(cv2.CAP_PROP_FRAME_COUNT) == 2**32 - 5
    with open_recording(path, frame_rate=1.0) as rec:
        assert len(rec) <= path.stat().st_size
        assert any("the container says 4294967291 frames" in note for note in rec.notes)
