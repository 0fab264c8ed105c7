"""A TIFF file's structure, checked from its tags before any pixel is decoded.

tifffile parses the file; what it finds is checked here against what a sound
file of frames looks like, so that a damaged or hostile file is refused with
one :class:`~dropkin.errors.RecordingError` naming it (and the frame) instead
of being decoded into wrong values, crashing the parser or asking for more
memory than the file could ever fill. Used by the stack reader
(:mod:`._tiff`) and by the frame-file headers of a folder (:mod:`._headers`).
"""

from __future__ import annotations

import logging
import math
import os
import re
import xml.etree.ElementTree as ElementTree
from bisect import bisect_left
from contextlib import contextmanager
from pathlib import Path

import numpy as np
import tifffile

from ..errors import RecordingError
from ._limits import check_frame_size

__all__ = [
    "tifffile_reports",
    "open_tifffile",
    "tifffile_decodes",
    "decoder_for",
    "code_name",
    "check_page_extent",
    "check_frame_page",
    "sample_bits",
    "frame_layout",
    "ifd_offsets",
    "check_contiguous_frames",
    "check_pages_alike",
    "check_data_apart",
    "check_tag_order",
    "check_claims",
]

_TIFFFILE_DIR = os.path.dirname(os.path.abspath(tifffile.__file__))

# PhotometricInterpretation (TIFF 6.0, tag 262) that give gray values as they
# are stored: MINISBLACK for one sample (two with alpha); RGB for three (four
# with alpha). MINISWHITE (0 is white), PALETTE (indices into a colour map),
# SEPARATED (ink densities), CIELAB and the like would give values that do not
# mean brightness, so they are refused rather than measured upside down.
_MINISBLACK, _RGB, _YCBCR = 1, 2, 6


# tifffile's warnings that mean the frames it lists may not be the file's
# frames (a series description that does not match the pages, a page without
# its required tags); its other warnings are about vendor metadata and harmless.
_STRUCTURE_WARNINGS = re.compile(
    r"series metadata|series raised|series of unknown order|missing required tags"
    r"|invalid offset to first page|ignoring predictor|failed to reshape"
    r"|cannot apply subsampling|OME series|missing \d+ pages|incompletely written"
)


class _Collect(logging.Handler):
    def __init__(self) -> None:
        super().__init__(logging.WARNING)
        self.messages: list[str] = []

    def emit(self, record: logging.LogRecord) -> None:
        # Drop tifffile's leading object repr, "<tifffile.TiffPages @8> ...".
        message = re.sub(r"^<[^>]*>\s*", "", record.getMessage())
        if record.levelno >= logging.ERROR or _STRUCTURE_WARNINGS.search(message):
            self.messages.append(message)


def _raised_in_tifffile(exc: BaseException) -> bool:
    """Whether `exc` was raised while tifffile's own code was running."""
    tb = exc.__traceback__
    while tb is not None:
        if os.path.abspath(tb.tb_frame.f_code.co_filename).startswith(_TIFFFILE_DIR):
            return True
        tb = tb.tb_next
    return False


def _brief(exc: BaseException, limit: int = 160) -> str:
    text = " ".join(str(exc).split())
    if len(text) > limit:
        text = text[: limit - 3] + "..."
    return f"{type(exc).__name__}: {text}" if text else type(exc).__name__


@contextmanager
def tifffile_reports(path, frame: int | None = None):
    """Turn what tifffile says about a damaged file inside the block into a RecordingError.

    tifffile reports many defects through its logger rather than by raising;
    and on a damaged file its parser can raise anything (``KeyError``,
    ``TypeError``, ``ZeroDivisionError``...). Both become one RecordingError
    naming `path` (and `frame`). Exceptions raised outside tifffile's code
    (dropkin's own) pass through unchanged: they are bugs, not bad input.
    """
    handler = _Collect()
    logger = logging.getLogger("tifffile")
    logger.addHandler(handler)
    try:
        yield
    except Exception as exc:
        if isinstance(exc, RecordingError) or not _raised_in_tifffile(exc):
            raise
        raise RecordingError(
            f"is damaged: tifffile cannot parse it ({_brief(exc)})", path=path, frame=frame
        ) from None
    finally:
        logger.removeHandler(handler)
    if handler.messages:
        message = " ".join(handler.messages[0].split())[:200]
        raise RecordingError(
            f"is damaged or truncated (tifffile: {message})", path=path, frame=frame
        )


def open_tifffile(path: Path) -> tifffile.TiffFile:
    """Open with tifffile, any failure becoming a RecordingError."""
    try:
        return tifffile.TiffFile(path)
    except Exception as exc:  # tifffile raises TiffFileError, ValueError, OSError...
        raise RecordingError(f"cannot be read as a TIFF file ({_brief(exc)})", path=path) from None


def tifffile_decodes(page) -> bool:
    """Whether tifffile can decode `page` without optional packages."""
    return (
        page.compression in tifffile.TIFF.DECOMPRESSORS
        and page.predictor in tifffile.TIFF.PREDICTORS
    )


# What OpenCV's libtiff decodes when tifffile cannot (without imagecodecs): LZW
# and JPEG, with no predictor, the horizontal or the floating-point one
# (TIFF 6.0 and TIFF Technical Note 3). Any other code, or one a damaged tag
# made up, is refused: libtiff would guess, and a guess is a wrong frame.
_OPENCV_COMPRESSIONS = {5: "LZW", 7: "JPEG"}
_OPENCV_PREDICTORS = (1, 2, 3)


def decoder_for(page, path, frame: int | None = None) -> str:
    """ "tifffile" or "opencv": which decodes `page`; a RecordingError if neither can."""
    if tifffile_decodes(page):
        return "tifffile"
    if page.compression in _OPENCV_COMPRESSIONS and page.predictor in _OPENCV_PREDICTORS:
        return "opencv"
    raise RecordingError(
        f"uses compression {code_name(page.compression)} with predictor "
        f"{code_name(page.predictor)}, which dropkin cannot decode",
        path=path,
        frame=frame,
        expected="uncompressed, deflate, PackBits, LZW or JPEG pages",
    )


def code_name(value) -> str:
    """The name of a TIFF enumeration value (compression, photometric), or its code."""
    name = getattr(value, "name", None)
    return name if isinstance(name, str) else f"code {value}"


def check_page_extent(page, size: int, path, frame: int | None) -> None:
    """Raise if the pixel data of `page` are not inside the file's `size` bytes.

    Data that end past the end are a truncated file; offsets into the 8-byte
    file header and byte counts below 1 are damaged tags.
    """
    offsets, counts = tuple(page.dataoffsets), tuple(page.databytecounts)
    if len(offsets) != len(counts) or not offsets:
        raise RecordingError(
            f"is damaged: {len(offsets)} pixel data offsets for {len(counts)} byte counts",
            path=path,
            frame=frame,
        )
    for offset, count in zip(offsets, counts, strict=True):
        if offset < 8 or count < 1:
            raise RecordingError(
                f"is damaged: pixel data at byte {offset} of {count} bytes",
                path=path,
                frame=frame,
            )
        if offset + count > size:
            raise RecordingError(
                f"is truncated: the pixel data of this frame end beyond the end "
                f"of the file ({size} bytes)",
                path=path,
                frame=frame,
            )


def sample_bits(page, path, frame: int | None = None) -> int:
    """BitsPerSample of `page` as one number; refused when the samples differ."""
    bits = page.bitspersample
    if not isinstance(bits, (int, np.integer)):  # tifffile gives a tuple when they differ
        raise RecordingError(
            f"has samples of different bit depths ({bits}); expected one depth for all",
            path=path,
            frame=frame,
        )
    return int(bits)


def check_frame_page(page, dtype, frame_shape, path, frame: int | None, *, decoder: str) -> None:
    """Refuse, from its tags alone, a page dropkin cannot decode into brightness values.

    Checks the size of the decoded frame (see :mod:`._limits`), the sample
    type, the photometric interpretation and, for uncompressed strips, that
    the byte counts are exactly what the frame needs (TIFF 6.0: the bytes of
    the strip as stored). A short strip would be padded with zeros by the
    decoder, and a long one is a page whose compression tag was lost; both
    would decode into wrong values without an error.
    """
    dtype = np.dtype(dtype)
    check_frame_size(frame_shape, dtype.itemsize, path=path, frame=frame)
    counts = page.databytecounts
    if isinstance(page, tifffile.TiffFrame):  # a lightweight page: its tags are the key's
        page = page.keyframe
    bits = sample_bits(page, path, frame)
    if dtype.kind not in "uif":
        raise RecordingError(
            f"has {bits}-bit samples of type {dtype}; expected integer or floating-point samples",
            path=path,
            frame=frame,
        )
    samples = frame_shape[2] if len(frame_shape) == 3 else 1
    if int(page.samplesperpixel) != samples:
        raise RecordingError(
            f"is damaged: SamplesPerPixel is {page.samplesperpixel} for frames of "
            f"{samples} sample(s) per pixel",
            path=path,
            frame=frame,
        )
    photometric = page.photometric
    allowed = {_MINISBLACK} if samples <= 2 else {_RGB}
    if decoder == "opencv" and samples > 2:
        allowed.add(_YCBCR)  # libtiff converts YCbCr (JPEG) pages to colour
    if photometric not in allowed:
        kind = "gray" if samples <= 2 else "colour"
        raise RecordingError(
            f"has photometric interpretation {code_name(photometric)} for {kind} samples; "
            f"expected {'MINISBLACK' if samples <= 2 else 'RGB'}",
            path=path,
            frame=frame,
        )
    if page.compression == 1 and not page.is_tiled and page.planarconfig == 1:
        rows, cols = frame_shape[:2]
        needed = rows * -(-cols * samples * bits // 8)
        held = sum(int(count) for count in counts)
        if held != needed:
            raise RecordingError(
                f"is damaged: its uncompressed pixel data hold {held} bytes, "
                f"a {rows} x {cols} frame needs {needed}",
                path=path,
                frame=frame,
            )


def frame_layout(series, path) -> tuple[str, tuple[int, ...], int]:
    """Split a series into frames: (frame axes, frame shape, number of frames)."""
    axes, shape = series.axes, tuple(int(s) for s in series.shape)
    if axes.endswith("YXS"):
        tail = 3
    elif axes.endswith("YX"):
        tail = 2
    else:
        raise RecordingError(
            f"has image axes {axes!r}; expected frames of rows and columns "
            "(axes ending in YX or YXS)",
            path=path,
        )
    if "S" in axes[:-tail]:
        raise RecordingError(
            "stores the samples of each pixel in separate planes (PlanarConfiguration 2); "
            "expected gray frames or interleaved colour samples",
            path=path,
        )
    if tail == 3 and not 1 <= shape[-1] <= 4:
        raise RecordingError(f"has {shape[-1]} samples per pixel; expected 1 to 4", path=path)
    return axes[:-tail], shape[-tail:], math.prod(shape[:-tail])


def ifd_offsets(tif) -> list[int]:
    """Sorted file offsets of every page's tag directory (walks the whole chain once)."""
    pages = tif.pages
    pages.useframes = True  # lightweight pages: only offsets and byte counts are parsed
    return sorted(int(page.offset) for page in pages)


def check_contiguous_frames(tif, series, n: int, offset: int, frame_bytes: int, path) -> None:
    """Check that frame k of an uncompressed stack starts at ``offset + k * frame_bytes``.

    tifffile reads a stack it wrote itself (or an ImageJ stack) from the first
    page's offset and the shape in the description, without looking at the
    other pages. A flipped bit in that description or in the first page's
    offset would then read every frame from the wrong place, silently; the
    pages' own offsets tell. ImageJ's form for stacks over 4 GB (one tag
    directory for all frames) has nothing to compare and is only checked
    against the file size.
    """
    tif.pages.useframes = True
    count = len(tif.pages)
    if count == 1 and n > 1 and tif.is_imagej:
        return
    if count < n:
        raise RecordingError(
            f"is damaged: its description claims {n} frames, the file holds {count} pages",
            path=path,
        )
    end = offset + n * frame_bytes
    offsets = ifd_offsets(tif)
    inside = bisect_left(offsets, offset)
    if inside < len(offsets) and offsets[inside] < end:
        raise RecordingError(
            "is damaged: a tag directory lies inside the pixel data of the stack", path=path
        )
    for k in range(n):
        page = series[k]
        where = tuple(page.dataoffsets) if page is not None else ()
        if not where or int(where[0]) != offset + k * frame_bytes:
            raise RecordingError(
                "is damaged: the pixel data of this frame are not where the stack's "
                f"layout puts them (byte {offset + k * frame_bytes})",
                path=path,
                frame=k,
            )


# Tags that decide how a page decodes; a stack's pages must agree on them.
_DECODING = (
    "shape",
    "dtype",
    "compression",
    "predictor",
    "photometric",
    "planarconfig",
    "bitspersample",
    "sampleformat",
    "fillorder",
    "rowsperstrip",
    "tilewidth",
    "tilelength",
    "extrasamples",
)


def check_pages_alike(pages, key, path) -> None:
    """Refuse a stack whose pages would decode differently from its first page.

    A camera writes every page of a recording the same way; a page that says
    otherwise (another compression, no predictor, another sample format) is
    damaged, and decoding it as it says would give wrong values without an
    error. Lightweight pages (tifffile's ``TiffFrame``) have no tags of their
    own to compare; the stack reader decodes every page as such a page of
    the first, so that what was checked is what is decoded.
    """
    for k, page in enumerate(pages):
        if page is None:
            raise RecordingError("is damaged: this frame's page is missing", path=path, frame=k)
        if not isinstance(page, tifffile.TiffPage) or page is key:
            continue
        for name in _DECODING:
            theirs, ours = getattr(page, name), getattr(key, name)
            if theirs != ours:
                raise RecordingError(
                    f"is damaged: this page's {name} is {code_name(theirs)}, "
                    f"the first page's is {code_name(ours)}",
                    path=path,
                    frame=k,
                )


def check_data_apart(pages, offsets: list[int], size: int, path) -> None:
    """Refuse pages whose pixel data are out of the file or run over a tag directory.

    A sound file keeps pixel data and tag directories apart; a strip that
    covers a directory is a damaged offset or byte count, and decoding it
    would give wrong values without an error.
    """
    for k, page in enumerate(pages):
        check_page_extent(page, size, path, k)
        for start, count in zip(page.dataoffsets, page.databytecounts, strict=True):
            inside = bisect_left(offsets, int(start))
            if inside < len(offsets) and offsets[inside] < int(start) + int(count):
                raise RecordingError(
                    "is damaged: the pixel data of this frame run over a tag directory",
                    path=path,
                    frame=k,
                )


def check_tag_order(page, path, frame: int | None) -> None:
    """Refuse a tag directory whose tags repeat or are out of order (TIFF 6.0, section 2).

    For pages that OpenCV decodes: libtiff reports such a directory, and the
    decoding errors that follow from it, only in its log, and OpenCV returns
    the frame anyway (zeros where libtiff gave up).
    """
    codes = [int(tag.code) for tag in page.tags.values()]
    if codes != sorted(set(codes)):
        raise RecordingError(
            "has a damaged tag directory (tags repeated or out of ascending order)",
            path=path,
            frame=frame,
        )


def check_claims(tif, path) -> None:
    """Refuse ImageJ or OME metadata that claim far more frames than the file has pages.

    Called before tifffile builds its image series: tifffile sizes its lists
    of pages from these claims, and a tiny file whose description says
    100 000 000 frames made it allocate 800 MB (ImageJ) or loop for minutes
    (OME). Uncompressed ImageJ stacks may keep all frames after one tag
    directory (ImageJ's form over 4 GB); tifffile checks those against the
    file size itself.
    """
    pages = tif.pages
    pages.useframes = True
    count = len(pages)  # walks the chain of tag directories only
    first = pages.first
    if tif.is_imagej and not first.is_final:
        meta = tif.imagej_metadata or {}
        frames, slices, channels, images = (
            meta.get(key, 1) for key in ("frames", "slices", "channels", "images")
        )
        if all(isinstance(v, int) for v in (frames, slices, channels, images)):
            # The count tifffile takes: channels are pages unless they are the
            # samples of colour pages (then images == frames x slices).
            claimed = frames * slices
            if channels != 1 and images != claimed:
                claimed *= channels
            # Up to 4 samples of a plane may share one page (interleaved colour).
            if claimed > 4 * count:
                raise RecordingError(
                    f"is damaged: its ImageJ metadata claim {claimed} images, "
                    f"the file holds {count} pages",
                    path=path,
                )
    if tif.is_ome:
        claimed = _ome_planes(tif.ome_metadata)
        # Up to 4 samples of a plane may share one page (interleaved colour).
        if claimed is not None and claimed > 4 * count:
            raise RecordingError(
                f"is damaged or one file of several: its OME metadata claim {claimed} "
                f"planes, the file holds {count} pages",
                path=path,
            )


def _ome_planes(xml: str | None) -> int | None:
    """Planes (SizeZ x SizeC x SizeT, summed over images) an OME-XML text claims."""
    if not xml:
        return None
    try:
        root = ElementTree.fromstring(xml)
    except ElementTree.ParseError:
        return None  # tifffile will not use it either
    total = 0
    for element in root.iter():
        if element.tag.rsplit("}", 1)[-1] != "Pixels":
            continue
        planes = 1
        for axis in "ZCT":
            try:
                planes *= max(int(element.get(f"Size{axis}", "1")), 1)
            except ValueError:
                return None
        total += planes
    return total
