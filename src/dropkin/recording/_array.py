"""A recording seen as the array of its frames, (K, M, N), read only when asked for.

:class:`ArrayAccess` is what makes :class:`~dropkin.recording.Recording`
array-like for notebooks: ``ndim``, ``size``, ``np.asarray(rec)`` (every
frame, read in chunks), ``rec[k, rows, cols]`` (a tuple index: the frames
asked for, cut as numpy would cut the stack) and :meth:`~ArrayAccess.to_dask`,
a lazy dask array whose chunks read their own frames. It relies on the
recording's ``__len__``, ``frame_shape``, ``dtype``, integer and slice
indexing and ``chunks``.
"""

from __future__ import annotations

import operator

import numpy as np

__all__ = ["ArrayAccess"]


def _basic(key) -> bool:
    """Whether `key` is an integer or a slice (numpy's basic indexing)."""
    if isinstance(key, slice):
        return True
    try:
        operator.index(key)
    except TypeError:
        return False
    return True


class ArrayAccess:
    """numpy-style access to a sequence of equally shaped 2-D frames.

    Examples
    --------
    >>> import tempfile, pathlib, numpy as np, tifffile
    >>> from dropkin.recording import open_recording
    >>> with tempfile.TemporaryDirectory() as folder:
    ...     path = pathlib.Path(folder) / "stack.tif"
    ...     frames = np.arange(4 * 3 * 5, dtype=np.uint16).reshape(4, 3, 5)
    ...     tifffile.imwrite(path, frames, photometric="minisblack")
    ...     with open_recording(path, frame_rate=1000.0) as rec:
    ...         print(rec.shape, rec.ndim, np.array_equal(np.asarray(rec), frames))
    ...         print(rec[1:3, 0, ::2].tolist())
    (4, 3, 5) 3 True
    [[15, 17, 19], [30, 32, 34]]
    """

    @property
    def ndim(self) -> int:
        return 3

    @property
    def size(self) -> int:
        return int(np.prod(self.shape))

    def __array__(self, dtype=None, copy=None):
        if copy is False:
            raise ValueError("a recording's frames are read from its file: they cannot be viewed")
        stack = np.empty(self.shape, dtype=self.dtype)
        for start, block in self.chunks(64):
            stack[start : start + len(block)] = block
        return stack if dtype is None else stack.astype(dtype, copy=False)

    def _getitem_tuple(self, key: tuple) -> np.ndarray:
        """``rec[frames, rows, cols]``: only the frames asked for are read."""
        if not key:
            return np.asarray(self)
        first, rest = key[0], key[1:]
        if any(k is Ellipsis or k is None for k in key) or not all(map(_basic, rest)):
            return np.asarray(self)[key]  # numpy's own rules, on every frame
        if isinstance(first, slice):
            part = self[first]
            stack = np.empty((len(part), *self.frame_shape), dtype=self.dtype)
            for start, block in part.chunks(64):
                stack[start : start + len(block)] = block
            return stack[(slice(None), *rest)]
        try:
            index = operator.index(first)
        except TypeError:  # an array of frame indices
            picked = np.arange(len(self))[first]
            frames = np.empty((picked.size, *self.frame_shape), dtype=self.dtype)
            for k, i in enumerate(picked.ravel()):
                frames[k] = self[int(i)]
            frames = frames.reshape(*picked.shape, *self.frame_shape)
            return frames[(slice(None),) * picked.ndim + tuple(rest)]
        return self[index][rest]

    def to_dask(self, chunk_size: int = 64):
        """The frames as a lazy dask array of shape (K, M, N), `chunk_size` frames a chunk.

        Each chunk reads its own frames when it is computed, one reader at a
        time (a recording is not read from several threads at once); the
        recording is picklable, so the chunks can run on a distributed
        cluster whose workers see the file at the same path. Needs dask
        (``pip install 'dropkin[dask]'``).
        """
        try:
            import dask.array as da
        except ImportError:
            raise ImportError(
                "Recording.to_dask needs dask: pip install 'dropkin[dask]'"
            ) from None
        chunk_size = operator.index(chunk_size)
        if chunk_size < 1:
            raise ValueError(f"chunk_size must be at least 1, got {chunk_size}")
        rows, cols = self.frame_shape
        return da.from_array(
            self,
            chunks=(chunk_size, rows, cols),
            lock=True,
            asarray=False,
            fancy=False,
            meta=np.empty((0, 0, 0), dtype=self.dtype),
            name=False,  # a random name: the file may change between two views
        )
