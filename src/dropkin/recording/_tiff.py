"""Reader for a multi-page TIFF file (or one page holding a stack), via tifffile.

The frames are the first image series of the file, its leading axes flattened
(an ImageJ hyperstack with axes ``TYX``, a tifffile stack ``QYX``, a single
page ``YX``). When a file holds several one-page series of the same size (what
tifffile writes for pages added one by one), every page is a frame.

Three ways to read, chosen at open time:

- "raw": uncompressed pixels stored back to back; a frame or a run of frames
  is read straight from the file into a new array (no memory map: mapped
  pages count towards a process's resident memory, plain reads do not stay);
- "pages": tifffile decodes page by page;
- "opencv": tifffile cannot decode the compression without the optional
  imagecodecs package (LZW, JPEG): OpenCV's libtiff reads the page instead.

The whole file is never read into memory. tifffile reports damaged files
through its logger rather than by raising; those reports are turned into a
:class:`~dropkin.errors.RecordingError` at open time, as is pixel data that
lies beyond the end of the file (a truncated file).
"""

from __future__ import annotations

import logging
import math
import os
import re
from contextlib import contextmanager
from pathlib import Path

import cv2
import numpy as np
import tifffile

from ..errors import RecordingError
from ._base import FileTiming
from ._gray import notes_for_channels, to_gray
from ._tifftime import timing_from_imagej, timing_from_ome

__all__ = ["TIFF_SUFFIXES", "TiffStack", "open_tiff_stack", "tifffile_reports"]

TIFF_SUFFIXES = (".tif", ".tiff")


class _Collect(logging.Handler):
    def __init__(self) -> None:
        super().__init__(logging.ERROR)
        self.messages: list[str] = []

    def emit(self, record: logging.LogRecord) -> None:
        # Drop tifffile's leading object repr, "<tifffile.TiffPages @8> ...".
        self.messages.append(re.sub(r"^<[^>]*>\s*", "", record.getMessage()))


@contextmanager
def tifffile_reports(path):
    """Turn errors that tifffile logs inside the block into a RecordingError."""
    handler = _Collect()
    logger = logging.getLogger("tifffile")
    logger.addHandler(handler)
    try:
        yield
    finally:
        logger.removeHandler(handler)
    if handler.messages:
        raise RecordingError(
            f"is damaged or truncated (tifffile: {handler.messages[0]})", path=path
        )


def open_tifffile(path: Path) -> tifffile.TiffFile:
    """Open with tifffile, any failure becoming a RecordingError."""
    try:
        return tifffile.TiffFile(path)
    except Exception as exc:  # tifffile raises TiffFileError, ValueError, OSError...
        raise RecordingError(f"cannot be read as a TIFF file ({exc})", path=path) from None


def tifffile_decodes(page) -> bool:
    """Whether tifffile can decode `page` without optional packages."""
    return (
        page.compression in tifffile.TIFF.DECOMPRESSORS
        and page.predictor in tifffile.TIFF.PREDICTORS
    )


def check_page_extent(page, size: int, path, frame: int) -> None:
    """Raise if the pixel data of `page` run past `size` bytes (a truncated file)."""
    for offset, count in zip(page.dataoffsets, page.databytecounts, strict=True):
        if offset + count > size:
            raise RecordingError(
                f"is truncated: the pixel data of this frame end beyond the end "
                f"of the file ({size} bytes)",
                path=path,
                frame=frame,
            )


def frame_layout(series, path) -> tuple[str, tuple[int, ...], int]:
    """Split a series into frames: (frame axes, frame shape, number of frames)."""
    axes, shape = series.axes, tuple(series.shape)
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
    if tail == 3 and not 1 <= shape[-1] <= 4:
        raise RecordingError(f"has {shape[-1]} samples per pixel; expected 1 to 4", path=path)
    return axes[:-tail], shape[-tail:], math.prod(shape[:-tail])


class TiffStack:
    """The frames of one TIFF file; made by :func:`open_tiff_stack`."""

    kind = "multi-page TIFF"
    files = None

    def __init__(self, path: Path) -> None:
        self.path = path
        self._file = None
        self._tif = None
        with tifffile_reports(path):
            tif = open_tifffile(path)
            try:
                self._inspect(tif, os.path.getsize(path))
            finally:
                tif.close()

    def _inspect(self, tif, size: int) -> None:
        path = self.path
        if not tif.series:
            raise RecordingError("holds no image", path=path)
        series = tif.series[0]
        frame_axes, frame_shape, n = frame_layout(series, path)
        key = series.keyframe
        same = [
            s
            for s in tif.series
            if s.axes == series.axes and s.shape == series.shape and len(s) == 1
        ]
        if not frame_axes and len(tif.series) > 1 and len(same) == len(tif.series):
            pages, n = [s[0] for s in tif.series], len(tif.series)
            self._mode = "pages"
        elif series.dataoffset is not None and key.is_final:
            pages, self._mode = None, "raw"
        elif len(series) == n:
            pages, self._mode = list(series), "pages"
        else:
            raise RecordingError(
                f"stores {n} frames in {len(series)} compressed pages; "
                "only one frame per page can be streamed",
                path=path,
            )
        if n == 0:
            raise RecordingError("holds no frame", path=path)
        self._n = n
        self._frame_shape = frame_shape
        self.shape = frame_shape[:2]
        self.dtype = np.dtype(series.dtype)
        self._order = "RGB"
        notes = list(notes_for_channels(frame_shape[2] if len(frame_shape) == 3 else 1))
        bits = int(key.bitspersample)
        self.bit_depth = min(bits, 8 * self.dtype.itemsize) if bits > 0 else 8
        # MaxSampleValue (TIFF 6.0 tag 281) tells a 12-bit camera's 4095 in
        # 16-bit words; it describes the data, it is never used to rescale.
        max_tag = key.tags.get(281)
        if max_tag is not None and self.dtype.kind == "u":
            top = int(np.max(np.ravel(max_tag.value)))
            if 0 < top < (1 << self.bit_depth) - 1:
                self.bit_depth = max(int(top).bit_length(), 1)
        if self._mode == "raw":
            self._offset = int(series.dataoffset)
            self._file_dtype = self.dtype.newbyteorder(tif.byteorder)
            self._frame_bytes = math.prod(frame_shape) * self.dtype.itemsize
            if self._offset + n * self._frame_bytes > size:
                frame = max(0, (size - self._offset) // self._frame_bytes)
                raise RecordingError(
                    f"is truncated: frames {frame} to {n - 1} lie beyond the end "
                    f"of the file ({size} bytes)",
                    path=path,
                    frame=frame,
                )
        else:
            for i, page in enumerate(pages):
                if page is None:
                    raise RecordingError("page is missing", path=path, frame=i)
                check_page_extent(page, size, path, i)
            self._pages = [int(np.ravel(page.index)[0]) for page in pages]
            if not tifffile_decodes(key):
                self._mode, self._order = "opencv", "BGR"
                notes.append(
                    f"TIFF compression {key.compression.name} decoded by OpenCV "
                    "(tifffile would need the optional imagecodecs package)"
                )
        timing, timing_notes = timing_from_ome(tif.ome_metadata, n)
        if timing is None:
            timing, more = timing_from_imagej(tif.imagej_metadata, frame_axes)
            timing_notes += more
        self.timing: FileTiming | None = timing
        self.timing_notes = timing_notes  # timing found but not trusted, and why
        self.notes = (*notes, *timing_notes)

    def __len__(self) -> int:
        return self._n

    # -- reading -------------------------------------------------------------

    def _read(self, i: int) -> np.ndarray:
        return self._read_range(i, i + 1)[0]

    def _read_range(self, start: int, stop: int) -> np.ndarray:
        """Frames ``start`` to ``stop - 1`` as a new (k, M, N) array."""
        if self._mode == "raw":
            block = self._read_raw(start, stop)
        elif self._mode == "pages":
            block = self._read_pages(start, stop)
        else:
            block = self._read_opencv(start, stop)
        if block.ndim == 3:
            return block
        gray = np.empty((len(block), *self.shape), dtype=block.dtype)
        for k, image in enumerate(block):
            gray[k] = to_gray(image, order=self._order)
        return gray

    def _memmap(self, start: int = 0, stop: int | None = None):
        """Frames ``start`` to ``stop - 1`` as a read-only memory map, or None.

        Only for uncompressed, contiguous, native-order 2-D frames: then a
        caller that needs a few rows of each frame reads only those pages.
        """
        if self._mode != "raw" or len(self._frame_shape) != 2 or not self._file_dtype.isnative:
            return None
        stop = self._n if stop is None else stop
        return np.memmap(
            self.path,
            dtype=self.dtype,
            mode="r",
            offset=self._offset + start * self._frame_bytes,
            shape=(stop - start, *self._frame_shape),
        )

    def _read_raw(self, start: int, stop: int) -> np.ndarray:
        if self._file is None:
            self._file = open(self.path, "rb")  # closed by close()
        block = np.empty((stop - start, *self._frame_shape), dtype=self._file_dtype)
        self._file.seek(self._offset + start * self._frame_bytes)
        got = self._file.readinto(memoryview(block).cast("B"))
        if got != block.nbytes:
            frame = start + got // self._frame_bytes
            raise RecordingError(
                "is truncated: the file ends inside this frame",
                path=self.path,
                frame=frame,
            )
        self._prefetch(stop, stop + (stop - start))
        if not self._file_dtype.isnative:
            block.byteswap(inplace=True)
            block = block.view(self.dtype)
        return block

    def _prefetch(self, start: int, stop: int) -> None:
        """Ask the kernel to start reading frames ``start`` to ``stop - 1``.

        A run of frames is read in one blocking call; telling the kernel that
        the next run follows lets the disk work while the caller computes.
        """
        advise = getattr(os, "posix_fadvise", None)  # not on Windows or macOS
        stop = min(stop, self._n)
        if advise is None or start >= stop:
            return
        offset = self._offset + start * self._frame_bytes
        advise(
            self._file.fileno(), offset, (stop - start) * self._frame_bytes, os.POSIX_FADV_WILLNEED
        )

    def _read_pages(self, start: int, stop: int) -> np.ndarray:
        if self._tif is None:
            with tifffile_reports(self.path):
                self._tif = open_tifffile(self.path)
        block = np.empty((stop - start, *self._frame_shape), dtype=self.dtype)
        for k in range(start, stop):
            try:
                block[k - start] = self._tif.pages[self._pages[k]].asarray()
            except Exception as exc:  # any decoder failure names the frame
                raise RecordingError(
                    f"cannot be decoded ({type(exc).__name__}: {exc})",
                    path=self.path,
                    frame=k,
                ) from None
        return block

    def _read_opencv(self, start: int, stop: int) -> np.ndarray:
        first, count = self._pages[start], stop - start
        if self._pages[stop - 1] - first != count - 1:  # not consecutive pages
            return np.concatenate([self._read_opencv(k, k + 1) for k in range(start, stop)])
        ok, images = cv2.imreadmulti(
            str(self.path), start=first, count=count, flags=cv2.IMREAD_UNCHANGED
        )
        if not ok or len(images) != count:
            raise RecordingError("cannot be decoded by OpenCV", path=self.path, frame=start)
        return np.stack(images)

    # -- resources -----------------------------------------------------------

    def close(self) -> None:
        """Close the open file, if any; the next read reopens it."""
        for name in ("_file", "_tif"):
            handle = getattr(self, name, None)
            if handle is not None:
                handle.close()
                setattr(self, name, None)

    def __del__(self) -> None:
        self.close()

    def __getstate__(self) -> dict:
        state = dict(self.__dict__)
        state["_file"] = state["_tif"] = None
        return state


def open_tiff_stack(path: Path) -> TiffStack:
    """Open a TIFF file as a stack of frames (see the module docstring)."""
    return TiffStack(path)
