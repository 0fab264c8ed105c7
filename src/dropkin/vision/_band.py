"""The band: a grid of sample points across the line of centres, and its sampling.

A band is a grid ``origin + s * axis + u * normal`` (``s`` along the line of
centres, ``u`` across it). :func:`make_band` works out, once, which pixels its
points interpolate and with what bilinear weights (a sparse matrix); frames
are then sampled a block at a time: the few boxes of pixels the band needs
are copied (on a memory map, only the pages holding them are read), and one
sparse product gives every sample of every frame in the block.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import sparse

from ..status import NOT_FOUND, STATUSES

__all__ = ["Band", "make_band", "sample_band", "redone"]

#: Internal status code, after those of :mod:`dropkin.status`: what is
#: measured fills the band (or strip) that was sampled, and the caller samples
#: a wider one. It never leaves :mod:`dropkin.vision`.
BAND_LIMIT = len(STATUSES)

#: Frames sampled together: few enough that a block's copies stay in the
#: processor's cache, enough that numpy's per-call cost is shared.
_BLOCK = 64


@dataclass(frozen=True)
class Band:
    """A sampling grid across the line of centres.

    Attributes
    ----------
    origin : (2,) ndarray
        The point (row, col) where ``s = u = 0``.
    axis, normal : (2,) ndarray
        Unit vectors along and across the line of centres.
    s : (S,) ndarray
        Positions along the axis (px).
    u : (U,) ndarray
        Positions across, symmetric, ``u[U // 2] == 0`` (px).
    boxes : tuple of tuple of int
        (row_start, row_stop, col_start, col_stop) of the pixels the band
        reads, one box per stretch of rows ``u`` (a band that skips the rows
        between the axis and the expected edges reads the axis and each side
        in a box of its own, not the whole bounding box).
    pixels : tuple of (P_i,) ndarray of intp
        For each box, the distinct pixels whose values its samples
        interpolate (the four neighbours of each sample point), as flat
        indices into the box; each pixel is read once per box.
    matrix : scipy.sparse.csr_matrix
        (U * S, P) bilinear weights, P the pixels of all boxes in order:
        samples = matrix @ pixel values.
    valid : (U, S) ndarray of bool
        Sample points whose four neighbours lie inside the frame.
    """

    origin: np.ndarray
    axis: np.ndarray
    normal: np.ndarray
    s: np.ndarray
    u: np.ndarray
    valid: np.ndarray
    pixels: tuple
    boxes: tuple
    matrix: object

    @property
    def points(self) -> np.ndarray:
        """(2, U, S) array of the sample points' (row, col)."""
        return (
            self.origin[:, None, None]
            + self.axis[:, None, None] * self.s[None, None, :]
            + self.normal[:, None, None] * self.u[None, :, None]
        )


def make_band(
    shape,
    origin,
    axis,
    *,
    s_centre: float,
    s_half: float,
    u_half: float,
    s_step: float = 0.5,
    u_step: float = 1.0,
    u_values=None,
) -> Band:
    """Build the sampling grid for frames of `shape`.

    Parameters
    ----------
    shape : tuple of int
        (M, N) of the frames.
    origin : (2,) array_like
        Contact point (row, col).
    axis : (2,) array_like
        Unit vector along the line of centres.
    s_centre, s_half : float
        Columns cover ``s_centre - s_half ... s_centre + s_half`` (px).
    u_half : float
        Rows cover ``-u_half ... u_half`` (px).
    s_step, u_step : float, optional
        Grid spacing (px).
    u_values : (H,) array_like, optional
        Distances from the axis to sample on each side, increasing from 0
        (overrides `u_half` and `u_step`): dense only where an edge is
        expected, sparse elsewhere.
    """
    origin = np.asarray(origin, dtype=np.float64)
    axis = np.asarray(axis, dtype=np.float64)
    axis = axis / np.hypot(*axis)
    normal = np.array([-axis[1], axis[0]])
    n_s = max(int(np.ceil(s_half / s_step)), 1)
    if u_values is None:
        n_u = max(int(np.ceil(u_half / u_step)), 2)
        u_values = u_step * np.arange(n_u + 1)
    u_values = np.asarray(u_values, dtype=np.float64)
    if u_values[0] != 0 or np.any(np.diff(u_values) <= 0):
        raise ValueError("u_values must increase from 0")
    # Columns on one grid through the origin, whatever the centre: bands of
    # different chunks then sample the same points (results do not depend on
    # how the recording is cut into chunks).
    s = s_step * (round(s_centre / s_step) + np.arange(-n_s, n_s + 1))
    u = np.concatenate([-u_values[:0:-1], u_values])
    rows = origin[0] + axis[0] * s[None, :] + normal[0] * u[:, None]
    cols = origin[1] + axis[1] * s[None, :] + normal[1] * u[:, None]
    valid, pixels, boxes, matrix = _bilinear(shape, rows, cols, u)
    return Band(origin, axis, normal, s, u, valid, pixels, boxes, matrix)


def _bilinear(shape, rows, cols, u):
    """Bilinear weights of the points (rows, cols), each (U, S), on frames of `shape`.

    Returns the points inside the frame, the pixels and boxes they read and
    the sparse weight matrix, as described for :class:`Band`.
    """
    r0 = np.floor(rows)
    c0 = np.floor(cols)
    fr = (rows - r0).astype(np.float32)
    fc = (cols - c0).astype(np.float32)
    m, n = shape
    valid = (r0 >= 0) & (r0 <= m - 2) & (c0 >= 0) & (c0 <= n - 2)
    r0 = np.clip(r0, 0, m - 2).astype(np.intp)
    c0 = np.clip(c0, 0, n - 2).astype(np.intp)
    base = r0 * n + c0
    index = np.stack([base, base + 1, base + n, base + n + 1])
    weight = np.stack([(1 - fr) * (1 - fc), (1 - fr) * fc, fr * (1 - fc), fr * fc])
    # Rows u more than 2 px apart start a new box: the pixels between them
    # are not read.
    stretches = np.split(np.arange(len(u)), np.flatnonzero(np.diff(u) > 2.0) + 1)
    inverse = np.empty(index.shape, dtype=np.intp)
    boxes, pixels, offset = [], [], 0
    for rows_u in stretches:
        used, where = _distinct(index[:, rows_u, :])
        rows_px, cols_px = np.divmod(used, n)
        box = (
            int(rows_px.min()),
            int(rows_px.max()) + 1,
            int(cols_px.min()),
            int(cols_px.max()) + 1,
        )
        boxes.append(box)
        pixels.append((rows_px - box[0]) * (box[3] - box[2]) + (cols_px - box[2]))
        inverse[:, rows_u, :] = where + offset
        offset += len(used)
    weight = weight.astype(np.float32)
    count = inverse[0].size
    matrix = sparse.csr_matrix(
        (
            weight.reshape(4, -1).T.ravel(),
            inverse.reshape(4, -1).T.ravel(),
            np.arange(0, 4 * count + 1, 4),
        ),
        shape=(count, offset),
    )
    return valid, tuple(pixels), tuple(boxes), matrix


def _distinct(index):
    """Sorted distinct values of an integer array and where each element is
    among them (``np.unique(index, return_inverse=True)``, by marking the
    values' range instead of sorting)."""
    low = int(index.min())
    mark = np.zeros(int(index.max()) - low + 1, dtype=bool)
    mark[index - low] = True
    rank = np.cumsum(mark) - 1
    return np.flatnonzero(mark) + low, rank[index - low]


def _transposed(box):
    """(B, K) copy of a (K, B) array: OpenCV's transpose for the types it
    takes (several times numpy's on 8-bit images), numpy's otherwise."""
    if box.dtype in (np.uint8, np.uint16, np.int16, np.int32, np.float32, np.float64):
        import cv2

        return cv2.transpose(box)
    return np.ascontiguousarray(box.T)


def _sample_block(frames, band: Band):
    """(U * S, K) float32 bilinear samples of a few frames: a row per point."""
    k = frames.shape[0]
    # Copy each of the band's boxes (on a memory map, only the pages holding
    # them are read), pick each pixel the band needs once, then apply the
    # bilinear weights to those few values, all frames at once: the pixels
    # as rows of a (P, K) array, so that the sparse product runs over
    # contiguous rows of K values.
    values = np.empty((band.matrix.shape[1], k), dtype=np.float32)
    first = 0
    for (r0, r1, c0, c1), pixels in zip(band.boxes, band.pixels, strict=True):
        box = np.ascontiguousarray(frames[:, r0:r1, c0:c1]).reshape(k, -1)
        values[first : first + len(pixels)] = _transposed(box)[pixels]
        first += len(pixels)
    return band.matrix @ values


def _band_transmission(frames, band: Band, dark: float, inv_span):
    """Transmission ``(samples - dark) * inv_span`` on the band, (K, U, S).

    `inv_span` is (U * S, 1). Frames go through in blocks, so that each
    block's copies stay in the processor's cache; the result is a view with
    the frames innermost in memory.
    """
    k = frames.shape[0]
    out = np.empty((band.matrix.shape[0], k), dtype=np.float32)
    for first in range(0, k, _BLOCK):
        samples = _sample_block(frames[first : first + _BLOCK], band)
        samples -= np.float32(dark)
        np.multiply(samples, inv_span, out=out[:, first : first + _BLOCK])
    return out.T.reshape(k, len(band.u), len(band.s))


def sample_band(frames, band: Band):
    """Bilinear samples of a chunk of frames on the band's grid.

    Parameters
    ----------
    frames : (K, M, N) ndarray
        Frames (any numeric dtype), or illumination as (1, M, N).

    Returns
    -------
    samples : (K, U, S) ndarray of float32
        A view with the frames innermost in memory.
    """
    frames = np.asarray(frames)
    k = frames.shape[0]
    out = np.empty((band.matrix.shape[0], k), dtype=np.float32)
    for first in range(0, k, _BLOCK):
        out[:, first : first + _BLOCK] = _sample_block(frames[first : first + _BLOCK], band)
    return out.T.reshape(k, len(band.u), len(band.s))


def redone(first, again, redo, names) -> dict:
    """The arrays `names` of a chunk's result, with some frames measured again.

    Parameters
    ----------
    first : NeckResult or SideChunk
        The chunk measured on a narrow band (or strip).
    again : NeckResult or SideChunk or None
        The frames `redo` measured again on the full band (None if none).
    redo : (K,) ndarray of bool
    names : sequence of str
        The fields to take; ``status`` among them.

    Returns
    -------
    dict
        New arrays by name, ``status`` with ``BAND_LIMIT`` (what is measured
        still fills the full band) turned into ``not-found``.
    """
    values = {}
    for name in names:
        merged = getattr(first, name).copy()
        if again is not None:
            merged[redo] = getattr(again, name)
        values[name] = merged
    status = values["status"]
    status[status == BAND_LIMIT] = NOT_FOUND
    return values
