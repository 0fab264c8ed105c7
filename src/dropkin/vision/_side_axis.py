"""Side view: the drop axis, where contact shows first, and the gap on it.

Along the drop axis (the mean of three columns) a frame is before contact
while a bright gap shows between the drop and the substrate line. The gap's
height is measured as conserved transmission (see :func:`axis_contact`), so
that gaps narrower than a pixel still show.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._silhouette import light_span
from ._substrate import SubstrateLine

__all__ = ["AxisProfile", "axis_profile", "axis_contact"]


@dataclass(frozen=True)
class AxisProfile:
    """Transmission along the drop axis in every frame of a chunk.

    Attributes
    ----------
    trans : (K, L) ndarray
        Transmission (mean of three columns) on the rows `rows`.
    rows : (L,) ndarray of int
        The frame rows, from above the drop down past the substrate line.
    line_row : float
        Row of the substrate line on the axis.
    ordered : (K, A) ndarray
        The samples above the line, from the line upward.
    heights : (A,) ndarray
        Their heights above the line (px).
    thr : (K,) ndarray
        Edge level in each frame.
    first_dark : (K,) ndarray of int
        Index in `ordered` of the first sample darker than the edge level
        (0 if none).
    has_dark : (K,) ndarray of bool
        Some sample above the line is darker than the edge level.
    """

    trans: np.ndarray
    rows: np.ndarray
    line_row: float
    ordered: np.ndarray
    heights: np.ndarray
    thr: np.ndarray
    first_dark: np.ndarray
    has_dark: np.ndarray


def axis_profile(frames, illumination, dark, line: SubstrateLine, axis_col, up, down, thr):
    """The transmission along the axis from `up` px above the line to `down` below it.

    `thr` (K,) is the edge level of each frame.
    """
    k, m, n = frames.shape
    centre = int(np.clip(np.rint(axis_col), 1, n - 2))
    cols = np.arange(centre - 1, centre + 2)
    line_row = float(line.rows(centre))
    r0 = int(max(np.floor(line_row - up), 0))
    r1 = int(min(np.ceil(line_row + down) + 1, m))
    rows = np.arange(r0, r1)
    block = frames[:, r0:r1, cols[0] : cols[-1] + 1].astype(np.float32)
    ill = np.asarray(illumination[r0:r1, cols[0] : cols[-1] + 1], dtype=np.float32)
    trans = (block - np.float32(dark)) / light_span(ill, dark)
    trans = trans.mean(axis=2)
    above = line_row - rows >= 0.25
    ordered = trans[:, above][:, ::-1]  # from the line upward
    dark_ax = ordered < thr[:, None]
    first_dark = np.argmax(dark_ax, axis=1)
    has_dark = dark_ax.any(axis=1)
    heights = (line_row - rows[above])[::-1]
    return AxisProfile(trans, rows, line_row, ordered, heights, thr, first_dark, has_dark)


def axis_contact(frames, illumination, dark, line: SubstrateLine, setup, background, level):
    """Whether each frame shows the drop on the axis, a gap under it, and the gap (px).

    Parameters
    ----------
    frames : (K, M, N) ndarray
    illumination : (M, N) ndarray
    dark : float
    line : SubstrateLine
    setup : SpreadingSetup
    background : (K,) ndarray
        Transmission of the background beside the drop in each frame.
    level : float
        Edge level, as a fraction of the way from the drop to the background.

    Returns
    -------
    has_dark, before : (K,) ndarray of bool
        The drop shows on the axis; a bright gap shows below it (before
        contact).
    gap : (K,) ndarray
        See :func:`_axis_gap`.
    """
    sigma = float(setup.blur)
    t_drop = float(setup.drop_level)
    axis_up = 2.0 * setup.drop.radius + 4.0
    l_up = float(min(4.0 * sigma + 6.0, 0.5 * setup.drop.radius))
    # Below the line: past the plate's blurred edge, or into the mirror image
    # (whose top lies as far below the line as the drop's bottom lies above).
    l_dn = l_up + 3.0 * sigma + 2.0 if setup.mirror else 3.0 * sigma + 3.0
    span = np.maximum(background - t_drop, 1e-6)
    thr = t_drop + level * (background - t_drop)
    prof = axis_profile(
        frames, illumination, dark, line, float(setup.centre[1]), axis_up, l_dn + 1.0, thr
    )
    before = prof.has_dark & (prof.first_dark > 0)
    gap = _axis_gap(prof, t_drop, span, setup, l_up, l_dn, sigma)
    return prof.has_dark, before, gap


def _axis_gap(prof: AxisProfile, t_drop, span, setup, l_up, l_dn, sigma):
    """Gap (px) between the drop and the substrate on the axis, as conserved transmission.

    With ``u = (T - T_drop) / (T_bg - T_drop)`` summed over whole rows from a
    row inside the drop to one inside the band (``l_dn`` below the line): an
    opaque plate gives ``sum u = g + (b - s) u_plate`` (b the lower end of
    the rows, s the line), a mirror image ``sum u = g (1 + u_plate)`` (the
    mirror's own gap shows the plate). Blur and pixel averaging move light
    between rows but conserve the sum. The top row is ``l_up`` above the line,
    or lower, two blurs below the end of the drop's first dark run (the
    bright spot may lie above it). When no such row is inside the drop (a wide
    gap) the gap is the height of the drop's lower edge instead (then well
    resolved).
    """
    top_ok, top_h = _top_row(prof, l_up, sigma)
    r_a = np.rint(prof.line_row - np.where(top_ok, top_h, l_up)).astype(np.intp)
    r_b = int(np.rint(prof.line_row + l_dn))
    if prof.rows[-1] < r_b:
        return np.full(len(prof.trans), np.nan)
    gap, bottom_ok = _conserved(prof, r_a, r_b, t_drop, span, setup)
    conserved = np.where(bottom_ok, gap, np.nan)
    gap = np.where(top_ok, conserved, np.where(prof.first_dark > 0, _edge_height(prof), np.nan))
    return np.where(prof.has_dark, gap, np.nan)


def _top_row(prof: AxisProfile, l_up, sigma):
    """Whether the sum can start inside the drop, and the height to start at (K,)."""
    ordered, first_dark, y_axis = prof.ordered, prof.first_dark, prof.heights
    # From the line up: where the first dark run ends.
    dark = ordered < prof.thr[:, None]
    after = np.arange(ordered.shape[1])[None, :] >= first_dark[:, None]
    bright_after = ~dark & after
    run_end = np.where(bright_after.any(axis=1), np.argmax(bright_after, axis=1), ordered.shape[1])
    top_h = np.minimum(l_up, y_axis[np.maximum(run_end - 1, 0)] - (2.0 * sigma + 1.0))
    start_h = y_axis[np.minimum(first_dark, len(y_axis) - 1)]
    top_ok = prof.has_dark & (top_h >= start_h + 2.0 * sigma)
    return top_ok, top_h


def _conserved(prof: AxisProfile, r_a, r_b, t_drop, span, setup):
    """The gap from the summed transmission between rows `r_a` (K,) and `r_b`,
    and whether row `r_b` lies inside the band (or the mirror image) as assumed."""
    k = len(prof.trans)
    prow, line_row = prof.rows, prof.line_row
    u = (prof.trans - t_drop) / span[:, None]
    u_plate = (setup.plate_level - t_drop) / span
    csum = np.concatenate([np.zeros((k, 1)), np.cumsum(u, axis=1)], axis=1)
    ia = np.clip(r_a - prow[0], 0, len(prow) - 1)
    ib = r_b - prow[0]
    total = csum[:, ib + 1] - csum[np.arange(k), ia]
    b = r_b + 0.5
    if setup.mirror:
        return total / (1.0 + u_plate), u[:, ib] < 0.25
    return total - (b - line_row) * u_plate, np.abs(u[:, ib] - u_plate) < 0.25


def _edge_height(prof: AxisProfile):
    """Height of the first dark sample going up, interpolated (K,): the fallback."""
    ordered, y_axis, thr = prof.ordered, prof.heights, prof.thr
    rows_f = np.arange(len(ordered))
    j = np.clip(prof.first_dark, 1, ordered.shape[1] - 1)
    t_hi = ordered[rows_f, j]
    t_lo = ordered[rows_f, j - 1]
    frac = np.clip((t_lo - thr) / np.maximum(t_lo - t_hi, 1e-6), 0.0, 1.0)
    return y_axis[j - 1] + frac * (y_axis[j] - y_axis[j - 1])
