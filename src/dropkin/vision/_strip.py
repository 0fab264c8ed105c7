"""Side view: the strip just above the substrate line, and the outline's crossings in it.

Every frame of a chunk is turned into transmission over a thin strip above the
substrate line. The edge level is set per row from the background at the
strip's two ends; the outline is found at sub-pixel positions as the crossings
of that level along rows (from the strip's ends inward) and up columns (from
the lowest row of the fit window), kept only at heights inside the fit window
(see :func:`fit_window`) and where the edge runs more across the search than
along it.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import special

from ._silhouette import light_span
from ._substrate import SubstrateLine

__all__ = [
    "Strip",
    "fit_window",
    "cut_strip",
    "edge_levels",
    "row_crossings",
    "column_crossings",
    "first_dark_inward",
    "first_change_upward",
    "probit_rise",
]

#: Columns at each end of the strip that give the background level.
_ENDS = 4


def fit_window(blur: float) -> tuple[float, float]:
    """Heights above the line (px) of the outline points used near the contact line.

    From ``low`` = 2.5 blur sigmas (at least 1 px) plus half a pixel, where
    the blurred band pulls the edge level by less than 1 % of the
    drop-to-background step, up to ``low`` plus the larger of 16 px and six
    sigmas. (A window of 8 px gave twice the radius scatter and three times
    the angle scatter on the synthetic recordings of
    ``tests/vision/test_spreading.py``: the local circle's curvature is
    poorly fixed by a short arc.)
    """
    low = max(2.5 * blur, 1.0) + 0.5
    return low, low + max(16.0, 6.0 * blur)


@dataclass(frozen=True)
class Strip:
    """The frames' transmission in a thin strip above the substrate line.

    Attributes
    ----------
    trans : (K, H, W) ndarray of float32
        Transmission of the strip's pixels in each frame.
    rows : (H,) ndarray of int
        The strip's rows in the frame.
    cols : (W,) ndarray of int
        The strip's columns in the frame.
    r0, c0 : int
        The frame row and column of the strip's first sample.
    line_rows : (W,) ndarray
        Row of the substrate line in each column.
    heights : (H, W) ndarray
        Height of each sample above the line (px).
    low, high : float
        Heights of the fit window (see :func:`fit_window`).
    """

    trans: np.ndarray
    rows: np.ndarray
    cols: np.ndarray
    r0: int
    c0: int
    line_rows: np.ndarray
    heights: np.ndarray
    low: float
    high: float

    @property
    def window(self) -> np.ndarray:
        """(H, W) samples inside the fit window."""
        return (self.heights >= self.low) & (self.heights <= self.high)


def cut_strip(frames, illumination, dark: float, line: SubstrateLine, blur: float, col_range):
    """The strip from a little above the fit window down to the line (see :class:`Strip`).

    `col_range` is (first, stop) of the columns, or None for all of them.
    """
    k, m, n = frames.shape
    low, high = fit_window(blur)
    c0, c1 = (0, n) if col_range is None else col_range
    cols = np.arange(c0, c1)
    line_rows = line.rows(cols)
    r0 = max(int(np.floor(line_rows.min() - high - 3)), 0)
    r1 = min(int(np.ceil(line_rows.max())) + 2, m)
    rows = np.arange(r0, r1)
    trans = frames[:, r0:r1, c0:c1].astype(np.float32)
    ill = np.asarray(illumination[r0:r1, c0:c1], dtype=np.float32)
    d32 = np.float32(dark)
    trans = (trans - d32) / light_span(ill, dark)
    heights = line_rows[None, :] - rows[:, None]  # (H, W)
    return Strip(trans, rows, cols, r0, c0, line_rows, heights, low, high)


def edge_levels(strip: Strip, setup, level: float):
    """Edge level of every sample (K, H, W), and the background at the strip's
    left and right ends (K,) each.

    Row by row, the background at the two ends, interpolated across: the
    backlight model may be off by a few per cent near the substrate.
    """
    trans, window = strip.trans, strip.window
    t_drop = float(setup.drop_level)
    floor = t_drop + 0.5 * (setup.background_level - t_drop)
    bg_left = _end_level(trans[:, :, :_ENDS], window[:, :_ENDS], setup.background_level, floor)
    bg_right = _end_level(trans[:, :, -_ENDS:], window[:, -_ENDS:], setup.background_level, floor)
    row_left = _row_levels(trans[:, :, :_ENDS], bg_left, floor)
    row_right = _row_levels(trans[:, :, -_ENDS:], bg_right, floor)
    frac = np.linspace(0.0, 1.0, len(strip.cols), dtype=np.float32)
    thr_map = t_drop + level * (
        row_left[:, :, None] * (1 - frac) + row_right[:, :, None] * frac - t_drop
    )
    return thr_map, bg_left, bg_right


def row_crossings(strip: Strip, thr_map, line: SubstrateLine):
    """Outline points along the rows, from the strip's two ends inward.

    Returns
    -------
    points : list of (rows, cols, weight)
        Per end: rows and columns (K, H) of the crossings, and their weights
        (K, 2, H) for the left and right circles (1 where used, else 0).
    limits : (K, 2) ndarray of bool
        A row of the fit window is dark at the strip's left or right end.
    extent, inner : (K, 2) ndarray
        The outermost and innermost crossing columns in the fit window on
        each side; NaN if none.
    """
    trans, rows, low, high = strip.trans, strip.rows, strip.low, strip.high
    k = len(trans)
    exclude = strip.heights < low - 1.0
    h_idx = np.arange(len(rows))
    points = []
    limits = np.zeros((k, 2), dtype=bool)
    extent = np.full((k, 2), np.nan)
    inner = np.full((k, 2), np.nan)
    for side in (0, 1):
        pos, limit = first_dark_inward(trans, thr_map, exclude, from_right=bool(side))
        col = strip.c0 + pos
        y = line.rows(col) - rows[None, :]
        inside = (y >= low) & (y <= high)
        limits[:, side] = (limit & strip.window.any(axis=1)[None, :]).any(axis=1)
        jn = np.rint(np.nan_to_num(pos)).astype(np.intp)
        gr, gc = _slopes(trans, np.broadcast_to(h_idx[None, :], jn.shape), jn)
        use = inside & (gc >= 0.5 * gr)
        extent[:, side] = _extreme(np.where(inside, col, np.nan), side)
        inner[:, side] = _extreme(np.where(inside, col, np.nan), 1 - side)
        w = np.zeros((k, 2, len(rows)))
        w[:, side] = use
        row_pts = np.broadcast_to(rows[None, :], (k, len(rows))).astype(np.float64)
        points.append((row_pts, np.where(use, col, 0.0), w))
    return points, limits, extent, inner


def column_crossings(strip: Strip, thr_map, axis_col: float, inner, *, edge=None):
    """Outline points up the columns, from the lowest row of the fit window.

    Only columns outward of the innermost outline point found along the rows
    (`inner`, from :func:`row_crossings`) are used: nearer the axis a
    crossing belongs to something inside the drop (its bright spot), not to
    the outline near the contact line.

    `edge`, if given, is ``(drop_level, level, blur)``: each crossing is then
    placed by :func:`probit_rise` rather than by linear interpolation.

    Returns
    -------
    rows, cols : (K, W) ndarray
        The crossings.
    weight : (K, 2, W) ndarray
        1 where a crossing is used for the left or right circle, else 0.
    """
    trans, rows, cols, low, high = strip.trans, strip.rows, strip.cols, strip.low, strip.high
    k = len(trans)
    start = np.floor(strip.line_rows - low).astype(np.intp) - strip.r0  # (W,) strip row index
    steps = int(np.ceil(high - low)) + 2
    ridx = start[None, :] - np.arange(steps)[:, None]
    valid_col = (ridx.min(axis=0) >= 0) & (start < len(rows))
    ridx = np.clip(ridx, 0, len(rows) - 1)
    cidx = np.broadcast_to(np.arange(len(cols))[None, :], ridx.shape)
    column = trans[:, ridx, cidx]  # (K, steps, W)
    left_cols = cols < axis_col
    thr_col = thr_map[:, ridx, cidx]
    rise = first_change_upward(column, thr_col)
    if edge is not None:
        rise = probit_rise(column, thr_col, rise, *edge)
    y = strip.heights[start.clip(0, len(rows) - 1), np.arange(len(cols))][None, :] + rise
    row_c = strip.line_rows[None, :] - y
    inside = (y >= low) & (y <= high) & valid_col[None, :]
    rn = np.rint(np.nan_to_num(row_c)).astype(np.intp) - strip.r0
    gr, gc = _slopes(trans, rn, np.broadcast_to(np.arange(len(cols))[None, :], rn.shape))
    use = inside & (gr >= 0.5 * gc)
    left_ok = ~(cols[None, :] > np.nan_to_num(inner[:, :1], nan=np.inf) + 1.0)
    right_ok = ~(cols[None, :] < np.nan_to_num(inner[:, 1:], nan=-np.inf) - 1.0)
    w = np.zeros((k, 2, len(cols)))
    w[:, 0] = use & left_cols[None, :] & left_ok
    w[:, 1] = use & ~left_cols[None, :] & right_ok
    col_pts = np.broadcast_to(cols[None, :], (k, len(cols))).astype(np.float64)
    return np.where(use, row_c, 0.0), col_pts, w


def probit_rise(column, thr, rise, drop_level: float, level: float, blur: float):
    """Crossings up the columns, interpolated on a blurred step's profile (K, W).

    Linear interpolation between the two samples either side of the edge
    level errs periodically with the edge's place inside its pixel (the
    profile is curved there: up to 0.015 px on a 1 px blur, 0.04 px on 0.5
    px for a pixel-averaged Gaussian step, about twice that in synthetic
    frames with their backlight's small errors), and a circle extrapolated
    to a contact line at a small angle carries that error several times
    over. Across a straight edge blurred by a Gaussian the fraction of the
    way from the drop to the background along a column is ``f = Phi((y - e)
    / s_c)``: ``Phi^-1(f)`` is linear in y whatever the width s_c, so the
    crossing is interpolated linearly in ``Phi^-1(f)`` between the two
    samples. The width this implies is kept between half and three times the
    blur's sigma (`blur`; at least 0.2 px and up to 1 px at least; outside,
    noise or a sample at the profile's foot: the nearer bound is used and
    the two samples' estimates averaged with weights ``exp(-z**2)``, the
    profile's squared slope). `rise` as from :func:`first_change_upward`
    (the lower sample ``floor(rise)``); crossings going from bright to dark
    are left as they are, as are those the model moves by a sample or more.
    """
    k, steps, w = column.shape
    j0 = np.clip(np.floor(np.nan_to_num(rise)).astype(np.intp), 0, steps - 2)
    t_lo = _take(column, j0, 1).astype(np.float64)
    t_hi = _take(column, j0 + 1, 1).astype(np.float64)
    th = 0.5 * (_take(thr, j0, 1) + _take(thr, j0 + 1, 1)).astype(np.float64)
    span = np.maximum((th - drop_level) / level, 1e-6)
    f_lo = np.clip((t_lo - drop_level) / span, 0.005, 0.995)
    f_hi = np.clip((t_hi - drop_level) / span, 0.005, 0.995)
    up = (t_hi > t_lo) & np.isfinite(rise)
    z_lo, z_hi = special.ndtri(f_lo), special.ndtri(f_hi)
    width = np.where(z_hi > z_lo, 1.0 / np.maximum(z_hi - z_lo, 1e-6), blur)
    s_c = np.clip(width, max(0.5 * blur, 0.2), max(3.0 * blur, 1.0))
    z_l = special.ndtri(level)
    y_lo = j0 + s_c * (z_l - z_lo)
    y_hi = j0 + 1 + s_c * (z_l - z_hi)
    w_lo, w_hi = np.exp(-(z_lo**2)), np.exp(-(z_hi**2))
    est = (w_lo * y_lo + w_hi * y_hi) / np.maximum(w_lo + w_hi, 1e-12)
    ok = up & (np.abs(est - rise) < 1.0)
    return np.where(ok, est, rise)


def _take(arr, index, axis):
    """``take_along_axis`` that drops the taken axis."""
    return np.squeeze(np.take_along_axis(arr, np.expand_dims(index, axis), axis=axis), axis)


def first_dark_inward(strip, thr, exclude, *, from_right: bool):
    """Outermost crossing of the edge level in each row, going inward from one end.

    Parameters
    ----------
    strip : (K, H, W) ndarray
        Transmission.
    thr : (K, H, W) ndarray
        Edge level.
    exclude : (H, W) ndarray of bool
        Samples never counted as dark (too close to the substrate).
    from_right : bool
        Search from the last column inward instead of from the first.

    Returns
    -------
    col : (K, H) ndarray
        Sub-pixel column (strip coordinates) of the crossing; NaN if none.
    limit : (K, H) ndarray of bool
        The row is dark at the strip's end (the drop reaches it).
    """
    t = strip[..., ::-1] if from_right else strip
    thr = thr[..., ::-1] if from_right else thr
    ex = exclude[:, ::-1] if from_right else exclude
    dark = (t < thr) & ~ex[None]
    j = np.argmax(dark, axis=2)
    has = dark.any(axis=2)
    limit = has & (j == 0)
    j = np.maximum(j, 1)
    t_dark = _take(t, j, 2)
    t_bright = _take(t, j - 1, 2)
    level = 0.5 * (_take(thr, j, 2) + _take(thr, j - 1, 2))
    frac = np.clip((t_bright - level) / np.maximum(t_bright - t_dark, 1e-6), 0.0, 1.0)
    pos = j - 1 + frac
    if from_right:
        pos = strip.shape[2] - 1 - pos
    return np.where(has & ~limit, pos, np.nan), limit


def first_change_upward(column, thr):
    """First change between dark and bright going up each column, from its lowest sample.

    Parameters
    ----------
    column : (K, H, W) ndarray
        Transmission, sample 0 the lowest in each column, then upward.
    thr : (K, H, W) ndarray
        Edge level.

    Returns
    -------
    rise : (K, W) ndarray
        Sub-sample distance above sample 0 of the crossing; NaN if none.
    """
    dark = column < thr
    change = dark != dark[:, :1, :]
    j = np.argmax(change, axis=1)
    has = change.any(axis=1)
    j = np.maximum(j, 1)
    t_hi = _take(column, j, 1)
    t_lo = _take(column, j - 1, 1)
    level = 0.5 * (_take(thr, j, 1) + _take(thr, j - 1, 1))
    step = t_hi - t_lo
    frac = np.clip((level - t_lo) / np.where(np.abs(step) > 1e-6, step, 1e-6), 0.0, 1.0)
    return np.where(has, j - 1 + frac, np.nan)


def _row_levels(ends, overall, floor):
    """Background per row from a few end columns (K, H); `overall` (K,) where the drop is."""
    level = np.median(ends, axis=2)
    return np.where(level > floor, level, overall[:, None]).astype(np.float32)


def _end_level(strip, window, fallback, floor):
    """Median transmission of the window rows in a few end columns, per frame."""
    values = strip[:, window]
    level = np.median(values, axis=1) if values.shape[1] else np.full(len(strip), fallback)
    return np.where(level > floor, level, fallback)


def _slopes(strip, r, c):
    """|dT/drow| and |dT/dcol| (central differences) at strip samples (K, P) rows `r`, cols `c`."""
    k, h, w = strip.shape
    r = np.clip(r, 1, h - 2)
    c = np.clip(c, 1, w - 2)
    f = np.arange(k)[:, None]
    d_r = 0.5 * np.abs(strip[f, r + 1, c] - strip[f, r - 1, c])
    d_c = 0.5 * np.abs(strip[f, r, c + 1] - strip[f, r, c - 1])
    return d_r, d_c


def _extreme(values, side):
    """Row-wise min (side 0) or max (side 1) ignoring NaN; NaN for an all-NaN row."""
    filled = np.where(np.isnan(values), np.inf if side == 0 else -np.inf, values)
    best = filled.min(axis=1) if side == 0 else filled.max(axis=1)
    return np.where(np.isfinite(best), best, np.nan)
