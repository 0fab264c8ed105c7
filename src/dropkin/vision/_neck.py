"""The neck: half the narrowest width of the bridge, across the line of centres.

Only a band around the contact point is looked at. The band is a grid of
sample points ``origin + s * axis + u * normal``: ``s`` runs along the line of
centres, ``u`` across it. Frames are sampled on the grid by bilinear
interpolation (a block of frames at once: one sparse product per block, on
the few pixels the band needs), turned into transmission, and
in every column ``s`` the two edges of the bridge are found going outward from
the line of centres, at sub-pixel positions where the transmission crosses
one half (linear interpolation between the two samples around the crossing).
The neck is the narrowest column, refined by a parabola through its
neighbours.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import sparse

__all__ = [
    "STATUS_NAMES",
    "OK",
    "BEFORE_CONTACT",
    "UNRESOLVED",
    "NOT_FOUND",
    "AT_EDGE",
    "Band",
    "make_band",
    "sample_band",
    "NeckResult",
    "neck_from_band",
]

#: Per-frame status, as written in radius.csv; the codes index this tuple.
STATUS_NAMES = ("ok", "before-contact", "unresolved", "not-found", "at-edge")
OK, BEFORE_CONTACT, UNRESOLVED, NOT_FOUND, AT_EDGE = range(5)
#: Internal: the bridge is wider than the band (the caller widens the band).
BAND_LIMIT = 5
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
    return Band(origin, axis, normal, s, u, valid, tuple(pixels), tuple(boxes), matrix)


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


@dataclass(frozen=True)
class NeckResult:
    """Neck measurements for a chunk of frames (pixels).

    Attributes
    ----------
    radius : (K,) ndarray
        Neck radius (px): half the narrowest bridge width; NaN where there
        is no measurement.
    radius_err : (K,) ndarray
        Its standard uncertainty from image noise (px).
    s_neck : (K,) ndarray
        Where along the axis the neck is (px from the band origin).
    edges : (K, 2, 2) ndarray
        The two neck edge points (row, col) in each frame, for overlays.
    status : (K,) ndarray of int
        Codes into :data:`STATUS_NAMES`, or ``BAND_LIMIT`` (internal).
    gap : (K,) ndarray
        Width of the gap between the drops on the line of centres (px): the
        transmission summed along the axis, which blur and pixel averaging
        conserve, so that gaps narrower than a pixel still show. About zero
        (within noise) once the drops touch.
    """

    radius: np.ndarray
    radius_err: np.ndarray
    s_neck: np.ndarray
    edges: np.ndarray
    status: np.ndarray
    gap: np.ndarray


def _edge_outward(side, valid_side, level, pos):
    """First crossing of `level` going outward in each column.

    `side` is (H, S, K) with row 0 on the axis (K frames innermost),
    `valid_side` (H, S) marks samples inside the frame and `pos` (H,) holds
    the rows' distances from the axis. Returns the distance of the crossing
    (S, K), the local slope |dT/du| there, masks "no crossing inside the
    band", "the search left the frame before a crossing" and "the crossing
    lies between samples more than a pixel apart", and the distance to the
    frame border along the search (S,) (a lower bound of the edge's distance
    where the search left the frame).
    """
    bright = side >= level
    if not valid_side.all():
        bright &= valid_side[:, :, None]
    bright[0] = False
    j = np.argmax(bright, axis=0)  # (S, K): first bright sample, 0 if none
    none = j == 0
    outside = ~valid_side
    first_out = np.where(outside.any(axis=0), np.argmax(outside, axis=0), side.shape[0])
    left_frame = np.where(none, first_out[:, None] < side.shape[0], first_out[:, None] < j)
    j = np.maximum(j, 1)
    t_in = np.take_along_axis(side, (j - 1)[None], axis=0)[0]
    t_out = np.take_along_axis(side, j[None], axis=0)[0]
    rise = np.maximum(t_out - t_in, 1e-6)
    spacing = pos[j] - pos[j - 1]
    dist = pos[j - 1] + np.clip((level - t_in) / rise, 0.0, 1.0) * spacing
    coarse = spacing > 1.0 + 1e-9
    return dist, rise / spacing, none, left_frame, coarse, pos[np.maximum(first_out - 1, 0)]


def gap_on_axis(on_axis, valid, s_step: float):
    """Width of the gap between the drops from transmission along the axis.

    Parameters
    ----------
    on_axis : (K, S) ndarray
        Transmission sampled along the line of centres.
    valid : (S,) ndarray of bool
        Samples inside the frame.
    s_step : float
        Sample spacing (px).

    Returns
    -------
    gap : (K,) ndarray
        The summed transmission above the drops' own level (the median of
        the outer quarters of the samples, inside the drops) times the
        spacing: blur and pixel averaging conserve it, so gaps narrower than
        a pixel still show. NaN without valid samples.
    """
    values = on_axis[:, valid]
    if not values.shape[1]:
        return np.full(on_axis.shape[0], np.nan)
    quarter = max(values.shape[1] // 4, 1)
    ends = np.concatenate([values[:, :quarter], values[:, -quarter:]], axis=1)
    ref = np.median(ends, axis=1, keepdims=True)
    return np.minimum(values - ref, 1.0).sum(axis=1) * s_step


def neck_from_band(
    trans,
    band: Band,
    *,
    noise: float,
    radii,
    level: float = 0.5,
    min_gap: float = 1.0,
    err_floor: float = 0.1,
    allow_coarse: bool = False,
    with_gap: bool = True,
) -> NeckResult:
    """Measure the neck in a chunk of frames sampled on a band.

    Parameters
    ----------
    trans : (K, U, S) ndarray
        Transmission sampled on the band (see :func:`sample_band`).
    band : Band
    noise : float
        Standard deviation of the transmission on the background (image
        noise), for the uncertainty.
    radii : (2,) array_like
        The two drops' radii (px), for the resolution criterion.
    level : float, optional
        Transmission of the outline.
    min_gap : float, optional
        Smallest gap (px) between the drop surfaces beside the neck that the
        optics resolve; see Notes. :func:`measure_necks` sets it to three
        times the edges' blur (see :func:`edge_blur`).
    err_floor : float, optional
        Uncertainty floor (px) for interpolation error.
    allow_coarse : bool, optional
        Accept edges found between samples more than a pixel apart (for a
        quick, rough look); otherwise such frames need a denser band.
    with_gap : bool, optional
        Measure the gap on the axis (``gap`` is NaN otherwise); callers that
        measure it on a band of their own skip it.

    Returns
    -------
    NeckResult

    Notes
    -----
    *Contact*: a frame is before contact while some column of the band is
    bright on the line of centres (a gap is visible between the drops).

    *Resolution*: next to a neck of radius r, two spheres of radii R0 and R1
    that touch leave a gap of about ``g = r**2 / 2 * (1/R0 + 1/R1)`` between
    their surfaces (the sagitta of each, ``r**2 / (2 R)``, added). While
    ``g < min_gap`` the notch beside the bridge is too thin for the optics:
    blur fills its tip, the half-transmission contour retreats from it, and
    the measured width is too large. Such frames are ``unresolved``. On
    synthetic frames with a Gaussian blur sigma, ``g`` of three sigma kept the
    bias of the radius below about 0.35 px (``tests/vision/test_neck.py``).
    """
    trans = np.asarray(trans, dtype=np.float32)
    k, n_u, n_s = trans.shape
    # Work on (U, S, K), frames innermost: how sample_band delivers them (a
    # view then), and what makes the per-frame steps below contiguous.
    t = np.ascontiguousarray(trans.transpose(1, 2, 0))
    c = n_u // 2
    pos = band.u[c:]
    status = np.full(k, OK, dtype=np.int8)
    radius = np.full(k, np.nan)
    radius_err = np.full(k, np.nan)
    s_neck = np.full(k, np.nan)
    edges = np.full((k, 2, 2), np.nan)

    s_step = float(band.s[1] - band.s[0]) if n_s > 1 else 1.0
    if with_gap:
        gap_width = gap_on_axis(t[c].T, band.valid[c], s_step)
    else:
        gap_width = np.full(k, np.nan)
    on_axis_dark = t[c] < level
    gap_seen = ~on_axis_dark & band.valid[c][:, None]
    before = gap_seen.any(axis=0)
    # No drop in the band at all (every other sample is enough to tell).
    nothing = ~((t[::2, ::2] < level) & band.valid[::2, ::2, None]).any(axis=(0, 1))

    up, slope_up, none_up, out_up, coarse_up, border_up = _edge_outward(
        t[c:], band.valid[c:], level, pos
    )
    down, slope_dn, none_dn, out_dn, coarse_dn, border_dn = _edge_outward(
        t[c::-1], band.valid[c::-1], level, pos
    )
    # Columns whose bridge reaches past the frame border: their width is
    # only known to exceed the distance to the border.
    left = (out_up | out_dn) & on_axis_dark
    reach = float(band.u[-1])  # a side without a crossing reaches at least this far
    bound = np.where(out_up, border_up[:, None], np.where(none_up, reach, up)) + np.where(
        out_dn, border_dn[:, None], np.where(none_dn, reach, down)
    )
    bound = np.where(left, bound, np.inf).min(axis=0)
    width = up + down
    bad_col = none_up | none_dn | ~on_axis_dark | left
    width = np.where(bad_col, np.inf, width)
    m = np.argmin(width, axis=0)
    rows = np.arange(k)
    w_min = width[m, rows]
    # Parabola through the narrowest column and its neighbours (sub-sample in s).
    ml, mr = np.clip(m - 1, 0, n_s - 1), np.clip(m + 1, 0, n_s - 1)
    wl, wr = width[ml, rows], width[mr, rows]
    interior = (m > 0) & (m < n_s - 1) & np.isfinite(wl) & np.isfinite(wr) & np.isfinite(w_min)
    wl, wr = np.where(interior, wl, 0.0), np.where(interior, wr, 0.0)
    w_fin = np.where(interior, w_min, 0.0)
    curv = np.where(interior, wl + wr - 2 * w_fin, 0.0)
    offset = np.where(curv > 1e-9, 0.5 * (wl - wr) / np.where(curv > 1e-9, curv, 1.0), 0.0)
    offset = np.clip(offset, -0.5, 0.5)
    w_ref = w_min - 0.25 * curv * offset**2
    radius_all = 0.5 * w_ref
    su = slope_up[m, rows]
    sd = slope_dn[m, rows]
    err = 0.5 * np.hypot(noise / su, noise / sd)
    err_all = np.hypot(err, err_floor)

    r_px = np.asarray(radii, dtype=np.float64)
    gap = radius_all**2 * 0.5 * (1.0 / r_px[0] + 1.0 / r_px[1])
    limit = none_up[m, rows] | none_dn[m, rows]
    if not allow_coarse:
        limit |= coarse_up[m, rows] | coarse_dn[m, rows]
    # At the edge: a column that leaves the frame might be narrower than
    # the narrowest column measured in full.
    at_edge = bound <= w_min

    measured = ~nothing & ~before & ~at_edge & np.isfinite(w_min) & ~limit
    status[nothing] = NOT_FOUND
    status[~nothing & before] = BEFORE_CONTACT
    status[~nothing & ~before & at_edge] = AT_EDGE
    status[~nothing & ~before & ~at_edge & ~measured] = BAND_LIMIT
    status[measured & (gap < min_gap)] = UNRESOLVED
    radius[measured] = radius_all[measured]
    radius_err[measured] = err_all[measured]
    s_neck[measured] = band.s[m[measured]] + offset[measured] * s_step
    base = band.origin[None, :] + band.axis[None, :] * s_neck[:, None]
    up_m, down_m = up[m, rows], down[m, rows]
    edges[:, 0] = np.where(measured[:, None], base + band.normal * up_m[:, None], np.nan)
    edges[:, 1] = np.where(measured[:, None], base - band.normal * down_m[:, None], np.nan)
    return NeckResult(radius, radius_err, s_neck, edges, status, gap_width)


def measure_necks(
    frames,
    pair,
    *,
    illumination,
    dark: float,
    noise: float,
    blur: float,
    level: float = 0.5,
    gap_blurs: float = 3.0,
    cache: dict | None = None,
    hint: float | None = None,
) -> NeckResult:
    """Neck radius in each frame of a chunk, looking only at a band around the neck.

    The chunk's first and last frames are looked at first, roughly (every
    2 px), on a band as wide as the smaller drop; the frames are then sampled
    on the line of centres and, across it, only between the two neck radii
    found, with a margin of 4 px, every pixel, over a few px of the axis
    around the neck found. Frames whose edge falls outside the dense rows,
    whose bridge does not fit, or whose narrowest column is at the band's
    end, are measured again on the full band. Chunks are independent of each
    other, so they can be measured in parallel.

    Parameters
    ----------
    frames : (K, M, N) ndarray
        Raw frames.
    pair : DropPair
        The drops, from :func:`find_drop_pair`.
    illumination : (M, N) ndarray
        Backlight model (see :func:`fit_illumination`).
    dark : float
        Grey level of the drops' dark rim.
    noise : float
        Transmission noise on the background.
    blur : float
        Edge blur sigma (px), from :func:`edge_blur`.
    level : float, optional
        As for :func:`neck_from_band`.
    gap_blurs : float, optional
        The neck counts as resolved once the gap beside it is this many blur
        sigmas wide (``min_gap = gap_blurs * blur``).
    cache : dict, optional
        Keeps bands and their illumination between calls (pass the same
        dict for every chunk of one recording); bands are sized in steps of
        4 px so that most chunks reuse one.
    hint : float, optional
        The neck radius (px) just before the chunk, when known (the previous
        chunk's last one); it saves a look at the chunk's first frame. The
        result does not depend on it: every band samples the same grid, and
        frames whose edge falls outside the dense rows are measured again.

    Returns
    -------
    NeckResult
    """
    frames = np.asarray(frames)
    if frames.ndim != 3:
        raise ValueError(f"frames must be (K, M, N), got shape {frames.shape}")
    shape = frames.shape[1:]
    r_small = float(min(pair.radii))
    full_s = 0.25 * r_small + 6.0
    full_u = 1.1 * r_small + 4.0
    illum = illumination[None]
    cache = {} if cache is None else cache

    def band_for(s_centre, s_half, u_lo, u_hi, step, sparse=None):
        """A band (cached): the axis, and rows from u_lo to u_hi every pixel
        (and every `sparse` px below u_lo, if given); the axis alone if
        `u_hi` is 0."""
        lo, hi = 4 * int(max(u_lo, 0.0) // 4), 4 * math.ceil(u_hi / 4.0)
        key = (shape, round(s_centre / 2.0), math.ceil(s_half / 4.0), lo, hi, step, sparse)
        if key not in cache:
            inner = np.arange(0.0, lo, sparse) if sparse else np.zeros(1)
            u_values = np.concatenate([inner, np.arange(lo, hi + 1.0)]) if hi > 0 else inner
            band = make_band(
                shape,
                pair.contact_point,
                pair.axis,
                s_centre=2.0 * key[1],
                s_half=4.0 * key[2],
                u_half=hi,
                s_step=step,
                u_values=np.unique(u_values),
            )
            span = np.maximum(_sample_block(illum, band) - np.float32(dark), 1e-6)
            cache[key] = (band, 1.0 / span)
        return cache[key]

    def run(sub, s_centre, s_half, u_lo, u_hi, step, *, sparse=None, rough=False):
        band, inv_span = band_for(s_centre, s_half, u_lo, u_hi, step, sparse)
        result = neck_from_band(
            _band_transmission(sub, band, dark, inv_span),
            band,
            noise=noise,
            radii=pair.radii,
            level=level,
            min_gap=gap_blurs * blur,
            allow_coarse=rough,
            with_gap=False,  # measured once below, on a fixed stretch of the axis
        )
        ends = np.isin(result.s_neck, (band.s[0], band.s[-1]))
        return result, ends

    step = 0.5 if r_small < 80 else 1.0
    # A rough look (every 2 px) at the chunk's last frame, and at its first
    # unless the caller knows the neck there, bounds the neck in the chunk.
    probe_frames = frames[-1:] if hint is not None else frames[[0, -1]]
    probe, _ = run(probe_frames, 0.0, full_s, full_u, full_u, 2.0, sparse=2.0, rough=True)
    if np.isfinite(probe.radius[-1]):
        if hint is not None:
            r_first = hint
        else:
            r_first = probe.radius[0] if np.isfinite(probe.radius[0]) else 0.0
        r_last, s_last = float(probe.radius[-1]), float(probe.s_neck[-1])
        # Margins: the neck moves along the axis by a few px per chunk at most
        # (unequal drops), and the rough look is within a px of the radius;
        # a frame whose neck falls outside is measured again on the full band.
        s_half = min(0.05 * r_last + 4.0, full_s)
        u_lo = min(r_first, r_last) - 4.0
        u_hi = min(1.03 * max(r_first, r_last) + 4.0, full_u)
        result, ends = run(frames, s_last, s_half, u_lo, u_hi, step)
    else:
        result, ends = run(frames, 0.0, full_s, 0.0, full_u, step)
        ends[:] = False
    redo = (result.status == BAND_LIMIT) | ends
    if redo.any():
        again, _ = run(frames[redo], 0.0, full_s, 0.0, full_u, step)
        for name in ("radius", "radius_err", "s_neck", "edges", "status", "gap"):
            getattr(result, name)[redo] = getattr(again, name)
    # The gap on a fixed stretch of the axis, the same for every chunk.
    axis_band, inv_span = band_for(0.0, full_s, 0.0, 0.0, step)
    on_axis = _band_transmission(frames, axis_band, dark, inv_span)[:, 0]
    result.gap[:] = gap_on_axis(on_axis, axis_band.valid[0], step)
    status = result.status
    status[status == BAND_LIMIT] = NOT_FOUND
    return result
