"""Size, sample type and soundness of an image file, read from its header.

An image folder is checked at open time frame by frame, so this must be cheap:
PNG, BMP and JPEG headers are parsed here from their first bytes (and a look
at the last bytes, where a truncated file is missing its end marker); TIFF
pages are described by tifffile without decoding pixels. Nothing is decoded.
"""

from __future__ import annotations

import struct
import zlib
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import RecordingError
from ._limits import check_frame_size
from ._tiff import TIFF_SUFFIXES
from ._tiffcheck import check_claims, check_data_apart, ifd_offsets
from ._tifferrors import open_tifffile, tifffile_reports
from ._tiffpage import (
    check_frame_page,
    check_tag_order,
    decoder_for,
    lossy_compression,
    sample_bits,
)
from ._tiffseries import frame_layout

__all__ = ["FrameHeader", "read_header", "IMAGE_SUFFIXES"]

IMAGE_SUFFIXES = (".png", *TIFF_SUFFIXES, ".bmp", ".jpg", ".jpeg")


@dataclass(frozen=True)
class FrameHeader:
    """What a frame file's header says.

    Attributes
    ----------
    rows, cols : int
        Frame size.
    dtype : numpy.dtype
        Sample type once decoded.
    channels : int
        Samples per pixel: 1 gray, 2 gray and alpha, 3 colour, 4 colour and alpha.
    bit_depth : int or None
        Significant bits per sample when the file says so (PNG ``sBIT``,
        TIFF ``BitsPerSample`` narrower than the sample type), else None.
    decoder : str
        "opencv" or "tifffile", whichever will decode the pixels.
    lossy : str or None
        The lossy compression the pixels went through ("JPEG"), or None.
    """

    rows: int
    cols: int
    dtype: np.dtype
    channels: int
    bit_depth: int | None = None
    decoder: str = "opencv"
    lossy: str | None = None

    def describe(self) -> str:
        return f"{self.rows} x {self.cols} {self.dtype}"


def read_header(path: Path) -> FrameHeader:
    """Describe the image in `path` from its header.

    Raises
    ------
    RecordingError
        For an empty, truncated or unreadable file, naming it.
    """
    size = path.stat().st_size
    if size == 0:
        raise RecordingError("is empty (0 bytes)", path=path)
    suffix = path.suffix.lower()
    if suffix in TIFF_SUFFIXES:
        return _tiff_header(path, size)
    reader = {".png": _png_header, ".bmp": _bmp_header}.get(suffix, _jpeg_header)
    with open(path, "rb") as file:
        return reader(file, size, path)


_PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
_PNG_END = b"\x00\x00\x00\x00IEND\xaeB`\x82"  # the IEND chunk, with its CRC
_PNG_CHANNELS = {0: 1, 2: 3, 3: 3, 4: 2, 6: 4}
_PNG_MAX_CHUNK = 2**31 - 1  # longest chunk the PNG specification allows (5.3)
# Bit depths allowed for each colour type (PNG specification, 11.2.2 IHDR).
_PNG_DEPTHS = {0: (1, 2, 4, 8, 16), 2: (8, 16), 3: (1, 2, 4, 8), 4: (8, 16), 6: (8, 16)}


def _png_header(file, size: int, path) -> FrameHeader:
    head = file.read(33)
    if len(head) < 33 or head[:8] != _PNG_SIGNATURE or head[12:16] != b"IHDR":
        raise RecordingError("is not a PNG file (no PNG signature and header)", path=path)
    length, crc = struct.unpack(">I", head[8:12])[0], struct.unpack(">I", head[29:33])[0]
    if length != 13 or zlib.crc32(head[12:29]) != crc:
        raise RecordingError("has a damaged PNG header (IHDR checksum)", path=path)
    cols, rows, depth, colour, method, filtering, interlace = struct.unpack(
        ">IIBBBBB", head[16:29]
    )
    channels = _PNG_CHANNELS.get(colour)
    if (
        channels is None
        or depth not in _PNG_DEPTHS[colour]
        or rows == 0
        or cols == 0
        or (method, filtering) != (0, 0)
        or interlace not in (0, 1)
    ):
        raise RecordingError("has a damaged PNG header", path=path)
    dtype = np.dtype(np.uint16 if depth == 16 else np.uint8)
    # OpenCV decodes palette images to colour and may add an alpha channel.
    check_frame_size((rows, cols, 1 if channels == 1 else 4), dtype.itemsize, path=path)
    significant = None
    position = 33
    # Walk every chunk to the end: a length that runs past the end of the file
    # is damage, and OpenCV would allocate it (a 200-byte PNG whose IDAT length
    # said 2 GB took 2 GB and 4 s to refuse). Each step moves 12 bytes at least.
    while position < size:
        file.seek(position)
        chunk = file.read(8)
        if len(chunk) < 8:
            break
        length, name = struct.unpack(">I4s", chunk)
        if length > _PNG_MAX_CHUNK or position + 12 + length > size:
            raise RecordingError(
                f"is truncated or damaged: its {name!r} chunk at byte {position} claims "
                f"{length} bytes, past the end of the file ({size} bytes)",
                path=path,
            )
        if name == b"sBIT" and 1 <= length <= 4 and significant is None:
            significant = max(file.read(length))
        if name == b"IEND":
            break
        position += 12 + length
    file.seek(max(0, size - len(_PNG_END)))
    if file.read() != _PNG_END:
        raise RecordingError(
            "is truncated or damaged: it does not end with the PNG end chunk",
            path=path,
        )
    if significant is not None and not 1 <= significant < 8 * dtype.itemsize:
        significant = None
    return FrameHeader(rows, cols, dtype, channels, significant)


def _bmp_header(file, size: int, path) -> FrameHeader:
    head = file.read(54)
    if len(head) < 26 or head[:2] != b"BM":
        raise RecordingError("is not a BMP file (no BM signature)", path=path)
    data_offset, info_size = struct.unpack("<II", head[10:18])
    if info_size == 12:  # the old OS/2 header
        cols, rows, _, bits = struct.unpack("<HHHH", head[18:26])
        compression, palette_entry, n_colours = 0, 3, 0
    elif info_size >= 40 and len(head) >= 50:
        cols, rows, _, bits, compression = struct.unpack("<iiHHI", head[18:34])
        n_colours = struct.unpack("<I", head[46:50])[0]
        palette_entry = 4
    else:
        raise RecordingError("has a damaged BMP header", path=path)
    rows = abs(rows)  # negative: stored top row first
    if rows == 0 or cols <= 0 or bits not in (1, 4, 8, 16, 24, 32):
        raise RecordingError("has a damaged BMP header", path=path)
    if bits <= 8 and n_colours > 2**bits:
        raise RecordingError(
            f"has a damaged BMP header ({n_colours} palette colours for {bits}-bit pixels)",
            path=path,
        )
    check_frame_size((rows, cols, 4), 1, path=path)  # OpenCV may decode to 4 channels
    if compression in (0, 3):  # uncompressed rows, each padded to 4 bytes
        stride = (bits * cols + 31) // 32 * 4
        if data_offset + stride * rows > size:
            raise RecordingError(
                f"is truncated: {data_offset + stride * rows} bytes expected, {size} found",
                path=path,
            )
    if bits <= 8:  # a palette: OpenCV gives gray when every entry is gray
        file.seek(14 + info_size)
        palette = file.read((n_colours or 2**bits) * palette_entry)
        entries = np.frombuffer(
            palette[: len(palette) // palette_entry * palette_entry], np.uint8
        ).reshape(-1, palette_entry)
        gray = bool(
            np.all(entries[:, 0] == entries[:, 1]) and np.all(entries[:, 1] == entries[:, 2])
        )
        channels = 1 if gray else 3
    else:
        channels = 4 if bits == 32 else 3
    return FrameHeader(rows, cols, np.dtype(np.uint8), channels)


# Start-of-frame markers (all but DHT 0xC4, JPG 0xC8 and DAC 0xCC); those of
# lossless JPEG (ITU-T T.81, Table B.1: SOF3, SOF7, SOF11, SOF15) lose nothing.
_JPEG_SOF = set(range(0xC0, 0xD0)) - {0xC4, 0xC8, 0xCC}
_JPEG_LOSSLESS = {0xC3, 0xC7, 0xCB, 0xCF}


def _jpeg_header(file, size: int, path) -> FrameHeader:
    if file.read(2) != b"\xff\xd8":
        raise RecordingError("is not a JPEG file (no start-of-image marker)", path=path)
    position = 2
    while True:
        file.seek(position)
        marker = file.read(2)
        if len(marker) < 2 or marker[0] != 0xFF:
            raise RecordingError("is damaged: no JPEG frame header found", path=path)
        code = marker[1]
        if code == 0xFF:  # fill byte
            position += 1
            continue
        if code == 0x01 or 0xD0 <= code <= 0xD7:  # markers without a length
            position += 2
            continue
        if code in (0xD9, 0xDA):
            raise RecordingError("is damaged: no JPEG frame header found", path=path)
        segment = file.read(8)
        if len(segment) < 2:
            raise RecordingError("is truncated inside its JPEG header", path=path)
        if code in _JPEG_SOF:
            if len(segment) < 8:
                raise RecordingError("is truncated inside its JPEG header", path=path)
            precision, rows, cols, components = struct.unpack(">BHHB", segment[2:8])
            break
        position += 2 + struct.unpack(">H", segment[:2])[0]
    if rows == 0 or cols == 0:
        raise RecordingError("has a JPEG header without a frame size", path=path)
    dtype = np.dtype(np.uint8 if precision <= 8 else np.uint16)
    check_frame_size((rows, cols, 1 if components == 1 else 3), dtype.itemsize, path=path)
    # A truncated JPEG still decodes (the rest filled with gray), so look for the
    # end-of-image marker near the end; FF D9 cannot occur inside coded data.
    file.seek(max(0, size - 1024))
    if b"\xff\xd9" not in file.read():
        raise RecordingError("is truncated: no JPEG end-of-image marker at the end", path=path)
    lossy = None if code in _JPEG_LOSSLESS else "JPEG"
    return FrameHeader(rows, cols, dtype, 1 if components == 1 else 3, lossy=lossy)


def _tiff_header(path: Path, size: int) -> FrameHeader:
    with tifffile_reports(path):
        tif = open_tifffile(path)
        try:
            check_claims(tif, path)
            if not tif.series:
                raise RecordingError("holds no image", path=path)
            series = tif.series[0]
            _, frame_shape, n = frame_layout(series, path)
            if n != 1 or len(tif.series) > 1:
                raise RecordingError(
                    "holds several images; a folder must hold one frame per file",
                    path=path,
                )
            key = series.keyframe
            dtype = np.dtype(series.dtype)
            decoder = decoder_for(key, path)
            check_frame_page(key, dtype, frame_shape, path, None, decoder=decoder)
            check_data_apart([key], ifd_offsets(tif), size, path)
            if decoder == "opencv":
                check_tag_order(key, path, None)
            bits = sample_bits(key, path)
            return FrameHeader(
                rows=frame_shape[0],
                cols=frame_shape[1],
                dtype=dtype,
                channels=frame_shape[2] if len(frame_shape) == 3 else 1,
                bit_depth=bits if 0 < bits < 8 * dtype.itemsize else None,
                decoder=decoder,
                lossy=None if lossy_compression(key) is None else "JPEG",
            )
        finally:
            tif.close()
