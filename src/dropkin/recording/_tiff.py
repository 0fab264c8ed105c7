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

The whole file is never read into memory. At open time the structure is
checked from the tags alone: what tifffile logs or raises about a damaged
file (:mod:`._tifferrors`), which series are the frames (:mod:`._tiffseries`),
pixel data beyond the end of the file, byte counts that do not match the
frame (:mod:`._tiffpage`), pages that differ from the first or data over a
tag directory (:mod:`._tiffcheck`), frames too large to decode
(:mod:`._limits`). Any of these is one :class:`~dropkin.errors.RecordingError`
naming the file (and frame); decoding then uses exactly the offsets that were
checked.
"""

from __future__ import annotations

import math
import os
from pathlib import Path

import cv2
import numpy as np
import tifffile

from ..errors import RecordingError
from ._base import FileTiming
from ._gray import notes_for_channels, to_gray
from ._libtiff import libtiff_errors, opencv_path
from ._tiffcheck import (
    check_claims,
    check_contiguous_frames,
    check_data_apart,
    check_pages_alike,
    ifd_offsets,
)
from ._tifferrors import open_tifffile, tifffile_reports
from ._tiffpage import (
    check_frame_page,
    check_tag_order,
    code_name,
    decoder_for,
    full_page,
    lossy_compression,
    max_sample_value,
    sample_bits,
)
from ._tiffseries import choose_frames, frame_layout
from ._tifftime import timing_from_imagej, timing_from_ome

__all__ = ["TIFF_SUFFIXES", "TiffStack", "open_tiff_stack"]

TIFF_SUFFIXES = (".tif", ".tiff")


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
                check_claims(tif, path)
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
        dtype = np.dtype(series.dtype)
        notes: list[str] = []
        self._mode, pages = choose_frames(tif, series, frame_axes, frame_shape, n, notes, path)
        if pages is not None:
            n = len(pages)
        if n == 0:
            raise RecordingError("holds no frame", path=path)
        decoder = decoder_for(key, path)
        check_frame_page(key, dtype, frame_shape, path, None, decoder=decoder)
        self.lossy = lossy_compression(key)
        self._n = n
        self._frame_shape = frame_shape
        self.shape = frame_shape[:2]
        self.dtype = dtype
        self._order = "RGB"
        notes[:0] = notes_for_channels(frame_shape[2] if len(frame_shape) == 3 else 1)
        bits = sample_bits(key, path)
        self.bit_depth = min(bits, 8 * dtype.itemsize) if bits > 0 else 8
        # MaxSampleValue (TIFF 6.0 tag 281) tells a 12-bit camera's 4095 in
        # 16-bit words; it describes the data, it is never used to rescale.
        top = max_sample_value(key)
        if top is not None and dtype.kind == "u" and 0 < top < (1 << self.bit_depth) - 1:
            self.bit_depth = max(top.bit_length(), 1)
        if self._mode == "raw":
            self._offset = int(series.dataoffset)
            self._file_dtype = dtype.newbyteorder(tif.byteorder)
            self._frame_bytes = math.prod(frame_shape) * dtype.itemsize
            if self._offset + n * self._frame_bytes > size:
                frame = max(0, (size - self._offset) // self._frame_bytes)
                raise RecordingError(
                    f"is truncated: frames {frame} to {n - 1} lie beyond the end "
                    f"of the file ({size} bytes)",
                    path=path,
                    frame=frame,
                )
            check_contiguous_frames(tif, series, n, self._offset, self._frame_bytes, path)
        else:
            if decoder == "opencv":  # libtiff reads every page's own tags: check them all
                pages = [full_page(tif, page) for page in pages]
                for k, page in enumerate(pages):
                    check_tag_order(page, path, k)
            check_pages_alike(pages, key, path)
            for k, page in enumerate(pages):
                check_frame_page(page, dtype, frame_shape, path, k, decoder=decoder)
            check_data_apart(pages, ifd_offsets(tif), size, path)
            self._pages = [int(np.ravel(page.index)[0]) for page in pages]
            self._key_page = int(np.ravel(key.index)[0])
            # Where each frame's data are, as checked: decoding uses these, not
            # a second parse of the tags (which could read them differently).
            self._segments = [
                (tuple(map(int, page.dataoffsets)), tuple(map(int, page.databytecounts)))
                for page in pages
            ]
            if decoder == "opencv":
                self._mode, self._order = "opencv", "BGR"
                notes.append(
                    f"TIFF compression {code_name(key.compression)} decoded by OpenCV "
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
                tif = open_tifffile(self.path)
                tif.pages.set_keyframe(self._key_page)
                self._tif = tif
        key = self._tif.pages.keyframe
        block = np.empty((stop - start, *self._frame_shape), dtype=self.dtype)
        for k in range(start, stop):
            offsets, counts = self._segments[k]
            try:
                with tifffile_reports(self.path, frame=k):
                    # Every page decodes with the first page's tags and the data
                    # found at open time (checked to be the same for all pages).
                    page = tifffile.TiffFrame(
                        self._tif,
                        index=self._pages[k],
                        keyframe=key,
                        dataoffsets=offsets,
                        databytecounts=counts,
                    )
                    image = page.asarray()
            except RecordingError:
                raise
            except Exception as exc:  # any decoder failure names the frame
                raise RecordingError(
                    f"cannot be decoded ({type(exc).__name__}: {exc})",
                    path=self.path,
                    frame=k,
                ) from None
            if image.shape != block.shape[1:]:
                raise RecordingError(
                    f"decodes to an array of shape {image.shape}, "
                    f"the stack's frames are {block.shape[1:]}",
                    path=self.path,
                    frame=k,
                )
            block[k - start] = image
        return block

    def _read_opencv(self, start: int, stop: int) -> np.ndarray:
        first, count = self._pages[start], stop - start
        if self._pages[stop - 1] - first != count - 1:  # not consecutive pages
            return np.concatenate([self._read_opencv(k, k + 1) for k in range(start, stop)])
        try:
            with libtiff_errors(self.path, frame=start):
                ok, images = cv2.imreadmulti(
                    opencv_path(self.path), start=first, count=count, flags=cv2.IMREAD_UNCHANGED
                )
        except RecordingError:
            if count == 1:
                raise
            # Decode page by page to name the frame libtiff complained about.
            return np.concatenate([self._read_opencv(k, k + 1) for k in range(start, stop)])
        except cv2.error as exc:
            raise RecordingError(
                f"cannot be decoded by OpenCV ({' '.join(str(exc).split())[-160:]})",
                path=self.path,
                frame=start,
            ) from None
        if not ok or len(images) != count:
            raise RecordingError("cannot be decoded by OpenCV", path=self.path, frame=start)
        for k, image in enumerate(images):
            if image.shape[:2] != self.shape or image.dtype != self.dtype:
                raise RecordingError(
                    f"decodes to {' x '.join(map(str, image.shape))} {image.dtype}, "
                    f"the stack's frames are {' x '.join(map(str, self._frame_shape))} "
                    f"{self.dtype}",
                    path=self.path,
                    frame=start + k,
                )
        if len({image.shape for image in images}) > 1:
            raise RecordingError(
                "decodes to frames of different sample counts", path=self.path, frame=start
            )
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
