"""A TIFF file's structure across its pages, checked from the tags before any pixel is decoded.

tifffile parses the file; what it finds is checked here against what a sound
file of frames looks like, so that a damaged or hostile file is refused with
one :class:`~dropkin.errors.RecordingError` naming it (and the frame) instead
of being decoded into wrong values, crashing the parser or asking for more
memory than the file could ever fill: metadata that claim more frames than
the file has pages, frames not where the stack's layout puts them, pages that
would decode differently from the first, pixel data over a tag directory.
The checks of one page are in :mod:`._tiffpage`. Used by the stack reader
(:mod:`._tiff`) and by the frame-file headers of a folder (:mod:`._headers`).
"""

from __future__ import annotations

import xml.etree.ElementTree as ElementTree
from bisect import bisect_left

import tifffile

from ..errors import RecordingError
from ._tiffpage import check_page_extent, code_name

__all__ = [
    "ifd_offsets",
    "check_contiguous_frames",
    "check_pages_alike",
    "check_data_apart",
    "check_claims",
]


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
