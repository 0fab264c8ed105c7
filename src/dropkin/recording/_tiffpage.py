"""One TIFF page, from its tags: which decoder reads it, and whether it decodes to brightness.

A page is refused, with one :class:`~dropkin.errors.RecordingError` naming
the file (and frame), when its tags say it would decode into values that do
not mean brightness, or into wrong values without an error: an unknown
compression, a photometric interpretation other than gray or colour, byte
counts that do not fit the frame, pixel data outside the file, a damaged tag
directory. Used by the stack reader (:mod:`._tiff`), the file structure
checks (:mod:`._tiffcheck`) and the frame-file headers (:mod:`._headers`).
"""

from __future__ import annotations

import numpy as np
import tifffile

from ..errors import RecordingError
from ._limits import check_frame_size

__all__ = [
    "tifffile_decodes",
    "decoder_for",
    "code_name",
    "check_page_extent",
    "check_frame_page",
    "check_tag_order",
    "sample_bits",
    "full_page",
    "max_sample_value",
]

# PhotometricInterpretation (TIFF 6.0, tag 262) that give gray values as they
# are stored: MINISBLACK for one sample (two with alpha); RGB for three (four
# with alpha). MINISWHITE (0 is white), PALETTE (indices into a colour map),
# SEPARATED (ink densities), CIELAB and the like would give values that do not
# mean brightness, so they are refused rather than measured upside down.
_MINISBLACK, _RGB, _YCBCR = 1, 2, 6


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


# Lossy TIFF compressions (TIFF 6.0 §22 for 6 and TIFF Technical Note 2 for
# 7; 34892 is DNG's lossy JPEG).
_LOSSY_COMPRESSIONS = {
    6: "JPEG (old-style) TIFF pages",
    7: "JPEG TIFF pages",
    34892: "lossy JPEG TIFF pages",
}


def lossy_compression(page) -> str | None:
    """What lossy compression `page` went through (see ``recording._lossy``), or None."""
    return _LOSSY_COMPRESSIONS.get(int(page.compression))


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


def full_page(tif, page):
    """`page` with all its tags parsed (a TiffPage), also when tifffile gave a TiffFrame."""
    if not isinstance(page, tifffile.TiffFrame):
        return page
    tif.filehandle.seek(page.offset)
    return tifffile.TiffPage(tif, index=page.index)


def max_sample_value(page) -> int | None:
    """The MaxSampleValue tag (281) as an int, or None when absent or not a number."""
    tag = page.tags.get(281)
    if tag is None:
        return None
    values = np.ravel(np.asarray(tag.value, dtype=object))
    if not len(values) or not all(isinstance(v, (int, np.integer)) for v in values):
        return None
    return int(max(values))
