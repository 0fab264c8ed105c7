"""Side view: the contact points of a spreading drop in every frame of a chunk.

The outline is found near the substrate line in a thin strip (see
:mod:`dropkin.vision._strip`); on each side a circle is fitted to it and
extrapolated down to the line (see :mod:`dropkin.vision._local_circle`); the
drop axis tells contact from a gap (see :mod:`dropkin.vision._side_axis`).
Used through :func:`dropkin.vision.measure_contact_lines`.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ..status import AT_EDGE, BEFORE_CONTACT, NOT_FOUND, OK, UNRESOLVED
from ._band import BAND_LIMIT
from ._local_circle import angle_at, contact_points, local_circles, wedge_height
from ._side_axis import axis_contact
from ._strip import _take, column_crossings, cut_strip, edge_levels, row_crossings
from ._substrate import SubstrateLine

__all__ = ["SideChunk", "measure_side"]


@dataclass(frozen=True)
class SideChunk:
    """Side-view measurements of a chunk of frames (pixels), from :func:`measure_side`.

    Attributes
    ----------
    radius : (K,) ndarray
        Contact radius (px): half the distance between the two contact
        points; NaN where there is no measurement.
    radius_err : (K,) ndarray
        Its standard uncertainty (px), at least 0.1 px.
    edges : (K, 2, 2) ndarray
        The left and right contact points (row, col) on the substrate line.
    status : (K,) ndarray of int8
        Codes into :data:`dropkin.status.STATUSES`, or ``BAND_LIMIT`` where
        the drop reaches an end of a strip narrower than the frame (see
        :mod:`dropkin.vision._band`).
    gap : (K,) ndarray
        The gap (px) between the drop and the substrate on the axis (see
        :mod:`dropkin.vision._side_axis`).
    angles : (K, 2) ndarray
        Apparent contact angle (degrees, inside the liquid) at the left and
        right contact points; NaN where there is no measurement.
    wedge : (K, 2) ndarray
        Height (px) of the air wedge beside the left and right contact
        points, at the wedge distance beyond them; infinite where open.
    extent : (K, 2) ndarray
        Outermost outline columns found along the rows of the fit window on
        the left and right; NaN if none.
    limit : (K, 2) ndarray of bool
        The drop reaches the strip's left or right end in the fit window.
    level_radius : (K, L) ndarray
        The contact radius (px) at each of the other edge levels asked for,
        from the same strip; NaN where the main level has none.
    """

    radius: np.ndarray
    radius_err: np.ndarray
    edges: np.ndarray
    status: np.ndarray
    gap: np.ndarray
    angles: np.ndarray
    wedge: np.ndarray
    extent: np.ndarray
    limit: np.ndarray
    level_radius: np.ndarray


@dataclass(frozen=True)
class _Sides:
    """The two local circles of every frame at the substrate line (internal).

    Attributes
    ----------
    u : (K, 2) ndarray
        Contact points along the line (px from its reference point).
    c_rad : (K, 2) ndarray
        Radii of the circles (NaN where not fitted).
    angles, wedge : (K, 2) ndarray
        As in :class:`SideChunk`, for every frame.
    radius, radius_err : (K,) ndarray
        As in :class:`SideChunk`, for every frame.
    foot_r, foot_c : (K, 2) ndarray
        Row and column of the contact points.
    """

    u: np.ndarray
    c_rad: np.ndarray
    angles: np.ndarray
    wedge: np.ndarray
    radius: np.ndarray
    radius_err: np.ndarray
    foot_r: np.ndarray
    foot_c: np.ndarray


def measure_side(
    frames,
    setup,
    *,
    illumination,
    dark: float,
    noise: float,
    level: float,
    gap_blurs: float,
    wedge_distance: Callable,
    col_range=None,
    levels=(),
) -> SideChunk:
    """Contact points of every frame of a chunk in side view (internal; see
    :func:`dropkin.vision.measure_contact_lines`).

    `wedge_distance` gives, from the contact radii (K,), the distance beyond
    each contact point at which the air wedge is judged; `col_range` is
    (first, stop) of the columns looked at (all if None); `levels` are other
    edge levels at which the contact radius is measured too, on the same strip.
    """
    k, n = frames.shape[0], frames.shape[2]
    sigma = float(setup.blur)
    line = SubstrateLine(float(setup.centre[0]), float(setup.centre[1]), float(setup.tilt))
    strip = cut_strip(frames, illumination, dark, line, sigma, col_range)
    thr_map, bg_left, bg_right = edge_levels(strip, setup, level)
    # Scatter of one point: at least the image noise over the edge's largest
    # slope (the step over sigma sqrt(2 pi)).
    step = np.maximum(np.stack([bg_left, bg_right], axis=1) - float(setup.drop_level), 1e-6)
    floor = noise * sigma * np.sqrt(2 * np.pi) / step
    sides, limits, extent = _sides_at(strip, thr_map, line, setup, wedge_distance, floor, level)
    has_dark, before, gap = axis_contact(
        frames, illumination, dark, line, setup, 0.5 * (bg_left + bg_right), level
    )
    nothing = ~has_dark & ~(np.isfinite(sides.c_rad).any(axis=1))
    c0, c1 = (0, n) if col_range is None else col_range
    at_border = (limits & np.array([c0 == 0, c1 == n])).any(axis=1)
    at_limit = limits.any(axis=1)
    status, measured = _status(sides, nothing, before, at_limit, at_border, n, gap_blurs * sigma)
    radius = np.full(k, np.nan)
    radius_err = np.full(k, np.nan)
    edges = np.full((k, 2, 2), np.nan)
    angles = np.full((k, 2), np.nan)
    radius[measured] = sides.radius[measured]
    radius_err[measured] = sides.radius_err[measured]
    edges[measured, :, 0] = sides.foot_r[measured]
    edges[measured, :, 1] = sides.foot_c[measured]
    angles[measured] = sides.angles[measured]
    others = np.full((k, len(levels)), np.nan)
    for i, other in enumerate(levels):
        thr_other = edge_levels(strip, setup, float(other))[0]
        at_other = _sides_at(strip, thr_other, line, setup, wedge_distance, floor, float(other))[0]
        others[:, i] = np.where(measured, at_other.radius, np.nan)
    return SideChunk(
        radius, radius_err, edges, status, gap, angles, sides.wedge, extent, limits, others
    )


def _sides_at(strip, thr_map, line, setup, wedge_distance, floor, level):
    """The outline's crossings of the edge levels `thr_map` and the circles fitted
    to them: (_Sides, limits, extent) (see :func:`_fit_sides`)."""
    points, limits, extent, inner = row_crossings(strip, thr_map, line)
    points.append(
        column_crossings(
            strip,
            thr_map,
            float(setup.centre[1]),
            inner,
            edge=(float(setup.drop_level), level, float(setup.blur)),
        )
    )
    return _fit_sides(line, points, wedge_distance, floor), limits, extent


def _fit_sides(line: SubstrateLine, points, wedge_distance, floor) -> _Sides:
    """A circle per side through the outline points, and where it meets the line.

    `points` holds (rows, cols, weight) sets as from
    :func:`dropkin.vision._strip.row_crossings`; `floor` (K, 2) is the
    smallest scatter of one point (from the image noise).
    """
    p_row = np.concatenate([p[0] for p in points], axis=1)[:, None, :]
    p_col = np.concatenate([p[1] for p in points], axis=1)[:, None, :]
    weight = np.concatenate([p[2] for p in points], axis=2)
    p_row, p_col = np.broadcast_to(p_row, weight.shape), np.broadcast_to(p_col, weight.shape)
    c_row, c_col, c_rad, rms = local_circles(p_row, p_col, weight)
    p_h = np.where(weight > 0, line.rows(p_col) - p_row, np.inf)
    lowest = np.argmin(p_h, axis=2)
    low_row = _take(p_row, lowest, 2)
    low_col = _take(p_col, lowest, 2)
    with np.errstate(invalid="ignore"):
        u, centre_h, centre_u = contact_points(line, c_row, c_col, c_rad, low_row, low_col)
    angles = np.stack(
        [
            angle_at(u[:, 0], centre_u[:, 0], centre_h[:, 0], 1.0),
            angle_at(u[:, 1], centre_u[:, 1], centre_h[:, 1], -1.0),
        ],
        axis=1,
    )
    radius = 0.5 * (u[:, 1] - u[:, 0])
    distance = wedge_distance(radius)
    wedge = np.stack(
        [
            wedge_height(u[:, 0], centre_u[:, 0], centre_h[:, 0], c_rad[:, 0], -1.0, distance),
            wedge_height(u[:, 1], centre_u[:, 1], centre_h[:, 1], c_rad[:, 1], 1.0, distance),
        ],
        axis=1,
    )
    foot_r, foot_c, radius_err = _contact_error(line, u, p_row, p_col, weight, rms, angles, floor)
    return _Sides(u, c_rad, angles, wedge, radius, radius_err, foot_r, foot_c)


def _contact_error(line: SubstrateLine, u, p_row, p_col, weight, rms, angles, floor):
    """The contact points (row, col) and the contact radius's uncertainty.

    The fit's scatter (the residuals, at least `floor`), carried to the foot
    as for a straight-line extrapolation, then along the line (divided by the
    sine of the angle); at least 0.1 px.
    """
    norm = np.hypot(1.0, line.tilt)
    e_r, e_c = line.tilt / norm, 1.0 / norm
    foot_r = line.row0 + u * e_r
    foot_c = line.col0 + u * e_c
    dist = np.hypot(p_row - foot_r[..., None], p_col - foot_c[..., None])
    cnt = np.maximum((weight > 0).sum(-1), 1)
    mean_d = (weight * dist).sum(-1) / cnt
    spread = np.maximum((weight * (dist - mean_d[..., None]) ** 2).sum(-1), 1e-6)
    point_sd = np.maximum(rms, floor)
    err_n = point_sd * np.sqrt(1.0 / cnt + mean_d**2 / spread)
    sin = np.maximum(np.sin(np.radians(np.nan_to_num(angles, nan=90.0))), 0.1)
    err_u = err_n / sin
    return foot_r, foot_c, np.hypot(0.5 * np.hypot(err_u[:, 0], err_u[:, 1]), 0.1)


def _status(sides: _Sides, nothing, before, at_limit, at_border, n: int, min_wedge: float):
    """Status codes (K,) int8 and the frames measured, in order of precedence.

    A frame whose drop reaches an end of the strip is at the edge if that end
    is the frame's border (`at_border`), else the strip was too narrow
    (``BAND_LIMIT``: the caller measures again on a wider one). A measured
    frame is at the edge if a contact point lies outside the frame, and
    unresolved if the air wedge beside a contact point with an angle above
    90 degrees is lower than `min_wedge`.
    """
    fitted = np.isfinite(sides.c_rad).all(axis=1)
    reached = np.isfinite(sides.u).all(axis=1)  # else the contact is hidden
    measured = ~nothing & ~before & ~at_limit & fitted & reached
    with np.errstate(invalid="ignore"):
        outside = (sides.foot_c.min(axis=1) < 0) | (sides.foot_c.max(axis=1) > n - 1)
        hidden = ((sides.angles > 90.0) & (sides.wedge < min_wedge)).any(axis=1)
    cases = [
        (nothing, NOT_FOUND),
        (before, BEFORE_CONTACT),
        (at_limit & at_border, AT_EDGE),
        (at_limit, BAND_LIMIT),
        (~fitted, NOT_FOUND),
        (~reached, UNRESOLVED),  # the outline does not reach the line: contact hidden
        (outside, AT_EDGE),
        (hidden, UNRESOLVED),
    ]
    status = np.select([c for c, _ in cases], [code for _, code in cases], OK).astype(np.int8)
    return status, measured
