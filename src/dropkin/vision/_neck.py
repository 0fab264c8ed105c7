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

*Contact*: a frame is before contact while some column of the band is
bright on the line of centres (a gap is visible between the drops).

*Resolution*: next to a neck of radius r, two spheres of radii R0 and R1
that touch leave a gap of about ``g = r**2 / 2 * (1/R0 + 1/R1)`` between
their surfaces (the sagitta of each, ``r**2 / (2 R)``, added). While
``g < min_gap`` the notch beside the bridge is too thin for the optics:
blur fills its tip, the half-transmission contour retreats from it, and
the measured width is too large. Such frames are ``unresolved``.

*Blur's shift of the outline*: beside the neck the outline is concave (the
notch's centre of curvature lies in the gap), and blur moves a curved
edge's half-transmission contour towards its centre of curvature, so the
contour found reads the neck large even where it counts as resolved: by
0.45-0.6 px at g = 3 sigma, 0.2 px at 6 sigma, 0.1 px at 10 sigma, decaying
smoothly (measured on two independent renderers, blur sigma 0.7-1.5 px),
which a fit takes for physics. The radius is corrected by the shift worked
out from the contour's measured curvature at the neck (the widths of the
columns around the narrowest) and the measured blur, and ``radius_err``
holds what the correction leaves; see :mod:`dropkin.vision._neck_curvature`.
After it the bias is within 0.1 px from g = 3.5 sigma on
(``tests/vision/test_neck_blur_shift.py`` gives the tables).

:func:`neck_from_band` measures a chunk sampled on one band;
:func:`dropkin.vision.measure_necks` (:mod:`dropkin.vision._neck_chunk`)
chooses the bands.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..status import AT_EDGE, BEFORE_CONTACT, NOT_FOUND, OK, UNRESOLVED
from ._band import BAND_LIMIT, Band
from ._neck_curvature import blur_shift, outline_curvature

__all__ = ["NeckResult", "neck_from_band", "gap_on_axis"]


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
        Codes into :data:`dropkin.status.STATUSES`, or ``BAND_LIMIT``
        (internal, see :mod:`dropkin.vision._band`).
    gap : (K,) ndarray
        Width of the gap between the drops on the line of centres (px): the
        transmission summed along the axis, which blur and pixel averaging
        conserve, so that gaps narrower than a pixel still show. About zero
        (within noise) once the drops touch.
    level_radius : (K, L) ndarray
        The neck radius (px) at each of the other edge levels asked for (L of
        them, in their order; L = 0 if none), on the narrowest column of the
        main level and its neighbours; NaN where the main level has no
        radius or the crossings at that level are not all found.
    """

    radius: np.ndarray
    radius_err: np.ndarray
    s_neck: np.ndarray
    edges: np.ndarray
    status: np.ndarray
    gap: np.ndarray
    level_radius: np.ndarray


@dataclass(frozen=True)
class _Edges:
    """The bridge's edge on one side of the axis, in every column (S, K) (internal).

    Attributes
    ----------
    dist : (S, K) ndarray
        Distance of the edge from the axis (px).
    slope : (S, K) ndarray
        The local slope |dT/du| there.
    none : (S, K) ndarray of bool
        No crossing inside the band.
    left_frame : (S, K) ndarray of bool
        The search left the frame before a crossing.
    coarse : (S, K) ndarray of bool
        The crossing lies between samples more than a pixel apart.
    border : (S,) ndarray
        Distance to the frame border along the search (a lower bound of the
        edge's distance where the search left the frame).
    """

    dist: np.ndarray
    slope: np.ndarray
    none: np.ndarray
    left_frame: np.ndarray
    coarse: np.ndarray
    border: np.ndarray


def _edge_outward(side, valid_side, level, pos) -> _Edges:
    """First crossing of `level` going outward in each column.

    `side` is (H, S, K) with row 0 on the axis (K frames innermost),
    `valid_side` (H, S) marks samples inside the frame and `pos` (H,) holds
    the rows' distances from the axis.
    """
    bright = side >= level
    if not valid_side.all():
        bright &= valid_side[:, :, None]
    j, none, dist, rise, spacing = _first_crossing(side, bright, level, pos)
    outside = ~valid_side
    first_out = np.where(outside.any(axis=0), np.argmax(outside, axis=0), side.shape[0])
    left_frame = np.where(none, first_out[:, None] < side.shape[0], first_out[:, None] < j)
    coarse = spacing > 1.0 + 1e-9
    border = pos[np.maximum(first_out - 1, 0)]
    return _Edges(dist, rise / spacing, none, left_frame, coarse, border)


def _first_crossing(side, bright, level, pos):
    """The first sample of `bright` going outward (row 0, on the axis, never
    counts) and the sub-pixel crossing of `level` before it, linearly
    interpolated: (j, none, dist, rise, spacing), each (S, K) (j at least 1)."""
    bright[0] = False
    j = np.argmax(bright, axis=0)  # (S, K): first bright sample, 0 if none
    none = j == 0
    j = np.maximum(j, 1)
    t_in = np.take_along_axis(side, (j - 1)[None], axis=0)[0]
    t_out = np.take_along_axis(side, j[None], axis=0)[0]
    rise = np.maximum(t_out - t_in, 1e-6)
    spacing = pos[j] - pos[j - 1]
    dist = pos[j - 1] + np.clip((level - t_in) / rise, 0.0, 1.0) * spacing
    return j, none, dist, rise, spacing


def _level_widths(t, valid, c, m, level, pos, allow_coarse):
    """Bridge width (3, K) at another edge level on the columns m - 1, m, m + 1
    of each frame (the main level's narrowest and its neighbours), infinite
    where a crossing is missing, coarse, or the axis is not dark at `level`.

    `t` is the (U, S, K) transmission, `valid` (U, S), `c` the axis row, `pos`
    the rows' distances from the axis on one side.
    """
    n_s, k = t.shape[1], t.shape[2]
    cols = np.clip(m[None, :] + np.arange(-1, 2)[:, None], 0, n_s - 1)  # (3, K)
    frames = np.arange(k)[None, :]
    width = np.zeros((3, k))
    bad = (cols != m[None, :] + np.arange(-1, 2)[:, None]) | ~(t[c][cols, frames] < level)
    for rows in (slice(c, None), slice(c, None, -1)):
        side = t[rows][:, cols, frames]  # (H, 3, K)
        inside = valid[rows][:, cols]
        j, none, dist, _, spacing = _first_crossing(side, (side >= level) & inside, level, pos)
        # The search leaves the frame before the crossing: no edge here.
        left = np.where(inside.all(axis=0), False, np.argmax(~inside, axis=0) < j)
        bad |= none | left
        if not allow_coarse:
            bad |= spacing > 1.0 + 1e-9
        width += dist
    return np.where(bad, np.inf, width)


def _level_radius(t, valid, c, m, levels, pos, allow_coarse, measured):
    """Neck radius (K, L) at each of `levels`: half the width at the parabola's
    vertex through the three columns of :func:`_level_widths` (NaN where the
    main level has no radius or the narrowest column is not measured)."""
    k = t.shape[2]
    out = np.full((k, len(levels)), np.nan)
    rows, middle = np.arange(k), np.ones(k, dtype=np.intp)
    for i, level in enumerate(levels):
        width = _level_widths(t, valid, c, m, float(level), pos, allow_coarse)
        w_min, _, w_ref = _vertex(width, middle, rows)
        out[:, i] = np.where(measured & np.isfinite(w_min), 0.5 * w_ref, np.nan)
    return out


def gap_on_axis(on_axis, valid, s_step: float):
    """Width of the gap between the drops from transmission along the axis.

    Parameters
    ----------
    on_axis : (K, S) ndarray
        Transmission sampled along the line of centres, the contact point
        half-way.
    valid : (S,) ndarray of bool
        Samples inside the frame.
    s_step : float
        Sample spacing (px).

    Returns
    -------
    gap : (K,) ndarray
        The transmission above the drops' own level summed over the middle
        half of the samples, times the spacing: blur and pixel averaging
        conserve it, so gaps narrower than a pixel still show. The drops'
        level is a straight line through the medians of the outer quarters
        (inside the drops): a drop lit unevenly (a bright drop's glow,
        brighter on one side) leaves no trend in the sum, and the middle half
        alone keeps the level's remaining wanderings out of it. NaN without
        valid samples.
    """
    values = on_axis[:, valid]
    n = values.shape[1]
    if not n:
        return np.full(on_axis.shape[0], np.nan)
    quarter = max(n // 4, 1)
    left = np.median(values[:, :quarter], axis=1, keepdims=True)
    right = np.median(values[:, -quarter:], axis=1, keepdims=True)
    # The line through the two medians, each at the middle of its quarter.
    x_left, x_right = (quarter - 1) / 2.0, n - 1 - (quarter - 1) / 2.0
    along = (np.arange(n)[None, :] - x_left) / max(x_right - x_left, 1e-9)
    above = np.minimum(values - (left + (right - left) * along), 1.0)
    middle = slice(quarter, n - quarter) if n > 2 * quarter else slice(0, n)
    return above[:, middle].sum(axis=1) * s_step


def _widths(up: _Edges, down: _Edges, on_axis_dark, reach: float):
    """Bridge width in every column (S, K), infinite where not measured, and
    the narrowest width (K,) that a column leaving the frame may still have.

    `reach` is how far a side without a crossing reaches at least.
    """
    # Columns whose bridge reaches past the frame border: their width is
    # only known to exceed the distance to the border.
    left = (up.left_frame | down.left_frame) & on_axis_dark
    bound = np.where(
        up.left_frame, up.border[:, None], np.where(up.none, reach, up.dist)
    ) + np.where(down.left_frame, down.border[:, None], np.where(down.none, reach, down.dist))
    bound = np.where(left, bound, np.inf).min(axis=0)
    width = up.dist + down.dist
    bad_col = up.none | down.none | ~on_axis_dark | left
    return np.where(bad_col, np.inf, width), bound


def _vertex(width, m, rows):
    """Parabola through the narrowest column `m` and its neighbours (sub-sample in s).

    Returns the narrowest column's width, the vertex's offset from it (in
    samples, within one half) and the width at the vertex, each (K,).
    """
    n_s = width.shape[0]
    w_min = width[m, rows]
    ml, mr = np.clip(m - 1, 0, n_s - 1), np.clip(m + 1, 0, n_s - 1)
    wl, wr = width[ml, rows], width[mr, rows]
    interior = (m > 0) & (m < n_s - 1) & np.isfinite(wl) & np.isfinite(wr) & np.isfinite(w_min)
    wl, wr = np.where(interior, wl, 0.0), np.where(interior, wr, 0.0)
    w_fin = np.where(interior, w_min, 0.0)
    curv = np.where(interior, wl + wr - 2 * w_fin, 0.0)
    offset = np.where(curv > 1e-9, 0.5 * (wl - wr) / np.where(curv > 1e-9, curv, 1.0), 0.0)
    offset = np.clip(offset, -0.5, 0.5)
    return w_min, offset, w_min - 0.25 * curv * offset**2


def _status(nothing, before, at_edge, measured, unresolved):
    """Status codes (K,) int8 from the per-frame findings, in order of precedence."""
    status = np.full(len(nothing), OK, dtype=np.int8)
    status[nothing] = NOT_FOUND
    status[~nothing & before] = BEFORE_CONTACT
    status[~nothing & ~before & at_edge] = AT_EDGE
    status[~nothing & ~before & ~at_edge & ~measured] = BAND_LIMIT
    status[measured & unresolved] = UNRESOLVED
    return status


def _neck_edges(band: Band, s_neck, up, down, measured):
    """The two neck edge points (K, 2, 2) (row, col), NaN where not measured."""
    edges = np.full((len(s_neck), 2, 2), np.nan)
    base = band.origin[None, :] + band.axis[None, :] * s_neck[:, None]
    edges[:, 0] = np.where(measured[:, None], base + band.normal * up[:, None], np.nan)
    edges[:, 1] = np.where(measured[:, None], base - band.normal * down[:, None], np.nan)
    return edges


def neck_from_band(
    trans,
    band: Band,
    *,
    noise: float,
    radii,
    blur: float = 0.0,
    level: float = 0.5,
    min_gap: float = 1.0,
    err_floor: float = 0.1,
    allow_coarse: bool = False,
    with_gap: bool = True,
    levels=(),
) -> NeckResult:
    # Over 80 lines only by its numpydoc docstring; the body is about 40 lines.
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
    blur : float, optional
        The edges' blur sigma (px; see :func:`edge_blur`): the radius is
        corrected for the outward shift that blur gives the concave outline
        beside the neck (:mod:`dropkin.vision._neck_curvature`); 0 leaves
        the half-transmission contour as it is.
    level : float, optional
        Transmission of the outline.
    min_gap : float, optional
        Smallest gap (px) between the drop surfaces beside the neck that the
        optics resolve; see the module's notes. :func:`measure_necks` sets it
        to three times the edges' blur (see :func:`edge_blur`).
    err_floor : float, optional
        Uncertainty floor (px) for interpolation error.
    allow_coarse : bool, optional
        Accept edges found between samples more than a pixel apart (for a
        quick, rough look); otherwise such frames need a denser band.
    with_gap : bool, optional
        Measure the gap on the axis (``gap`` is NaN otherwise); callers that
        measure it on a band of their own skip it.
    levels : sequence of float, optional
        Other edge levels at which the neck is measured too, on the same
        samples (see ``level_radius`` in :class:`NeckResult`).

    Returns
    -------
    NeckResult
    """
    trans = np.asarray(trans, dtype=np.float32)
    k, n_u, n_s = trans.shape
    # Work on (U, S, K), frames innermost: how sample_band delivers them (a
    # view then), and what makes the per-frame steps below contiguous.
    t = np.ascontiguousarray(trans.transpose(1, 2, 0))
    c = n_u // 2
    s_step = float(band.s[1] - band.s[0]) if n_s > 1 else 1.0
    gap_width = gap_on_axis(t[c].T, band.valid[c], s_step) if with_gap else np.full(k, np.nan)
    on_axis_dark = t[c] < level
    before = (~on_axis_dark & band.valid[c][:, None]).any(axis=0)
    # No drop in the band at all (every other sample is enough to tell).
    nothing = ~((t[::2, ::2] < level) & band.valid[::2, ::2, None]).any(axis=(0, 1))
    up = _edge_outward(t[c:], band.valid[c:], level, band.u[c:])
    down = _edge_outward(t[c::-1], band.valid[c::-1], level, band.u[c:])
    width, bound = _widths(up, down, on_axis_dark, float(band.u[-1]))
    m, rows = np.argmin(width, axis=0), np.arange(k)
    w_min, offset, w_ref = _vertex(width, m, rows)
    err = 0.5 * np.hypot(noise / up.slope[m, rows], noise / down.slope[m, rows])
    kappa, kappa_err = outline_curvature(width, m, s_step, width_err=2.0 * err)
    shift, shift_err = blur_shift(kappa, blur, kappa_err)
    radius_all = 0.5 * w_ref - shift
    r_px = np.asarray(radii, dtype=np.float64)
    gap = radius_all**2 * 0.5 * (1.0 / r_px[0] + 1.0 / r_px[1])
    limit = up.none[m, rows] | down.none[m, rows]
    if not allow_coarse:
        limit |= up.coarse[m, rows] | down.coarse[m, rows]
    # At the edge: a column that leaves the frame might be narrower than
    # the narrowest column measured in full.
    at_edge = bound <= w_min
    measured = ~nothing & ~before & ~at_edge & np.isfinite(w_min) & ~limit
    status = _status(nothing, before, at_edge, measured, gap < min_gap)
    radius = np.full(k, np.nan)
    radius_err = np.full(k, np.nan)
    s_neck = np.full(k, np.nan)
    radius[measured] = radius_all[measured]
    radius_err[measured] = np.sqrt(err**2 + err_floor**2 + shift_err**2)[measured]
    s_neck[measured] = band.s[m[measured]] + offset[measured] * s_step
    edges = _neck_edges(band, s_neck, up.dist[m, rows], down.dist[m, rows], measured)
    others = _level_radius(t, band.valid, c, m, levels, band.u[c:], allow_coarse, measured)
    others -= shift[:, None]  # the same shift at every level, to first order
    return NeckResult(radius, radius_err, s_neck, edges, status, gap_width, others)
