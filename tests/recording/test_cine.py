"""The .cine reader against two independent readers of the format (pycine-lite, PIMS).

No library on the package registry writes .cine files, so the tests pack small
ones in tmp_path from pycine's own ctypes tables of the format's structures
(``CINEFILEHEADER``, ``BITMAPINFOHEADER``, ``SETUP``): the header bytes are
laid out by that library's definition, not by dropkin's offsets. Each file is
then read by dropkin, by pycine-lite (``pycine.raw.read_frames``) and by PIMS
(``pims.Cine``), and the pixels, the per-frame times, the trigger and the bit
depth are compared.
"""

from __future__ import annotations

import ctypes
import struct
import warnings

import numpy as np
import pytest

from dropkin.errors import RecordingError
from dropkin.recording import open_recording
from dropkin.recording._camera import pack12

cine = pytest.importorskip("pycine.cine")
pycine_raw = pytest.importorskip("pycine.raw")
pycine_file = pytest.importorskip("pycine.file")
with warnings.catch_warnings():
    warnings.simplefilter("ignore")  # PIMS may warn about optional back ends at import
    pims = pytest.importorskip("pims")

T0 = 100_000  # seconds of the first stamp: small, so that PIMS' float sums keep sub-ns precision
TICKS = 2**32


def write_cine(
    path,
    frames,
    *,
    packed=False,
    real_bpp=12,
    first_image_no=-3,
    rate=60_000.0,
    decimation=1.0,
    interval=None,
    stamps=True,
):
    """Pack `frames` (K, M, N) into a gray .cine file; returns the stamps in ticks.

    `interval` is the time between saved frames written into the time stamps
    (default ``decimation / rate``); the trigger is image 0.
    """
    count, rows, cols = frames.shape
    interval = decimation / rate if interval is None else interval
    ticks = np.uint64(T0 * TICKS) + np.round(np.arange(count) * interval * TICKS).astype(np.uint64)
    trigger = int(ticks[0]) + round(-first_image_no * interval * TICKS)
    setup = cine.SETUP()
    setup.Mark = int.from_bytes(b"ST", "little")
    setup.Length = ctypes.sizeof(cine.SETUP)
    setup.FrameRate, setup.dFrameRate, setup.fDecimation = int(rate), rate, decimation
    setup.RealBPP, setup.RecBPP, setup.SoftwareVersion = real_bpp, real_bpp, 800
    setup.BlackLevel, setup.WhiteLevel = 0, 2**real_bpp - 1
    bitmap = cine.BITMAPINFOHEADER()
    bitmap.biSize, bitmap.biWidth, bitmap.biHeight, bitmap.biPlanes = 40, cols, rows, 1
    bitmap.biBitCount = 8 if frames.dtype == np.uint8 else 16
    bitmap.biCompression = 1024 if packed else 0
    if packed:
        images = [pack12(f) for f in frames]
    else:
        images = [
            f[::-1].astype("<u2" if bitmap.biBitCount == 16 else np.uint8).tobytes()
            for f in frames
        ]  # bottom row first
    bitmap.biSizeImage = len(images[0])
    blocks = b""
    if stamps:  # time-only block, then exposure block ("more tags" flag set on the first)
        blocks += struct.pack("<IHH", 8 + 8 * count, 1002, 1) + ticks.astype("<u8").tobytes()
        blocks += struct.pack("<IHH", 8 + 4 * count, 1003, 0) + bytes(4 * count)
    header = cine.CINEFILEHEADER()
    header.Type, header.Headersize, header.Version = int.from_bytes(b"CI", "little"), 44, 1
    header.FirstMovieImage, header.TotalImageCount = first_image_no, count
    header.FirstImageNo, header.ImageCount = first_image_no, count
    header.OffImageHeader, header.OffSetup = 44, 84
    header.OffImageOffsets = 84 + ctypes.sizeof(setup) + len(blocks)
    header.TriggerTime.seconds, header.TriggerTime.fractions = trigger >> 32, trigger & 0xFFFFFFFF
    start = header.OffImageOffsets + 8 * count
    offsets = [start + k * (8 + len(images[0])) for k in range(count)]
    body = b"".join(struct.pack("<II", 8, len(image)) + image for image in images)
    path.write_bytes(
        bytes(header)
        + bytes(bitmap)
        + bytes(setup)
        + blocks
        + struct.pack(f"<{count}q", *offsets)
        + body
    )
    return ticks


@pytest.fixture
def frames12(rng):
    return rng.integers(0, 4096, size=(6, 10, 14), dtype=np.uint16)


def pycine_frames(path):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        images, _setup, bpp = pycine_raw.read_frames(str(path))
        return np.stack(list(images)), bpp


@pytest.mark.parametrize("packed", [False, True])
def test_pixels_times_trigger_match_both_readers(tmp_path, frames12, packed):
    path = tmp_path / "drops.cine"
    write_cine(path, frames12, packed=packed)
    with open_recording(path) as rec:
        ours = np.stack(list(rec))
        times, since, depth = rec.times, rec.time_since_trigger, rec.bit_depth
        assert rec.trigger_frame == 3.0
        assert rec.memmap(0, 2) is None if packed else np.array_equal(rec.memmap(0, 6), ours)
    theirs, bpp = pycine_frames(path)
    assert np.array_equal(ours, theirs) and np.array_equal(ours, frames12)
    assert depth == bpp == 12
    with pims.Cine(str(path)) as movie:
        assert np.array_equal(ours, np.stack([np.asarray(movie[k]) for k in range(len(movie))]))
        to_trigger = np.array([movie.get_time_to_trigger(k) for k in range(len(movie))])
    # Saved frames 600 µs apart (60 000 fps, every 36th saved would be the same
    # spacing; here every frame at 60 000 fps is 16.7 µs).
    assert np.allclose(np.diff(times), 1 / 60_000, rtol=1e-8)
    assert np.allclose(since, to_trigger, atol=1e-9)
    assert since[3] == pytest.approx(0.0, abs=1e-9)


def test_8bit_frames(tmp_path, rng):
    frames = rng.integers(0, 256, size=(4, 9, 12), dtype=np.uint8)
    path = tmp_path / "eight.cine"
    write_cine(path, frames, real_bpp=8)
    with open_recording(path) as rec:
        ours = np.stack(list(rec))
        assert rec.dtype == np.uint8 and rec.bit_depth == 8
    theirs, _ = pycine_frames(path)
    assert np.array_equal(ours, frames) and np.array_equal(ours, theirs)


def test_save_step_sets_the_saved_frame_rate_without_stamps(tmp_path, frames12):
    """60 000 fps with every 36th frame saved: 600 µs apart, not 16.7 µs."""
    path = tmp_path / "stepped.cine"
    write_cine(path, frames12, decimation=36.0, stamps=False, first_image_no=-2)
    with open_recording(path) as rec:
        assert rec.frame_rate == pytest.approx(60_000 / 36)
        assert np.allclose(np.diff(rec.times), 600e-6)
        assert rec.time_since_trigger[2] == pytest.approx(0.0)
        assert rec.header_facts["per_frame_timestamps"] is False
        assert rec.header_facts["record_rate_hz"] == 60_000


def test_time_stamps_win_over_the_header_rate(tmp_path, frames12):
    path = tmp_path / "stamped.cine"
    ticks = write_cine(path, frames12, decimation=36.0, interval=600e-6)
    with open_recording(path) as rec:
        expected = (ticks - ticks[0]).astype(np.float64) / TICKS
        assert np.array_equal(rec.times, expected)
        assert rec.frame_rate_origin.startswith("file time stamps")
        assert rec.header_facts["per_frame_timestamps"] is True


def test_slice_keeps_the_trigger_axis(tmp_path, frames12):
    path = tmp_path / "slice.cine"
    write_cine(path, frames12)
    with open_recording(path, first_frame=2) as rec:
        assert rec.time_since_trigger[1] == pytest.approx(0.0, abs=1e-9)
        assert np.array_equal(rec[1:].time_since_trigger, rec.time_since_trigger[1:])


def test_given_rate_places_the_trigger_by_frames(tmp_path, frames12):
    path = tmp_path / "given.cine"
    write_cine(path, frames12)
    with open_recording(path, frame_rate=1000.0) as rec:
        assert rec.time_since_trigger[3] == pytest.approx(0.0)
        assert rec.time_since_trigger[0] == pytest.approx(-3e-3)


def _damage(path, offset, data):
    raw = bytearray(path.read_bytes())
    raw[offset : offset + len(data)] = data
    path.write_bytes(bytes(raw))


@pytest.mark.parametrize(
    ("damage", "words"),
    [
        (lambda p: _damage(p, 0, b"XX"), ["not a .cine file", "Type"]),
        (lambda p: _damage(p, 84 + 140, b"??"), ["no setup block", "OffSetup"]),
        (lambda p: _damage(p, 20, struct.pack("<I", 10**9)), ["truncated", "ImageCount"]),
        (lambda p: p.write_bytes(p.read_bytes()[:-100]), ["truncated", "frame 5", "past the end"]),
        (lambda p: p.write_bytes(p.read_bytes()[:30]), ["too short"]),
        (lambda p: _damage(p, 44 + 14, struct.pack("<H", 24)), ["colour", "Compression"]),
        (
            lambda p: _damage(p, 44 + 16, struct.pack("<I", 256)),
            ["packed 10-bit", "biCompression"],
        ),
    ],
)
def test_damaged_file_is_one_clear_line(tmp_path, frames12, damage, words):
    path = tmp_path / "bad.cine"
    write_cine(path, frames12)
    damage(path)
    with pytest.raises(RecordingError) as caught:
        open_recording(path)
    message = str(caught.value)
    assert "\n" not in message and str(path) in message
    for word in words:
        assert word in message
