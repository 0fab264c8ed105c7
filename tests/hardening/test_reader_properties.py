"""Property-based tests (hypothesis) of the frame readers under damaged and hostile files.

Valid files are written by reference writers (tifffile, OpenCV; PNG and TIFF
files also by hand, following the PNG specification and TIFF 6.0), then
damaged: random bytes, truncation, a flipped bit, random header fields. The
only outcomes allowed are

- the frames that were written, value for value; or
- one :class:`~dropkin.errors.DropkinError` whose message is one line naming
  the file (the damaged file of a folder, with its frame index; the frame of
  a stack when the error comes while reading it).

TIFF has no checksums, so two kinds of change cannot be told from a sound file
and have a result of their own: a flipped bit in uncompressed (or LZW) pixel
data gives the written frames with that byte flipped (any values in the frame
hit, for LZW), and a flipped bit in a page's StripOffsets value gives that
frame read from the new offset, as TIFF 6.0 says to read it. Everything else,
a wrong shape or type, a frame count that changed, other values, fails.

A hang fails too: hypothesis' deadline bounds every example, and a watchdog
(faulthandler) ends the whole run with a traceback if one example blocks.
The default budget is small (a few seconds in all); ``fuzz/fuzz_readers.py``
runs the long campaign.
"""

from __future__ import annotations

import contextlib
import faulthandler
import math
import os
import struct
import tempfile
import zlib
from datetime import timedelta
from pathlib import Path

import cv2
import numpy as np
import pytest
import tifffile
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st
from PIL import Image, ImageSequence

from dropkin.errors import DropkinError
from dropkin.recording import open_recording

# Each example takes milliseconds; 5 s is a bound on a runaway, not a speed goal.
# DROPKIN_READER_EXAMPLES raises the budget for a longer run by hand.
PROPERTY = settings(
    max_examples=int(os.environ.get("DROPKIN_READER_EXAMPLES", "40")),
    deadline=timedelta(seconds=5),
    suppress_health_check=[HealthCheck.too_slow],
)
HANG_SECONDS = 60  # the watchdog of one example: far above its deadline


@contextlib.contextmanager
def watchdog():
    """End the run with every thread's traceback if one example blocks (a hang).

    hypothesis' deadline is checked when an example returns; a reader stuck in
    a C loop never returns, so faulthandler's timer ends the process instead.
    """
    faulthandler.dump_traceback_later(HANG_SECONDS, exit=True)
    try:
        yield
    finally:
        faulthandler.cancel_dump_traceback_later()


@pytest.fixture(scope="module")
def scratch():
    with tempfile.TemporaryDirectory(prefix="dropkin-props-") as folder:
        yield Path(folder)


# -- reading and the allowed outcomes -----------------------------------------


def read_all(path):
    """("ok", frames) or ("open"/"read", DropkinError): every frame, streamed and indexed."""
    with watchdog():
        return _read_all(path)


def _read_all(path):
    try:
        rec = open_recording(path, frame_rate=1.0)
    except DropkinError as exc:
        return "open", exc
    try:
        with rec:
            streamed = np.concatenate([block for _, block in rec.chunks(2)])
            indexed = np.stack([rec[k] for k in range(len(rec) - 1, -1, -1)][::-1])
    except DropkinError as exc:
        return "read", exc
    np.testing.assert_array_equal(indexed, streamed)  # random access = streaming
    return "ok", streamed


def assert_names(exc: DropkinError, path: Path, *, frame: int | None = None) -> None:
    text = str(exc)
    assert text and "\n" not in text, repr(text)
    assert str(path) in text, text
    if exc.frame is not None:
        assert f"frame {exc.frame}" in text
    if frame is not None:
        assert exc.frame == frame, text


def assert_written_or_error(path: Path, written: np.ndarray) -> None:
    stage, result = read_all(path)
    if stage == "ok":
        assert result.dtype == written.dtype and result.shape == written.shape
        np.testing.assert_array_equal(result, written)
    else:
        assert_names(result, path)
        if stage == "read" and written.shape[0] > 1:
            assert result.frame is not None, str(result)


# -- TIFF files written by reference writers ----------------------------------


def _pages_one_by_one(path, frames):
    with tifffile.TiffWriter(path) as writer:  # each page its own series
        for frame in frames:
            writer.write(frame, photometric="minisblack")


TIFF_WRITERS = {
    "tifffile contiguous": lambda p, f: tifffile.imwrite(p, f, photometric="minisblack"),
    "tifffile zlib": lambda p, f: tifffile.imwrite(
        p, f, photometric="minisblack", compression="zlib"
    ),
    "tifffile ImageJ": lambda p, f: tifffile.imwrite(p, f, imagej=True),
    "tifffile big-endian": lambda p, f: tifffile.imwrite(
        p, f, photometric="minisblack", byteorder=">"
    ),
    "tifffile BigTIFF": lambda p, f: tifffile.imwrite(
        p, f, photometric="minisblack", bigtiff=True
    ),
    "tifffile page by page": _pages_one_by_one,
    "OpenCV LZW": lambda p, f: cv2.imwritemulti(str(p), list(f)),
}
COMPRESSED = {"tifffile zlib": "checked", "OpenCV LZW": "unchecked"}


def write_tiff(layout: str, path: Path, frames: np.ndarray) -> None:
    """Write with the reference writer; skip shapes it stores otherwise.

    tifffile's ImageJ writer takes a last axis of 1, 3 or 4 columns for
    samples, so the file it writes is not the stack it was given (tifffile
    reads it back so); such examples test nothing about dropkin.
    """
    TIFF_WRITERS[layout](path, frames)
    with tifffile.TiffFile(path) as tif:
        assume(tif.pages[0].shape == frames.shape[1:])


@st.composite
def stacks(draw, *, max_frames=3):
    n = draw(st.integers(1, max_frames))
    rows, cols = draw(st.integers(1, 12)), draw(st.integers(1, 12))
    dtype = draw(st.sampled_from([np.uint8, np.uint16]))
    seed = draw(st.integers(0, 2**32 - 1))
    top = 256 if dtype == np.uint8 else 4096  # 12-bit camera values in 16-bit words
    rng = np.random.default_rng(seed)
    return rng.integers(0, top, size=(n, rows, cols), dtype=dtype)


def tiff_structure(path: Path):
    """Where each page's pixel data and StripOffsets value lie (one strip per page)."""
    with tifffile.TiffFile(path) as tif:
        strips, offset_values = [], []
        for k, page in enumerate(tif.pages):
            assert len(page.dataoffsets) == 1, "the oracle assumes one strip per page"
            start, count = int(page.dataoffsets[0]), int(page.databytecounts[0])
            strips.append((start, start + count, k))
            tag = page.tags[273]
            code = tifffile.TIFF.DATA_FORMATS[tag.dtype][-1]  # "H", "I" or "Q"
            size = struct.calcsize(tif.byteorder + code)
            offset_values.append((tag.valueoffset, tag.valueoffset + size, k, code))
        return tif.byteorder, strips, offset_values


def expected_after_flip(path, written, layout, position, mutated):
    """The results allowed besides an error: (arrays allowed, frames free to differ)."""
    byteorder, strips, offset_values = tiff_structure(path)
    n, rows, cols = written.shape
    for start, stop, k in strips:
        if start <= position < stop:  # pixel data of frame k
            if COMPRESSED.get(layout) == "checked":  # deflate: adler-32 and structure
                return [written], set()
            if COMPRESSED.get(layout) == "unchecked":  # LZW: nothing to check against
                return [written], {k}
            stored = written.astype(written.dtype.newbyteorder(byteorder))
            raw = stored.view(np.uint8).reshape(n, -1).copy()
            raw[k, position - start] = mutated[position]
            return [
                written,
                raw.view(stored.dtype).reshape(written.shape).astype(written.dtype),
            ], set()
    for start, stop, k, code in offset_values:
        if start <= position < stop:  # page k's StripOffsets value
            if layout in COMPRESSED:
                return [written], {k} if COMPRESSED[layout] == "unchecked" else set()
            (new,) = struct.unpack(byteorder + code, bytes(mutated[start:stop]))
            stored = written.dtype.newbyteorder(byteorder)
            nbytes = rows * cols * stored.itemsize
            if new + nbytes > len(mutated):
                return [written], set()
            frame = np.frombuffer(bytes(mutated[new : new + nbytes]), dtype=stored)
            moved = written.copy()
            moved[k] = frame.reshape(rows, cols).astype(written.dtype)
            return [written, moved], set()
    return [written], set()  # structure: no change may go unnoticed


@PROPERTY
@given(stacks(), st.sampled_from(sorted(TIFF_WRITERS)), st.data())
def test_a_tiff_stack_with_a_flipped_bit_gives_its_frames_or_one_error(
    scratch, written, layout, data
):
    source, path = scratch / "written.tif", scratch / "flipped.tif"
    write_tiff(layout, source, written)
    good = source.read_bytes()
    position = data.draw(st.integers(0, len(good) - 1), label="byte")
    bit = data.draw(st.integers(0, 7), label="bit")
    mutated = bytearray(good)
    mutated[position] ^= 1 << bit
    path.write_bytes(mutated)
    allowed, free = expected_after_flip(source, written, layout, position, mutated)
    stage, result = read_all(path)
    if stage != "ok":
        assert_names(result, path)
        if stage == "read" and len(written) > 1:
            assert result.frame is not None, str(result)
        return
    if layout == "OpenCV LZW" and not any(np.array_equal(result, a) for a in allowed):
        # LZW has no checksum and libtiff decodes a stream that is too long for
        # the frame without a word: a flip in a size tag reads as the tag says.
        # An independent reader (Pillow) must then see the same frames.
        np.testing.assert_array_equal(result, pillow_frames(path))
        if not free:
            return
    assert result.dtype == written.dtype and result.shape == written.shape
    if free:  # LZW: the frames not hit must be intact
        keep = [k for k in range(len(written)) if k not in free]
        np.testing.assert_array_equal(result[keep], written[keep])
    else:
        assert any(np.array_equal(result, a) for a in allowed), (layout, position, bit)


def pillow_frames(path: Path) -> np.ndarray:
    """Every page of a gray TIFF as Pillow (the reference reader here) decodes it."""
    with Image.open(path) as image:
        return np.stack([np.array(page) for page in ImageSequence.Iterator(image)])


@PROPERTY
@given(stacks(), st.sampled_from(sorted(TIFF_WRITERS)), st.data())
def test_a_truncated_tiff_stack_gives_its_frames_or_one_error(scratch, written, layout, data):
    source, path = scratch / "written.tif", scratch / "cut.tif"
    write_tiff(layout, source, written)
    good = source.read_bytes()
    path.write_bytes(good[: data.draw(st.integers(0, len(good) - 1), label="length")])
    assert_written_or_error(path, written)


TIFF_MAGIC = [b"II*\x00", b"MM\x00*", b"II+\x00\x08\x00\x00\x00", b"MM\x00+\x00\x08\x00\x00"]


@PROPERTY
@given(st.sampled_from(TIFF_MAGIC + [b""]), st.binary(max_size=600))
def test_random_bytes_as_a_tiff_give_one_error(scratch, magic, tail):
    path = scratch / "random.tif"
    path.write_bytes(magic + tail)
    stage, result = read_all(path)
    if stage == "ok":  # only if the bytes happen to be a sound TIFF: tifffile agrees
        np.testing.assert_array_equal(result, tifffile.imread(path).reshape(result.shape))
    else:
        assert_names(result, path)


# -- TIFF files with random header fields, written by hand (TIFF 6.0) ----------

_TYPES = {3: "H", 4: "I"}  # SHORT, LONG


def tiff_from_fields(fields: dict[int, int], data: bytes, *, data_at: int = 8) -> bytes:
    """A little-endian one-page TIFF whose tags are `fields` (code -> value)."""
    entries = sorted(fields.items())
    ifd_at = data_at + len(data) + (len(data) % 2)
    ifd = struct.pack("<H", len(entries))
    for code, value in entries:
        kind = 4 if code in (256, 257, 273, 278, 279) else 3
        ifd += struct.pack("<HHI", code, kind, 1) + struct.pack("<" + _TYPES[kind], value).ljust(
            4, b"\0"
        )
    ifd += struct.pack("<I", 0)
    head = b"II*\x00" + struct.pack("<I", ifd_at)
    return head + data + b"\0" * (ifd_at - 8 - len(data)) + ifd


SOUND_DTYPES = {(8, 1): "u1", (16, 1): "u2", (32, 1): "u4", (8, 2): "i1", (16, 2): "i2"}
SOUND_DTYPES |= {(32, 2): "i4", (16, 3): "f2", (32, 3): "f4"}
# SampleFormat 4 is "undefined data format" in TIFF 6.0; tifffile (the reference
# reader here) reads it as unsigned integers, and so may dropkin.
SOUND_DTYPES |= {(8, 4): "u1", (16, 4): "u2", (32, 4): "u4"}


@st.composite
def tiff_fields(draw):
    rows = draw(st.sampled_from([1, 5, 12, 0, 70_000, 2**31 - 1]))
    cols = draw(st.sampled_from([1, 7, 12, 0, 70_000, 2**31 - 1]))
    fields = {
        256: cols,
        257: rows,
        258: draw(st.sampled_from([8, 16, 32, 1, 12, 0])),
        259: draw(st.sampled_from([1, 1, 1, 32_000, 5])),
        262: draw(st.sampled_from([1, 1, 1, 0, 2, 3, 5])),
        277: draw(st.sampled_from([1, 1, 1, 3, 0])),
    }
    if draw(st.booleans()):
        fields[339] = draw(st.sampled_from([1, 2, 3, 4]))
    if draw(st.booleans()):
        fields[278] = rows  # RowsPerStrip: the whole frame in one strip
    return fields


@PROPERTY
@given(tiff_fields(), st.data())
def test_tiff_header_fields_give_the_stored_values_or_one_error(scratch, fields, data):
    bits, samples = fields[258], fields[277]
    fmt = fields.get(339, 1)
    rows, cols = fields[257], fields[256]
    small = 1 <= rows <= 12 and 1 <= cols <= 12
    needed = rows * cols * max(samples, 1) * max(bits, 8) // 8 if small else 64
    payload = np.random.default_rng(data.draw(st.integers(0, 2**32 - 1))).bytes(needed)
    count = data.draw(st.sampled_from([len(payload), len(payload), len(payload) - 1, 10**6]))
    count = max(count, 1)
    fields |= {273: 8, 279: count}
    path = scratch / "fields.tif"
    path.write_bytes(tiff_from_fields(fields, payload))
    sound_gray = (
        small
        and count == len(payload)
        and fields[259] == 1
        and fields[262] == 1
        and samples == 1
        and (bits, fmt) in SOUND_DTYPES
    )
    stage, result = read_all(path)
    if sound_gray:  # TIFF 6.0: one strip of rows x cols samples, little-endian
        assert stage == "ok", str(result)
        dtype = np.dtype("<" + SOUND_DTYPES[bits, fmt])
        expected = np.frombuffer(payload, dtype=dtype).reshape(1, rows, cols)
        assert result.dtype == dtype.newbyteorder("=")
        np.testing.assert_array_equal(result, expected)
    elif stage == "ok" and fields[259] == 5:
        # LZW (decoded by OpenCV's libtiff) has no checksum, and libtiff reports
        # bad codes only in its log: random bytes decode to some frame. Its size
        # and type must still be what the header says.
        assert result.shape[1:] == (rows, cols), fields
    elif stage == "ok":
        # Only an RGB page of sound samples may be read besides: gray by BT.601.
        assert (fields[262], samples, fields[259]) == (2, 3, 1), fields
        assert (bits, fmt) in SOUND_DTYPES and count == len(payload), fields
        dtype = np.dtype("<" + SOUND_DTYPES[bits, fmt])
        assert result.shape == (1, rows, cols) and result.dtype == dtype.newbyteorder("=")
        if dtype.kind in "ui":  # random bytes as floats are NaN or huge: shape and type only
            rgb = np.frombuffer(payload, dtype).reshape(rows, cols, 3).astype(float)
            gray = rgb @ np.array([0.299, 0.587, 0.114])  # ITU-R BT.601 luma weights
            # OpenCV's fixed-point weights: within 1 level at 8 bits, 2 at 16 (see
            # the PNG test); numpy's rounding (other types) within half a level.
            np.testing.assert_allclose(result[0], gray, atol=2 if bits == 16 else 1)
    else:
        assert_names(result, path)


# -- PNG files ------------------------------------------------------------------


def _chunk(name: bytes, body: bytes) -> bytes:
    return struct.pack(">I", len(body)) + name + body + struct.pack(">I", zlib.crc32(name + body))


def png_from_fields(rows, cols, depth, colour, scanlines: bytes, *, palette=b"", methods=0):
    """A PNG whose IHDR says what it is told, with valid checksums (PNG specification)."""
    ihdr = struct.pack(">IIBBBBB", cols, rows, depth, colour, methods, methods, 0)
    out = b"\x89PNG\r\n\x1a\n" + _chunk(b"IHDR", ihdr)
    if palette:
        out += _chunk(b"PLTE", palette)
    return out + _chunk(b"IDAT", zlib.compress(scanlines)) + _chunk(b"IEND", b"")


PNG_DEPTHS = {0: (1, 2, 4, 8, 16), 2: (8, 16), 3: (1, 2, 4, 8), 4: (8, 16), 6: (8, 16)}
PNG_SAMPLES = {0: 1, 2: 3, 3: 1, 4: 2, 6: 4}


@st.composite
def png_images(draw):
    """(file bytes, expected gray frame or None, tolerance): random IHDR fields."""
    colour = draw(st.sampled_from([0, 0, 2, 3, 4, 6, 1, 5]))
    depth = draw(st.sampled_from([1, 2, 4, 8, 16, 3, 0]))
    rows = draw(st.sampled_from([1, 3, 9, 0, 40_000, 2**31 - 1]))
    cols = draw(st.sampled_from([1, 4, 11, 0, 40_000, 2**31 - 1]))
    methods = draw(st.sampled_from([0, 0, 0, 1]))
    rng = np.random.default_rng(draw(st.integers(0, 2**32 - 1)))
    sound = colour in PNG_DEPTHS and depth in PNG_DEPTHS[colour] and methods == 0
    if not (sound and 1 <= rows <= 9 and 1 <= cols <= 11):
        return png_from_fields(rows, cols, depth, colour, rng.bytes(40), methods=methods), None, 0
    samples = PNG_SAMPLES[colour]
    values = rng.integers(0, 2**depth, size=(rows, cols, samples))
    if depth < 8:  # packed, most significant bits first
        bits = np.unpackbits(values.astype(np.uint8)[..., None], axis=-1)[..., 8 - depth :]
        lines = np.packbits(bits.reshape(rows, -1), axis=1)
    else:
        lines = values.astype(">u2" if depth == 16 else "u1").reshape(rows, -1).view(np.uint8)
    scanlines = b"".join(b"\0" + line.tobytes() for line in lines)
    palette = b""
    if colour == 3:
        table = rng.integers(0, 256, size=(2**depth, 3), dtype=np.uint8)
        palette = table.tobytes()
        rgb = table[values[..., 0]].astype(float)
    elif colour in (2, 6):
        rgb = values[..., :3].astype(float)
    if colour in (0, 4):  # gray: a sample of depth d is brightness v / (2**d - 1)
        top = 2**depth - 1
        scale = 255 / top if depth < 8 else 1
        expected, tolerance = np.rint(values[..., 0] * scale), 0
    else:
        # ITU-R BT.601 weights. OpenCV's fixed-point weights round to within one
        # level at 8 bits; at 16 bits within 2 (1.44 the most seen over 2000
        # random pixels in this environment: the fixed-point step times 65535).
        expected = rgb @ np.array([0.299, 0.587, 0.114])
        tolerance = 1 if depth <= 8 else 2
    data = png_from_fields(rows, cols, depth, colour, scanlines, palette=palette)
    return data, expected, tolerance


@PROPERTY
@given(png_images())
def test_png_header_fields_give_the_stored_values_or_one_error(scratch, image):
    data, expected, tolerance = image
    folder = scratch / "png-fields"
    folder.mkdir(exist_ok=True)
    path = folder / "frame.png"
    path.write_bytes(data)
    stage, result = read_all(folder)
    if expected is None:  # a header the PNG specification does not allow, or absurd
        assert stage != "ok", "a PNG with an invalid or absurd header was read"
        assert_names(result, path, frame=0)
    else:
        assert stage == "ok", str(result)
        np.testing.assert_allclose(result[0], expected, atol=tolerance, rtol=0)


@st.composite
def frames_for_files(draw):
    stack = draw(stacks(max_frames=3))
    return stack if len(stack) > 1 else np.concatenate([stack, stack])


DAMAGES = ["random bytes", "truncated", "flipped bits"]


@PROPERTY
@given(frames_for_files(), st.sampled_from(DAMAGES), st.data())
def test_a_damaged_png_frame_gives_the_frames_or_one_error(scratch, written, damage, data):
    folder = scratch / "png-folder"
    folder.mkdir(exist_ok=True)
    for old in folder.iterdir():
        old.unlink()
    paths = [folder / f"frame_{k}.png" for k in range(len(written))]
    for path, frame in zip(paths, written, strict=True):
        assert cv2.imwrite(str(path), frame)  # the reference writer
    hit = data.draw(st.integers(0, len(paths) - 1), label="file")
    damage_file(paths[hit], damage, data)
    stage, result = read_all(folder)
    if stage == "ok":  # PNG checksums every chunk: nothing else may be read
        np.testing.assert_array_equal(result, written)
    else:
        assert_names(result, paths[hit], frame=hit)


def damage_file(path: Path, damage: str, data) -> None:
    good = path.read_bytes()
    if damage == "random bytes":
        head = data.draw(st.sampled_from([b"", good[:8], good[:33]]), label="kept head")
        path.write_bytes(head + data.draw(st.binary(max_size=400), label="bytes"))
    elif damage == "truncated":
        path.write_bytes(good[: data.draw(st.integers(0, len(good) - 1), label="length")])
    else:
        mutated = bytearray(good)
        flips = data.draw(
            st.lists(st.tuples(st.integers(0, len(good) - 1), st.integers(0, 7)), min_size=1),
            label="flips",
        )
        for position, bit in flips:
            mutated[position] ^= 1 << bit
        path.write_bytes(mutated)


@PROPERTY
@given(frames_for_files(), st.sampled_from(DAMAGES), st.data())
def test_a_folder_of_mixed_frames_with_one_damaged_gives_the_frames_or_one_error(
    scratch, written, damage, data
):
    """PNG frames by OpenCV, zlib TIFF frames by tifffile; one file is damaged."""
    folder = scratch / "mixed-folder"
    folder.mkdir(exist_ok=True)
    for old in folder.iterdir():
        old.unlink()
    paths = []
    for k, frame in enumerate(written):
        if k % 2:
            path = folder / f"frame_{k}.tif"
            tifffile.imwrite(path, frame, photometric="minisblack", compression="zlib")
        else:
            path = folder / f"frame_{k}.png"
            assert cv2.imwrite(str(path), frame)
        paths.append(path)
    hit = data.draw(st.integers(0, len(paths) - 1), label="file")
    damage_file(paths[hit], damage, data)
    stage, result = read_all(folder)
    if stage == "ok":
        # A flipped bit in the StripOffsets value of a TIFF frame moves its data
        # (TIFF 6.0 has no checksum); deflate then fails unless nothing changed.
        np.testing.assert_array_equal(result, written)
    else:
        assert_names(result, paths[hit], frame=hit)


# -- timing in a TIFF's metadata -------------------------------------------------

TIMES = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from([0.0, -1.0, 1e-320, 1e308, 5e-5]),
)
TIME_UNITS = st.sampled_from(["s", "ms", "us", "\N{MICRO SIGN}s", "ns", "min", "h", "", "furlong"])


def assert_sound_times(rec) -> None:
    """The frame rate is a positive finite number or None; times start at 0 and increase."""
    assert rec.frame_rate is None or (math.isfinite(rec.frame_rate) and rec.frame_rate > 0)
    assert np.all(np.isfinite(rec.times)) and rec.times[0] == 0
    assert np.all(np.diff(rec.times) > 0)


@PROPERTY
@given(TIMES, TIME_UNITS, st.sampled_from(["TYX", "CYX", "ZYX"]))
def test_imagej_timing_gives_a_finite_frame_rate_or_one_error(scratch, interval, unit, axes):
    path = scratch / "imagej.tif"
    metadata = {"finterval": interval, "tunit": unit, "axes": axes}
    try:
        tifffile.imwrite(path, np.zeros((3, 4, 5), np.uint8), imagej=True, metadata=metadata)
    except (ValueError, TypeError):  # a value the reference writer refuses: nothing to read
        assume(False)
    try:
        with watchdog(), open_recording(path) as rec:
            assert_sound_times(rec)
    except DropkinError as exc:
        assert_names(exc, path)


@PROPERTY
@given(
    st.one_of(st.none(), TIMES),
    TIME_UNITS,
    st.one_of(st.none(), st.lists(TIMES, min_size=3, max_size=3)),
)
def test_ome_timing_gives_a_finite_frame_rate_or_one_error(scratch, increment, unit, deltas):
    path = scratch / "ome.tif"
    metadata = {"axes": "TYX"}
    if increment is not None:
        metadata |= {"TimeIncrement": increment, "TimeIncrementUnit": unit}
    if deltas is not None:
        metadata["Plane"] = {"DeltaT": deltas, "DeltaTUnit": [unit] * 3}
    try:
        tifffile.imwrite(path, np.zeros((3, 4, 5), np.uint8), ome=True, metadata=metadata)
    except (ValueError, TypeError):  # a value the reference writer refuses: nothing to read
        assume(False)
    try:
        with watchdog(), open_recording(path) as rec:
            assert_sound_times(rec)
    except DropkinError as exc:
        assert_names(exc, path)
