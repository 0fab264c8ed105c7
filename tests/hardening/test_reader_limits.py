"""Headers that claim absurd sizes are refused before anything large is allocated.

Each file is a few kilobytes crafted by hand after its format's specification
(TIFF 6.0, the PNG specification, JPEG's start-of-frame segment, the BMP
info header) whose header claims a frame of 100 000 x 100 000 samples, a
stack of 10^8 frames, or a palette of 2^32 colours. They are opened in a
child process whose address space is limited (``resource.setrlimit(RLIMIT_AS)``)
to 1 GiB above what it uses after its imports, so an attempt to allocate a
frame would fail there with a MemoryError (or kill the child), and under
``tracemalloc`` (which numpy and Python report to), whose peak must stay
below 16 MiB. The child first checks that the limit bites (a 2 GiB numpy
array must fail), so the test can fail.
"""

from __future__ import annotations

import json
import struct
import subprocess
import sys
import textwrap
import zlib

import numpy as np
import pytest

from dropkin.errors import RecordingError
from dropkin.recording import open_recording
from dropkin.recording._limits import MAX_FRAME_BYTES

HUGE = 100_000  # rows and columns claimed
FRAMES = 100_000_000  # frames claimed by a stack description

CHILD = textwrap.dedent(
    """
    import json, resource, sys, tracemalloc
    import numpy as np
    from dropkin.errors import DropkinError
    from dropkin.recording import open_recording

    def vm_bytes():
        with open("/proc/self/status") as status:
            for line in status:
                if line.startswith("VmSize:"):
                    return int(line.split()[1]) * 1024

    limit = vm_bytes() + 2**30
    resource.setrlimit(resource.RLIMIT_AS, (limit, limit))
    try:
        np.ones(2**31, np.uint8)
        bites = False
    except MemoryError:
        bites = True
    results = {"limit bites": bites}
    for path in sys.argv[1:]:
        tracemalloc.start()
        try:
            with open_recording(path, frame_rate=1.0) as rec:
                rec[0]
            outcome = "read"
        except DropkinError as exc:
            outcome = type(exc).__name__ + ": " + str(exc)
        except BaseException as exc:
            outcome = "CRASH " + type(exc).__name__ + ": " + str(exc)[:200]
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        results[path] = {"outcome": outcome, "peak": peak}
    print(json.dumps(results))
    """
)


def _entry(code: int, value: int) -> bytes:
    kind, fmt = (4, "<I") if code in (256, 257, 273, 278, 279) else (3, "<H")
    return struct.pack("<HHI", code, kind, 1) + struct.pack(fmt, value).ljust(4, b"\0")


def tiff_page(rows, cols, *, data: bytes, compression=1, description=b"") -> bytes:
    """A little-endian one-page gray 16-bit TIFF (TIFF 6.0) holding `data` as one strip."""
    at = 8 + len(data) + len(data) % 2
    text = description + b"\0" if description else b""
    ifd_at = at + len(text) + len(text) % 2
    tags = {256: cols, 257: rows, 258: 16, 259: compression, 262: 1, 273: 8, 277: 1}
    tags |= {278: rows, 279: len(data)}
    entries = [_entry(code, value) for code, value in sorted(tags.items())]
    if text:  # ImageDescription (270), ASCII, after the pixel data
        entries.insert(4, struct.pack("<HHII", 270, 2, len(text), at))
    ifd = struct.pack("<H", len(entries)) + b"".join(entries) + struct.pack("<I", 0)
    body = data.ljust(at - 8, b"\0") + text.ljust(ifd_at - at, b"\0")
    return b"II*\x00" + struct.pack("<I", ifd_at) + body + ifd


def png_header(rows, cols) -> bytes:
    """A 16-bit RGBA PNG whose IHDR (with its CRC) claims rows x cols; a tiny IDAT."""

    def chunk(name, body):
        return (
            struct.pack(">I", len(body)) + name + body + struct.pack(">I", zlib.crc32(name + body))
        )

    ihdr = struct.pack(">IIBBBBB", cols, rows, 16, 6, 0, 0, 0)
    idat = zlib.compress(b"\0" * 64)
    return b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", ihdr) + chunk(b"IDAT", idat) + chunk(b"IEND", b"")


def jpeg_header(rows, cols) -> bytes:
    """Start of image, a baseline start-of-frame claiming rows x cols x 3, end of image."""
    sof = struct.pack(">BHHB", 8, rows, cols, 3) + bytes([1, 0x11, 0, 2, 0x11, 0, 3, 0x11, 0])
    return b"\xff\xd8\xff\xc0" + struct.pack(">H", 2 + len(sof)) + sof + b"\xff\xd9"


def bmp_header(rows, cols, colours=256) -> bytes:
    """An 8-bit RLE-compressed BMP (no size to check against the file) claiming rows x cols."""
    palette = b"".join(bytes([v, v, v, 0]) for v in range(256))  # gray, blue-green-red-0
    offset = 14 + 40 + len(palette)
    info = struct.pack("<IiiHHIIiiII", 40, cols, rows, 1, 8, 1, 2, 2835, 2835, colours, 0)
    pixels = b"\x00\x01"  # end of bitmap
    head = b"BM" + struct.pack("<IHHI", offset + len(pixels), 0, 0, offset)
    return head + info + palette + pixels


@pytest.fixture(scope="module")
def outcomes(tmp_path_factory):
    folder = tmp_path_factory.mktemp("absurd")
    frame = np.zeros((512, 512), "<u2").tobytes()  # one real 512 x 512 frame, 512 KiB
    files = {
        "TIFF 100000 x 100000, uncompressed": tiff_page(HUGE, HUGE, data=b"\0" * 64),
        "TIFF 100000 x 100000, deflate": tiff_page(
            HUGE, HUGE, data=zlib.compress(b"\0" * 64), compression=8
        ),
        "TIFF stack of 1e8 frames (tifffile shape)": tiff_page(
            512, 512, data=frame, description=b'{"shape": [%d, 512, 512]}' % FRAMES
        ),
        "TIFF stack of 1e8 frames (ImageJ, deflate)": tiff_page(
            512,
            512,
            data=zlib.compress(frame),
            compression=8,
            description=b"ImageJ=1.11a\nimages=%d\nframes=%d\n" % (FRAMES, FRAMES),
        ),
        "TIFF stack of 1e8 frames (ImageJ, uncompressed)": tiff_page(
            512,
            512,
            data=frame,
            description=b"ImageJ=1.11a\nimages=%d\nframes=%d\n" % (FRAMES, FRAMES),
        ),
    }
    paths = {}
    for name, data in files.items():
        path = folder / f"{len(paths)}.tif"
        path.write_bytes(data)
        paths[name] = path
    for name, suffix, data in [
        ("PNG 100000 x 100000 RGBA 16-bit", ".png", png_header(HUGE, HUGE)),
        ("JPEG 65535 x 65535 colour", ".jpg", jpeg_header(65535, 65535)),
        ("BMP 100000 x 100000 RLE", ".bmp", bmp_header(HUGE, HUGE)),
        ("BMP palette of 2**32 - 1 colours", ".bmp", bmp_header(4, 4, colours=2**32 - 1)),
    ]:
        frames = folder / f"folder{len(paths)}"
        frames.mkdir()
        (frames / f"frame{suffix}").write_bytes(data)
        paths[name] = frames
    done = subprocess.run(
        [sys.executable, "-c", CHILD, *map(str, paths.values())],
        capture_output=True,
        text=True,
        timeout=120,
        check=False,
    )
    assert done.returncode == 0, done.stderr[-2000:]
    results = json.loads(done.stdout.strip().splitlines()[-1])
    return results, paths


def test_the_address_space_limit_bites(outcomes):
    results, _ = outcomes
    assert results["limit bites"], "a 2 GiB array fitted: the child's limit does not test anything"


@pytest.mark.parametrize(
    "name",
    [
        "TIFF 100000 x 100000, uncompressed",
        "TIFF 100000 x 100000, deflate",
        "TIFF stack of 1e8 frames (tifffile shape)",
        "TIFF stack of 1e8 frames (ImageJ, deflate)",
        "TIFF stack of 1e8 frames (ImageJ, uncompressed)",
        "PNG 100000 x 100000 RGBA 16-bit",
        "JPEG 65535 x 65535 colour",
        "BMP 100000 x 100000 RLE",
        "BMP palette of 2**32 - 1 colours",
    ],
)
def test_an_absurd_header_is_refused_before_allocating(outcomes, name):
    results, paths = outcomes
    result = results[str(paths[name])]
    outcome = result["outcome"]
    assert outcome.startswith("RecordingError: "), outcome
    assert "\n" not in outcome and paths[name].name in outcome
    assert any(
        word in outcome for word in ("claims frames of", "truncated", "claim", "damaged")
    ), outcome
    # Nothing near a frame's size was allocated (a real frame here is 512 KiB).
    assert result["peak"] < 16 * 2**20, f"peak {result['peak']} B"


def test_a_large_but_plausible_frame_is_not_refused_by_the_bound(tmp_path):
    # 4096 x 8192 16-bit gray, 64 MiB: above any high-speed camera's sensor
    # (a few megapixels, common practice), within the bound. The header opens;
    # the tiny deflate strip then fails to decode, as it should.
    assert 4096 * 8192 * 2 <= MAX_FRAME_BYTES
    path = tmp_path / "large.tif"
    path.write_bytes(tiff_page(4096, 8192, data=zlib.compress(b"\0" * 64), compression=8))
    with open_recording(path, frame_rate=1.0) as rec:
        assert rec.frame_shape == (4096, 8192)
        with pytest.raises(RecordingError, match=r"large\.tif: frame 0: "):
            rec[0]
