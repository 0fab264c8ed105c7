"""The neck: half the narrowest width of the bridge, across the line of centres.

Only a band around the contact point is looked at. The band is a grid of
sample points ``origin + s * axis + u * normal``: ``s`` runs along the line of
centres, ``u`` across it (see :mod:`dropkin.vision._band`). Frames are
sampled on the grid by bilinear interpolation, a block of frames at a time,
turned into transmission, and
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

from ._band import Band, _band_transmission, _sample_block, make_band

__all__ = [
    "STATUS_NAMES",
    "OK",
    "BEFORE_CONTACT",
    "UNRESOLVED",
    "NOT_FOUND",
    "AT_EDGE",
    "NeckResult",
    "neck_from_band",
]

#: Per-frame status, as written in radius.csv; the codes index this tuple.
STATUS_NAMES = ("ok", "before-contact", "unresolved", "not-found", "at-edge")
OK, BEFORE_CONTACT, UNRESOLVED, NOT_FOUND, AT_EDGE = range(5)
#: Internal: the bridge is wider than the band (the caller widens the band).
BAND_LIMIT = 5


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
