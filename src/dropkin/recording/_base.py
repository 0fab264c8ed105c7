"""The :class:`Recording` type and the small protocol its readers follow.

A reader ("frame source") knows one file format. It has a length, a frame shape
and dtype, and a ``_read(i)`` method that decodes frame ``i`` of the source to a
fresh (M, N) grayscale array; it may add ``_read_range(start, stop)`` when it
can read consecutive frames faster in one go, and ``close()`` when it keeps a
file open. It must be picklable: it stores the path and what it learnt at open
time, never an open handle, and reopens lazily. :class:`Recording` adds
everything that does not depend on the format: the selection of frames, the
time axis, the calibration, slicing and chunked streaming.
"""

from __future__ import annotations

import operator
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Protocol

import numpy as np

from ..errors import RecordingError
from ._array import ArrayAccess

__all__ = ["Recording", "FrameSource", "FileTiming"]


@dataclass(frozen=True)
class FileTiming:
    """Timing found in a file's own metadata.

    Attributes
    ----------
    origin : str
        Where it came from, for people, e.g. "file metadata (ImageJ finterval)".
    interval : float or None
        The frame interval in seconds, when the file gives one interval.
    times : (K,) ndarray or None
        Per-frame times in seconds (any zero), when the file gives them; K is
        the number of frames of the source.
    trigger : float or None
        The instant of the camera's trigger in seconds, on the axis of `times`
        (or of ``index * interval``), when the file records one.
    """

    origin: str
    interval: float | None = None
    times: np.ndarray | None = None
    trigger: float | None = None


class FrameSource(Protocol):
    """What :class:`Recording` needs from a reader (see the module docstring)."""

    path: Path
    kind: str
    shape: tuple[int, int]
    dtype: np.dtype
    bit_depth: int
    notes: tuple[str, ...]
    files: tuple[Path, ...] | None
    timing: FileTiming | None
    # Optional: ``trigger_frame`` (float, the trigger's place in the source's
    # frames, fractional when it fell between two saved frames) and
    # ``header_facts`` (dict, what a camera file's header says, for ``info``);
    # ``lossy`` (str, the lossy compression the pixels went through).

    def __len__(self) -> int: ...

    def _read(self, i: int) -> np.ndarray: ...


def _read_only(array: np.ndarray) -> np.ndarray:
    array = np.array(array, dtype=np.float64)
    array.flags.writeable = False
    return array


class Recording(ArrayAccess):
    """A lazy sequence of 2-D grayscale frames, with their times and calibration.

    Made by :func:`dropkin.recording.open_recording`; nothing is decoded until a
    frame is asked for. Indexing with an integer returns one frame as a new
    (M, N) array; indexing with a slice returns a new lazy Recording over those
    frames whose times are the parent's times for the same frames (a slice
    keeps its parent's time axis, so the two line up). A Recording is
    picklable and holds no open file between pickling and the next read, so
    a process pool can share it. It is not meant to be read from several
    threads at once.

    Parameters
    ----------
    source : FrameSource
        The reader.
    times : (K,) array_like
        Time of each selected frame in seconds.
    frame_rate : float or None
        Frames per second, or None when the times are irregular.
    frame_rate_origin : str
        Where the frame rate or the times came from.
    pixel_size : float or None
        Length of one pixel in the object plane, in metres.
    indices : range, optional
        The frames of `source` to show, in order; all of them by default.
    notes : tuple of str, optional
        Notes added to those of the source.
    trigger_time : float, optional
        The camera's trigger instant on the axis of `times` (s), when known.

    Attributes
    ----------
    times : (K,) ndarray of float64
        Seconds since the first frame that :func:`open_recording` kept
        (read-only).
    frame_rate : float or None
        In hertz; divided by the step of a stepped slice.
    frame_rate_origin : str
        E.g. "experiment file", "command line", "file metadata (ImageJ finterval)".
    pixel_size : float or None
        In metres.
    dtype : numpy.dtype
        Of every frame, as stored (8- and 16-bit data are never rescaled).
    shape : tuple of int
        (K, M, N): frames, rows and columns, as for the array of all frames
        (see :class:`~dropkin.recording._array.ArrayAccess` for ``ndim``,
        ``np.asarray(rec)``, ``rec[k, rows, cols]`` and ``to_dask()``).
    frame_shape : tuple of int
        (M, N), rows and columns of one frame.
    path : pathlib.Path
        The folder or file the frames come from.
    kind : str
        "image folder", "multi-page TIFF" or "video".
    notes : tuple of str
        What the reader did that a user should know (colour converted, a
        container rate ignored, a length corrected).
    bit_depth : int
        Bits per sample actually used, when the file says so (the ``sBIT`` chunk
        of a PNG); otherwise the number of bits of `dtype`. The data are never
        inspected to guess it.
    files : tuple of pathlib.Path or None
        For an image folder, the file of each frame; None for a single file.
    source_frames : range
        For each frame, its index in the source (the frame number errors name).
    trigger_time : float or None
        The instant of the camera's trigger on the axis of `times` (s; negative
        when it came before the first frame kept), for camera files whose
        header records it; None otherwise.
    time_since_trigger : (K,) ndarray or None
        ``times - trigger_time``: each frame's time from the trigger (s).
    trigger_frame : float or None
        The trigger's place among the source's frames (fractional when it fell
        between two saved frames), or None.
    header_facts : dict
        What a camera file's header says (record rate, save step, bit depths,
        whether it has per-frame time stamps); empty for other sources.
    lossy : str or None
        The lossy compression the frames went through, e.g. "MPEG-4 Part 2
        video (codec tag FMP4)" or "JPEG frames"; None for lossless sources
        (and for codecs dropkin does not know).
    """

    def __init__(
        self,
        source: FrameSource,
        *,
        times,
        frame_rate: float | None,
        frame_rate_origin: str,
        pixel_size: float | None,
        indices: range | None = None,
        notes: tuple[str, ...] = (),
        trigger_time: float | None = None,
    ) -> None:
        self._source = source
        self.trigger_time = trigger_time
        self._indices = range(len(source)) if indices is None else indices
        self._times = _read_only(times)
        if self._times.shape != (len(self._indices),):
            raise ValueError(
                f"times has shape {self._times.shape}, expected ({len(self._indices)},)"
            )
        self.frame_rate = frame_rate
        self.frame_rate_origin = frame_rate_origin
        self.pixel_size = pixel_size
        self._notes = tuple(source.notes) + tuple(notes)

    # -- description ---------------------------------------------------------

    @property
    def times(self) -> np.ndarray:
        return self._times

    @property
    def dtype(self) -> np.dtype:
        return self._source.dtype

    @property
    def frame_shape(self) -> tuple[int, int]:
        return tuple(self._source.shape)

    @property
    def shape(self) -> tuple[int, int, int]:
        return (len(self._indices), *self.frame_shape)

    @property
    def path(self) -> Path:
        return self._source.path

    @property
    def kind(self) -> str:
        return self._source.kind

    @property
    def notes(self) -> tuple[str, ...]:
        return self._notes

    @property
    def bit_depth(self) -> int:
        return self._source.bit_depth

    @property
    def files(self) -> tuple[Path, ...] | None:
        files = self._source.files
        return None if files is None else tuple(files[j] for j in self._indices)

    @property
    def source_frames(self) -> range:
        return self._indices

    @property
    def time_since_trigger(self) -> np.ndarray | None:
        return None if self.trigger_time is None else self._times - self.trigger_time

    @property
    def trigger_frame(self) -> float | None:
        return getattr(self._source, "trigger_frame", None)

    @property
    def header_facts(self) -> dict:
        return dict(getattr(self._source, "header_facts", None) or {})

    @property
    def lossy(self) -> str | None:
        return getattr(self._source, "lossy", None)

    def __len__(self) -> int:
        return len(self._indices)

    def __repr__(self) -> str:
        rate = "no frame rate" if self.frame_rate is None else f"{self.frame_rate:g} Hz"
        rows, cols = self.frame_shape
        return (
            f"<Recording {self.kind} '{self.path}': {len(self)} frames of "
            f"{rows} x {cols} {self.dtype}, {rate} ({self.frame_rate_origin})>"
        )

    # -- frames --------------------------------------------------------------

    def __getitem__(self, key):
        if isinstance(key, tuple):
            return self._getitem_tuple(key)
        if isinstance(key, slice):
            step = 1 if key.step is None else key.step
            return Recording(
                self._source,
                times=self._times[key],
                frame_rate=None if self.frame_rate is None else self.frame_rate / abs(step),
                frame_rate_origin=self.frame_rate_origin,
                pixel_size=self.pixel_size,
                indices=self._indices[key],
                notes=self._notes[len(self._source.notes) :],
                trigger_time=self.trigger_time,
            )
        try:
            index = operator.index(key)
        except TypeError:
            raise TypeError(
                f"frames are indexed by int, slice or a tuple, not {type(key).__name__}"
            ) from None
        n = len(self._indices)
        if not -n <= index < n:
            raise IndexError(f"frame index {index} is out of range for {n} frames")
        return self._read_source(self._indices[index])

    def __iter__(self) -> Iterator[np.ndarray]:
        for j in self._indices:
            yield self._read_source(j)

    def chunks(self, n: int) -> Iterator[tuple[int, np.ndarray]]:
        """Yield the frames in consecutive blocks of at most `n`.

        Each block is decoded when it is asked for and into a new array, so
        streaming a recording keeps only the blocks the caller still holds.

        Parameters
        ----------
        n : int
            Largest number of frames per block, at least 1.

        Yields
        ------
        start : int
            Index (in this recording) of the block's first frame.
        block : (k, M, N) ndarray
            The frames ``start`` to ``start + k - 1``, k <= n.
        """
        n = operator.index(n)
        if n < 1:
            raise ValueError(f"chunk size must be at least 1, got {n}")
        read_range = getattr(self._source, "_read_range", None)
        for start in range(0, len(self._indices), n):
            part = self._indices[start : start + n]
            if read_range is not None and part.step == 1:
                block = read_range(part.start, part.stop)
                self._check(block.shape[1:], block.dtype, part.start)
            else:
                block = np.empty((len(part), *self.frame_shape), dtype=self.dtype)
                for k, j in enumerate(part):
                    block[k] = self._read_source(j)
            yield start, block
            del block  # hold no block while the next one is read

    def memmap(self, start: int = 0, stop: int | None = None):
        """Frames ``start`` to ``stop - 1`` as a read-only memory map (K, M, N), or None.

        Available for uncompressed, contiguous TIFF stacks (and only when the
        frames selected are consecutive); None otherwise. Code that looks at a
        small part of each frame can index it directly and read only the
        pages it needs; mapping one chunk at a time and dropping the map
        afterwards keeps the resident memory to that chunk's pages. Use
        :meth:`chunks` for everything else.
        """
        opener = getattr(self._source, "_memmap", None)
        if opener is None or self._indices.step != 1 or not len(self._indices):
            return None
        part = self._indices[start:stop]
        if not len(part):
            return None
        return opener(part.start, part.stop)

    def _read_source(self, j: int) -> np.ndarray:
        frame = self._source._read(j)
        self._check(frame.shape, frame.dtype, j)
        return frame

    def _check(self, shape, dtype, j: int) -> None:
        if tuple(shape) != tuple(self.frame_shape) or dtype != self.dtype:
            rows, cols = self.frame_shape
            got = " x ".join(str(s) for s in shape)
            files = self._source.files
            raise RecordingError(
                f"is {got} {dtype}, the recording is {rows} x {cols} {self.dtype}",
                path=self.path if files is None else files[j],
                frame=j,
            )

    # -- resources -----------------------------------------------------------

    def close(self) -> None:
        """Close any file the reader keeps open; the next read reopens it."""
        close = getattr(self._source, "close", None)
        if close is not None:
            close()

    def __enter__(self) -> Recording:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def __getstate__(self) -> dict:
        return dict(self.__dict__)

    def __setstate__(self, state: dict) -> None:
        self.__dict__.update(state)
        self._times = _read_only(self._times)
