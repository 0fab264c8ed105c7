"""Frames stored raw in a camera's file: where they lie, and how their bytes unpack.

A .cine file and a .mraw recording both hold gray frames as plain samples:
8-bit bytes, 16-bit little-endian words (often holding 12 significant bits),
or packed 12-bit samples (two samples in three bytes, the first sample's high
eight bits first). :class:`CameraFrames` reads them for both readers, from a
:class:`Layout` that the reader found in the header and checked against the
file's size before anything is read.

Unpacked frames are read straight from the file into a new array, one run of
frames per call (the frames a chunk asks for), and can be memory-mapped
(:meth:`CameraFrames._memmap`) when every frame lies at the same distance from
the previous one. Packed 12-bit frames are unpacked frame by frame within a
run, so that only one frame's 16-bit copy is ever held besides the result.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import RecordingError
from ._limits import check_frame_size

__all__ = ["Layout", "CameraFrames", "unpack12", "pack12"]

#: Bytes of one sample as stored, by packing.
_PACKINGS = {"u8": np.dtype(np.uint8), "u16": np.dtype("<u2"), "p12": np.dtype(np.uint16)}


def unpack12(packed: np.ndarray, count: int) -> np.ndarray:
    """`count` 12-bit samples from packed bytes (3 bytes per 2 samples, high bits first).

    Examples
    --------
    >>> unpack12(np.array([0xAB, 0xCD, 0xEF], np.uint8), 2).tolist()
    [2748, 3567]
    """
    triples = np.asarray(packed, dtype=np.uint8)[: count // 2 * 3].reshape(-1, 3)
    a, b, c = (triples[:, k].astype(np.uint16) for k in range(3))
    out = np.empty((len(triples), 2), dtype=np.uint16)
    out[:, 0] = (a << 4) | (b >> 4)
    out[:, 1] = ((b & 0x0F) << 8) | c
    return out.reshape(-1)


def pack12(samples: np.ndarray) -> bytes:
    """The inverse of :func:`unpack12` (an even number of samples below 4096)."""
    pairs = np.asarray(samples, dtype=np.uint16).reshape(-1, 2)
    out = np.empty((len(pairs), 3), dtype=np.uint8)
    out[:, 0] = pairs[:, 0] >> 4
    out[:, 1] = ((pairs[:, 0] & 0x0F) << 4) | (pairs[:, 1] >> 8)
    out[:, 2] = pairs[:, 1] & 0xFF
    return out.tobytes()


@dataclass(frozen=True)
class Layout:
    """Where the frames of a camera file lie and how they are stored.

    Attributes
    ----------
    offsets : (K,) ndarray of int64
        Byte offset of each frame's first sample.
    rows, cols : int
        Frame size.
    packing : str
        "u8", "u16" (little-endian words) or "p12" (packed 12-bit).
    bottom_up : bool
        Whether the file stores the bottom row first.
    """

    offsets: np.ndarray
    rows: int
    cols: int
    packing: str
    bottom_up: bool = False

    @property
    def frame_bytes(self) -> int:
        samples = self.rows * self.cols
        return (
            samples * 3 // 2
            if self.packing == "p12"
            else samples * _PACKINGS[self.packing].itemsize
        )

    @property
    def stride(self) -> int | None:
        """Bytes from one frame to the next when that is the same for all, else None."""
        steps = np.diff(self.offsets)
        if len(steps) == 0:
            return self.frame_bytes
        stride = int(steps[0])
        return stride if stride >= self.frame_bytes and np.all(steps == stride) else None

    def check(self, path, size: int) -> None:
        """Refuse a layout that the file cannot hold (one line, naming frame and offset)."""
        dtype = _PACKINGS[self.packing]
        check_frame_size((self.rows, self.cols), dtype.itemsize, path=path)
        if self.packing == "p12" and (self.rows * self.cols) % 2:
            raise RecordingError(
                f"packed 12-bit frames of {self.rows} x {self.cols} samples (an odd count)",
                path=path,
            )
        ends = self.offsets + self.frame_bytes
        beyond = np.flatnonzero((ends > size) | (self.offsets < 0))
        if len(beyond):
            frame = int(beyond[0])
            raise RecordingError(
                f"is truncated: frame {frame} would lie at bytes {int(self.offsets[frame])} to "
                f"{int(ends[frame])}, past the end of the file ({size} bytes)",
                path=path,
                frame=frame,
            )


class CameraFrames:
    """Reading and mapping the frames of a :class:`Layout` (base of the camera readers).

    A subclass sets ``path``, ``shape``, ``dtype``, ``bit_depth``, ``notes``,
    ``timing`` and ``_layout`` in its constructor.
    """

    files = None
    _file = None
    _layout: Layout
    path: Path

    def __len__(self) -> int:
        return len(self._layout.offsets)

    def _read(self, i: int) -> np.ndarray:
        return self._read_range(i, i + 1)[0]

    def _read_range(self, start: int, stop: int) -> np.ndarray:
        """Frames ``start`` to ``stop - 1`` as a new (k, M, N) array."""
        layout = self._layout
        block = np.empty((stop - start, layout.rows, layout.cols), dtype=self.dtype)
        stride = layout.stride
        if stride is not None and layout.packing != "p12":
            raw = self._bytes(int(layout.offsets[start]), (stop - start - 1) * stride, start)
            runs = np.lib.stride_tricks.as_strided(
                raw, shape=(stop - start, layout.frame_bytes), strides=(stride, 1), writeable=False
            )
            block[...] = runs.view(_PACKINGS[layout.packing]).reshape(block.shape)
        else:
            for k in range(start, stop):
                block[k - start] = self._frame(k)
        return block[:, ::-1] if layout.bottom_up else block

    def _frame(self, k: int) -> np.ndarray:
        layout = self._layout
        raw = self._bytes(int(layout.offsets[k]), 0, k)
        if layout.packing == "p12":
            samples = unpack12(raw, layout.rows * layout.cols)
        else:
            samples = raw.view(_PACKINGS[layout.packing])
        return samples.reshape(layout.rows, layout.cols)

    def _bytes(self, offset: int, extra: int, frame: int) -> np.ndarray:
        """``frame_bytes + extra`` bytes from `offset` (a frame and the run after it)."""
        if self._file is None:
            self._file = open(self.path, "rb")  # closed by close()
        buffer = np.empty(self._layout.frame_bytes + extra, dtype=np.uint8)
        self._file.seek(offset)
        got = self._file.readinto(memoryview(buffer))
        if got != buffer.nbytes:
            raise RecordingError(
                f"is truncated: the file ends at byte {offset + got}, inside this frame",
                path=self.path,
                frame=frame + got // max(self._layout.stride or 1, 1),
            )
        return buffer

    def _memmap(self, start: int = 0, stop: int | None = None):
        """Frames ``start`` to ``stop - 1`` as a read-only view of a memory map, or None.

        Only for unpacked frames at equal distances in a little-endian machine.
        """
        layout = self._layout
        stride = layout.stride
        little = np.dtype("<u2").isnative
        if layout.packing == "p12" or stride is None or not little:
            return None
        stop = len(self) if stop is None else stop
        count = stop - start
        mapped = np.memmap(
            self.path,
            dtype=np.uint8,
            mode="r",
            offset=int(layout.offsets[start]),
            shape=((count - 1) * stride + layout.frame_bytes,),
        )
        runs = np.lib.stride_tricks.as_strided(
            mapped, shape=(count, layout.frame_bytes), strides=(stride, 1), writeable=False
        )
        frames = runs.view(_PACKINGS[layout.packing]).reshape(count, layout.rows, layout.cols)
        return frames[:, ::-1] if layout.bottom_up else frames

    def close(self) -> None:
        """Close the open file, if any; the next read reopens it."""
        if self._file is not None:
            self._file.close()
            self._file = None

    def __del__(self) -> None:
        self.close()

    def __getstate__(self) -> dict:
        state = dict(self.__dict__)
        state["_file"] = None
        return state


def file_size(path) -> int:
    """The size of `path` in bytes, or a RecordingError naming it."""
    try:
        return os.path.getsize(path)
    except OSError as exc:
        raise RecordingError(f"cannot be read ({exc.strerror})", path=path) from None
