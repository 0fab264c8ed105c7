"""Decompression bombs are refused from their headers, under 1 GiB of address space.

Issue 17, finding 6: three 750 kB-class PNG frames claiming 16000 x 16000
pixels, and a 20-page deflate TIFF of 11000 x 11000, were each below the old
per-frame bound and cost gigabytes of memory before the analysis gave up.
Both files here are valid (their pixel data decode to zeros), built after the
PNG specification (ISO/IEC 15948: IHDR, IDAT holding a zlib stream of
filtered rows, IEND) and TIFF 6.0 (one deflate strip per page; every page
points at the same strip, so the file stays small). ``dropkin measure`` runs
on each in a child process whose address space is limited to 1 GiB
(``resource.setrlimit(RLIMIT_AS)``): it must end with exit code 1 and one
line naming the file, not with a MemoryError, a traceback or a signal.
"""

from __future__ import annotations

import os
import resource
import shutil
import struct
import subprocess
import sys
import zlib
from pathlib import Path

import pytest

from dropkin.recording._limits import MAX_FRAME_BYTES

pytestmark = pytest.mark.skipif(sys.platform != "linux", reason="RLIMIT_AS is Linux's")

EXPERIMENT = """\
[recording]
frame_rate = "1000 Hz"
pixel_size = "5 um"
[setup]
geometry = "coalescence"
view = "side"
"""


def _zeros_stream(rows: int, row_bytes: int) -> bytes:
    """A zlib stream of `rows` rows of `row_bytes` zero bytes, compressed row by row."""
    packer = zlib.compressobj(9)
    row = b"\0" * row_bytes
    return b"".join(packer.compress(row) for _ in range(rows)) + packer.flush()


def _png_chunk(kind: bytes, body: bytes) -> bytes:
    return struct.pack(">I", len(body)) + kind + body + struct.pack(">I", zlib.crc32(kind + body))


def png_bomb(side: int) -> bytes:
    """An 8-bit gray PNG of `side` x `side` zeros (filter byte 0 before each row)."""
    header = struct.pack(">IIBBBBB", side, side, 8, 0, 0, 0, 0)
    data = _zeros_stream(side, side + 1)
    return (
        b"\x89PNG\r\n\x1a\n"
        + _png_chunk(b"IHDR", header)
        + _png_chunk(b"IDAT", data)
        + _png_chunk(b"IEND", b"")
    )


def tiff_bomb(side: int, pages: int) -> bytes:
    """A little-endian 8-bit gray TIFF of `pages` deflate pages sharing one strip of zeros."""
    strip = _zeros_stream(1, side * side)
    strip += b"\0" * (len(strip) % 2)
    tags = {256: side, 257: side, 258: 8, 259: 8, 262: 1, 273: 8, 277: 1, 278: side}
    tags[279] = len(strip)
    ifd_size = 2 + 12 * len(tags) + 4
    first = 8 + len(strip)
    out = [b"II*\x00", struct.pack("<I", first), strip]
    for page in range(pages):
        entries = []
        for code, value in sorted(tags.items()):
            kind = 3 if code in (258, 259, 262, 277) else 4
            packed = struct.pack("<H", value) + b"\0\0" if kind == 3 else struct.pack("<I", value)
            entries.append(struct.pack("<HHI", code, kind, 1) + packed)
        following = 0 if page == pages - 1 else first + (page + 1) * ifd_size
        out.append(struct.pack("<H", len(tags)) + b"".join(entries) + struct.pack("<I", following))
    return b"".join(out)


def _limited():
    resource.setrlimit(resource.RLIMIT_AS, (2**30, 2**30))


def _measure_limited(source: Path, out: Path) -> subprocess.CompletedProcess:
    env = dict(os.environ, OPENBLAS_NUM_THREADS="1", OMP_NUM_THREADS="1")
    return subprocess.run(
        [sys.executable, "-m", "dropkin", "measure", str(source), "-o", str(out)],
        preexec_fn=_limited,
        capture_output=True,
        text=True,
        env=env,
        timeout=120,
    )


@pytest.fixture(scope="module")
def bombs(tmp_path_factory):
    root = tmp_path_factory.mktemp("bombs")
    folder = root / "png_frames"
    folder.mkdir()
    (folder / "frame_0.png").write_bytes(png_bomb(16000))
    for i in (1, 2):
        shutil.copyfile(folder / "frame_0.png", folder / f"frame_{i}.png")
    (folder / "experiment.toml").write_text(EXPERIMENT)
    stack = root / "stack.tif"
    stack.write_bytes(tiff_bomb(11000, 20))
    (root / "stack.toml").write_text(EXPERIMENT)
    return root, folder, stack


def test_the_bombs_are_small_files_claiming_frames_above_the_bound(bombs):
    _, folder, stack = bombs
    assert (folder / "frame_0.png").stat().st_size < 1_000_000
    assert stack.stat().st_size < 1_000_000
    assert 16000 * 16000 > MAX_FRAME_BYTES and 11000 * 11000 > MAX_FRAME_BYTES


@pytest.mark.parametrize("which", ["png_frames", "stack.tif"])
def test_a_bomb_is_refused_in_one_line_under_one_gib(bombs, which):
    root, _, _ = bombs
    result = _measure_limited(root / which, root / f"out-{which}")
    lines = result.stderr.strip().splitlines()
    assert result.returncode == 1, (result.returncode, result.stderr[-2000:])
    assert len(lines) == 1 and lines[0].startswith("dropkin: error: "), result.stderr
    assert "claims frames of" in lines[0] and which.split(".")[0] in lines[0]
    assert "Traceback" not in result.stderr and "MemoryError" not in result.stderr
