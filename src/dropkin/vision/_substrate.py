"""Side view of a spreading drop: the substrate line and the contact points on it.

The substrate is a band across the bottom of the frame whose top edge is the
substrate surface, a straight line ``row = substrate_row + tilt * (col -
axis_col)``. Heights are measured upward from that line, in pixels.

Near the line the drop's outline is found at sub-pixel positions as the
crossings of the edge level (the fraction `level` of the way from the drop's
dark level to the local background) along rows and along columns of a thin
strip just above the line; only crossings at heights of at least a few blur
sigmas are used, where the blurred band below no longer pulls the outline.
On each side a circle is fitted to these points (a local model of the outline,
three parameters, by linear least squares) and extrapolated down to the line:
its intersection with the line is the contact point, its tangent there gives
the apparent contact angle.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import ndimage
from skimage import measure as skmeasure

from ..errors import MeasurementError
from ._circle import CircleFit, fit_circle
from ._neck import AT_EDGE, BAND_LIMIT, BEFORE_CONTACT, NOT_FOUND, OK, UNRESOLVED

__all__ = [
    "SubstrateLine",
    "find_substrate",
    "substrate_line",
    "drop_above",
    "fit_drop_above",
    "slope_blur",
    "mirror_below",
    "measure_side",
]


@dataclass(frozen=True)
class SubstrateLine:
    """The substrate surface: ``row = row0 + tilt * (col - col0)``.

    Attributes
    ----------
    row0, col0 : float
        A point of the line (row, col).
    tilt : float
        Slope d(row)/d(col).
    """

    row0: float
    col0: float
    tilt: float

    def rows(self, cols):
        """Row of the line at `cols`."""
        return self.row0 + self.tilt * (np.asarray(cols, dtype=np.float64) - self.col0)

    def heights(self, rows, cols):
        """Height of points above the line, along the image's rows (px)."""
        return self.rows(cols) - np.asarray(rows, dtype=np.float64)


def _levels_profile(trans):
    """Row profile of the background-and-plate: a high percentile across the columns."""
    return np.percentile(trans, 75, axis=1)


def find_substrate(trans, *, min_contrast: float = 0.08):
    """The substrate band's top edge in a side view.

    Parameters
    ----------
    trans : (M, N) ndarray
        Transmission frame.
    min_contrast : float, optional
        Smallest step between the background and the band, as a fraction of
        the background level.

    Returns
    -------
    step_row : int
        Row index just above the band's top edge (a first, whole-pixel guess).
    background : float
        Transmission of the background above the band.
    plate : float
        Transmission of the band away from the drop.

    Raises
    ------
    MeasurementError
        If no band edge with enough contrast is found.
    """
    m = trans.shape[0]
    profile = _levels_profile(trans)
    smooth = ndimage.uniform_filter1d(profile, 3, mode="nearest")
    # The largest fall of the profile going down, between blocks of rows.
    width = 4
    above = np.array([smooth[max(i - width, 0) : i + 1].mean() for i in range(m)])
    below = np.array(
        [smooth[i + 1 : i + 1 + width].mean() if i + 1 < m else np.nan for i in range(m)]
    )
    fall = above - below
    fall[: width + 1] = -np.inf
    fall[m - width - 1 :] = -np.inf
    if not np.isfinite(fall).any():
        raise MeasurementError("the frame is too small to show a substrate")
    step = int(np.nanargmax(fall))
    top = float(np.median(profile[max(step - 3 * width, 0) : max(step - width, 1)]))
    bottom = float(np.median(profile[step + width : step + 3 * width + 1]))
    if not (top - bottom > min_contrast * max(abs(top), 1e-6)):
        raise MeasurementError(
            "no substrate found: no band across the frame darker than the background"
            f" (the largest step is {top - bottom:.3g} in transmission; at least"
            f" {min_contrast:g} of the background is needed)"
        )
    return step, top, bottom


def substrate_line(
    trans,
    step: int,
    background: float,
    plate: float,
    drop_cols,
    *,
    axis_col: float,
    half_window: int = 8,
) -> SubstrateLine:
    """Fit the band's top edge, at sub-pixel rows, in the columns away from the drop.

    In each usable column the edge is where the transmission crosses the
    midpoint between the background and the plate (the position of a blurred
    step edge), going down through rows ``step - half_window ..``; a straight
    line is fitted to those rows, with two passes of trimming at three robust
    standard deviations.
    """
    m, n = trans.shape
    r0, r1 = max(step - half_window, 0), min(step + half_window + 1, m)
    block = trans[r0:r1]
    cols = np.nonzero(~drop_cols)[0]
    cols = cols[(cols > 1) & (cols < n - 2)]
    if len(cols) < 6:
        raise MeasurementError("no substrate found: the drop covers the whole width")
    mid = 0.5 * (background + plate)
    sub = block[:, cols]
    below = sub < mid
    j = np.argmax(below, axis=0)
    ok = below.any(axis=0) & (j > 0)
    j = np.maximum(j, 1)
    t_in = sub[j - 1, np.arange(len(cols))]
    t_out = sub[j, np.arange(len(cols))]
    frac = np.clip((t_in - mid) / np.maximum(t_in - t_out, 1e-6), 0.0, 1.0)
    rows = r0 + j - 1 + frac
    cols, rows = cols[ok].astype(np.float64), rows[ok]
    if len(cols) < 6:
        raise MeasurementError("no substrate found: its edge is not seen beside the drop")
    use = np.ones(len(cols), dtype=bool)
    for _ in range(3):
        tilt, icpt = np.polyfit(cols[use] - axis_col, rows[use], 1)
        resid = rows - (icpt + tilt * (cols - axis_col))
        scale = max(1.4826 * float(np.median(np.abs(resid[use]))), 0.05)
        new = np.abs(resid) <= 3 * scale
        if new.sum() < 6 or np.array_equal(new, use):
            break
        use = new
    return SubstrateLine(float(icpt), float(axis_col), float(tilt))


def drop_above(
    trans, line: SubstrateLine, threshold: float, *, clearance: float, min_area: int = 20
):
    """The largest dark region above the substrate line (holes filled).

    Returns a boolean mask of it, or None if there is none.
    """
    m, n = trans.shape
    rows = np.arange(m)[:, None]
    above = line.heights(rows, np.arange(n)[None, :]) > clearance
    mask = (trans < threshold) & above
    mask = ndimage.binary_fill_holes(mask)
    labels, count = ndimage.label(mask)
    if count == 0:
        return None
    sizes = np.bincount(labels.ravel())[1:]
    best = int(np.argmax(sizes))
    if sizes[best] < min_area:
        return None
    return labels == best + 1


def fit_drop_above(
    trans,
    line: SubstrateLine,
    region,
    threshold: float,
    dark: float,
    background: float,
    *,
    clearance: float,
) -> CircleFit:
    """Circle fit to the sub-pixel outline of `region` above the substrate.

    Pixels well inside the region are set dark and pixels well outside set to
    the background, so that only the outline gives contour points (not a
    bright spot inside the drop, nor the band). Points lower than `clearance`
    above the line, or near the frame border, are left out.
    """
    m, n = trans.shape
    inner = ndimage.binary_erosion(region, iterations=3)
    outer = ndimage.binary_dilation(region, iterations=3)
    clean = np.where(outer, trans, background)
    clean[inner] = dark
    contours = skmeasure.find_contours(clean, threshold)
    if not contours:
        raise MeasurementError("no drop outline found above the substrate")
    points = np.concatenate(contours)
    keep = (
        (points[:, 0] > 1.5)
        & (points[:, 0] < m - 2.5)
        & (points[:, 1] > 1.5)
        & (points[:, 1] < n - 2.5)
        & (line.heights(points[:, 0], points[:, 1]) > clearance)
    )
    points = points[keep]
    if len(points) < 8:
        raise MeasurementError("too little of the drop's outline is seen above the substrate")
    return fit_circle(points)


def slope_blur(
    trans, circle: CircleFit, low: float, high: float, *, keep=None, angles: int = 48
) -> float:
    """Edge blur sigma (px) across a circle's outline, from the largest slope.

    As :func:`dropkin.vision.edge_blur`: along radial lines (0.25 px steps,
    bilinear), the largest slope of the transmission scaled to the step from
    `low` to `high` is ``1 / (sigma sqrt(2 pi))`` for a Gaussian-blurred
    step; the median over the lines is used. `keep`, if given, tells from the
    sample points (rows, cols) whether a line may be used.
    """
    m, n = trans.shape
    offsets = np.arange(-4.0, 4.0001, 0.25)
    slopes = []
    span = max(high - low, 1e-6)
    for theta in np.linspace(0, 2 * np.pi, angles, endpoint=False):
        direction = np.array([np.sin(theta), np.cos(theta)])
        pts = circle.centre[:, None] + direction[:, None] * (circle.radius + offsets)
        if pts[0].min() < 1 or pts[0].max() > m - 2 or pts[1].min() < 1 or pts[1].max() > n - 2:
            continue
        if keep is not None and not keep(pts[0], pts[1]):
            continue
        profile = ndimage.map_coordinates(trans, pts, order=1) / span
        slopes.append(np.max(np.diff(profile)) / 0.25)
    if not slopes:
        return 1.0
    return max(1.0 / (np.sqrt(2 * np.pi) * max(float(np.median(slopes)), 1e-6)), 0.3)


def mirror_below(
    trans, line: SubstrateLine, circle: CircleFit, plate: float, dark: float, *, blur: float
) -> bool:
    """Whether the band shows the drop's mirror image below the line.

    Compares the band under the drop (from a few blurs below the mirror
    image's top down to half a drop radius) with the band away from it: a
    mirror image is about as dark as the drop, an opaque plate is not darker
    under the drop than beside it.
    """
    m, n = trans.shape
    cr, cc = circle.centre
    radius = circle.radius
    line_row = float(line.rows(cc))
    gap = max(line_row - (cr + radius), 0.0)
    r0 = int(np.ceil(line_row + gap + 2 * blur + 1))
    r1 = int(min(np.ceil(line_row + gap + 0.5 * radius), m))
    c0 = int(max(np.floor(cc - 0.2 * radius), 0))
    c1 = int(min(np.ceil(cc + 0.2 * radius) + 1, n))
    if r1 - r0 < 2 or c1 - c0 < 1:
        return False
    under = float(np.median(trans[r0:r1, c0:c1]))
    return bool(plate - dark > 0.1 and plate - under > 0.5 * (plate - dark))


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


def _normal_matrix(w, a, b, c):
    """Weighted normal matrix of the design columns a, b, c: (..., 3, 3)."""
    cols = (a, b, c)
    out = np.empty((*w.shape[:-1], 3, 3))
    for i in range(3):
        for j in range(i, 3):
            out[..., i, j] = out[..., j, i] = (w * cols[i] * cols[j]).sum(-1)
    out[..., range(3), range(3)] += 1e-9
    return out


def local_circles(rows, cols, weight, *, refine: int = 2):
    """A circle per set of weighted points, by least squares, vectorised.

    Kasa's algebraic fit (linear) in coordinates centred on the points, then
    `refine` Gauss-Newton steps on the orthogonal distances.

    Parameters
    ----------
    rows, cols, weight : (..., P) ndarray
        Points and their weights (0 leaves a point out).

    Returns
    -------
    centre_row, centre_col, radius, rms : (...) ndarray
        NaN where fewer than 4 points carry weight.
    """
    w = np.asarray(weight, dtype=np.float64)
    count = (w > 0).sum(-1)
    wsum = np.maximum(w.sum(-1), 1e-12)
    rows = np.where(w > 0, rows, 0.0)
    cols = np.where(w > 0, cols, 0.0)
    o_r = (w * rows).sum(-1) / wsum
    o_c = (w * cols).sum(-1) / wsum
    y = np.where(w > 0, rows - o_r[..., None], 0.0)
    x = np.where(w > 0, cols - o_c[..., None], 0.0)
    z = x**2 + y**2
    normal = _normal_matrix(w, y, x, np.ones_like(x))
    rhs = np.stack([(w * y * z).sum(-1), (w * x * z).sum(-1), (w * z).sum(-1)], axis=-1)
    sol = np.linalg.solve(normal, rhs[..., None])[..., 0]
    c_y, c_x = 0.5 * sol[..., 0], 0.5 * sol[..., 1]
    radius = np.sqrt(np.maximum(sol[..., 2] + c_y**2 + c_x**2, 1e-12))
    for _ in range(refine):
        dy, dx = y - c_y[..., None], x - c_x[..., None]
        dist = np.maximum(np.hypot(dy, dx), 1e-9)
        resid = dist - radius[..., None]
        j_y, j_x = -dy / dist, -dx / dist
        jtj = _normal_matrix(w, j_y, j_x, -np.ones_like(dist))
        jtr = np.stack(
            [(w * j_y * resid).sum(-1), (w * j_x * resid).sum(-1), -(w * resid).sum(-1)], axis=-1
        )
        delta = np.linalg.solve(jtj, -jtr[..., None])[..., 0]
        c_y, c_x, radius = c_y + delta[..., 0], c_x + delta[..., 1], radius + delta[..., 2]
    dist = np.hypot(y - c_y[..., None], x - c_x[..., None])
    rms = np.sqrt((w * (dist - radius[..., None]) ** 2).sum(-1) / wsum)
    bad = count < 4
    out = [o_r + c_y, o_c + c_x, np.abs(radius), rms]
    return tuple(np.where(bad, np.nan, v) for v in out)


def contact_points(line: SubstrateLine, c_row, c_col, radius, low_row, low_col):
    """Where each local circle meets the substrate line, and the contact angle there.

    Of the two intersections the one nearer the lowest fitted point is taken.

    Returns
    -------
    u : (...) ndarray
        Position along the line (px from ``(row0, col0)``, increasing with
        the column); NaN where the circle does not reach the line.
    centre_height : (...) ndarray
        Height of the circle's centre above the line.
    centre_u : (...) ndarray
        The centre's position along the line.
    """
    norm = np.hypot(1.0, line.tilt)
    e_r, e_c = line.tilt / norm, 1.0 / norm  # along the line
    n_r, n_c = -1.0 / norm, line.tilt / norm  # up, away from the substrate
    q_r, q_c = c_row - line.row0, c_col - line.col0
    centre_u = q_r * e_r + q_c * e_c
    centre_h = q_r * n_r + q_c * n_c
    half = np.sqrt(radius**2 - centre_h**2)  # NaN if the circle misses the line
    low_u = (low_row - line.row0) * e_r + (low_col - line.col0) * e_c
    u = np.where(
        np.abs(low_u - centre_u - half) <= np.abs(low_u - centre_u + half),
        centre_u + half,
        centre_u - half,
    )
    return u, centre_h, centre_u


def angle_at(u, centre_u, centre_h, inward: float):
    """Apparent contact angle (degrees, inside the liquid) of a circle at its foot `u`.

    The outline's tangent at the contact point, taken pointing up, against the
    substrate direction that points into the drop (`inward` = +1 along the
    line on the left side, -1 on the right side).
    """
    # Radius vector from the centre to the foot, in (along, up) components.
    v_u, v_h = u - centre_u, -centre_h
    # Tangent perpendicular to it, pointing up.
    t_u, t_h = -v_h, v_u
    flip = t_h < 0
    t_u, t_h = np.where(flip, -t_u, t_u), np.where(flip, -t_h, t_h)
    return np.degrees(np.arctan2(t_h, inward * t_u))


def wedge_height(u, centre_u, centre_h, radius, outward: float, distance):
    """Height of the circle's lower branch at `distance` beyond the foot `u`, outward.

    Infinite beyond the circle's widest point: no overhang there, the wedge
    is open.
    """
    along = u + outward * distance - centre_u
    inside = radius**2 - along**2
    return np.where(inside > 0, centre_h - np.sqrt(np.abs(inside)), np.inf)


def _axis_profile(frames, illumination, dark, line, axis_col, up, down):
    """Transmission along the drop axis (mean of three columns), rows from the line up.

    Returns the transmission (K, L), the rows (L,) and the line's row there.
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
    trans = (block - np.float32(dark)) / np.maximum(ill - np.float32(dark), 1e-6)
    return trans.mean(axis=2), rows, line_row


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


def measure_side(
    frames, setup, *, illumination, dark, noise, level, gap_blurs, wedge_distance, col_range=None
):
    """Contact points of every frame of a chunk in side view (internal; see
    :func:`dropkin.vision.measure_contact_lines`).

    Returns a dict of arrays: ``radius``, ``radius_err``, ``edges``,
    ``status``, ``gap``, ``angles``, ``wedge`` ((K, 2) wedge heights), and
    ``extent`` ((K, 2) outermost outline columns in the fit window) and
    ``limit`` ((K,) the drop reaches the strip's end).
    """
    k, m, n = frames.shape
    sigma = float(setup.blur)
    line = SubstrateLine(float(setup.centre[0]), float(setup.centre[1]), float(setup.tilt))
    axis_col = float(setup.centre[1])
    low, high = fit_window(sigma)
    c0, c1 = (0, n) if col_range is None else col_range
    cols = np.arange(c0, c1)
    line_rows = line.rows(cols)
    r0 = max(int(np.floor(line_rows.min() - high - 3)), 0)
    r1 = min(int(np.ceil(line_rows.max())) + 2, m)
    rows = np.arange(r0, r1)
    strip = frames[:, r0:r1, c0:c1].astype(np.float32)
    ill = np.asarray(illumination[r0:r1, c0:c1], dtype=np.float32)
    d32 = np.float32(dark)
    strip = (strip - d32) / np.maximum(ill - d32, 1e-6)
    heights = line_rows[None, :] - rows[:, None]  # (H, W)

    # Edge level on each side, from the background at the strip's ends.
    t_drop = float(setup.drop_level)
    floor = t_drop + 0.5 * (setup.background_level - t_drop)
    window = (heights >= low) & (heights <= high)
    ends = 4
    bg_left = _end_level(strip[:, :, :ends], window[:, :ends], setup.background_level, floor)
    bg_right = _end_level(strip[:, :, -ends:], window[:, -ends:], setup.background_level, floor)
    # Row by row, the background at the two ends, interpolated across: the
    # backlight model may be off by a few per cent near the substrate.
    row_left = _row_levels(strip[:, :, :ends], bg_left, floor)
    row_right = _row_levels(strip[:, :, -ends:], bg_right, floor)
    frac = np.linspace(0.0, 1.0, len(cols), dtype=np.float32)
    thr_map = t_drop + level * (
        row_left[:, :, None] * (1 - frac) + row_right[:, :, None] * frac - t_drop
    )

    # Crossings along rows, from the strip's ends inward.
    exclude = heights < low - 1.0
    h_idx = np.arange(len(rows))
    pts_r, pts_c, pts_w = [], [], []
    limits = np.zeros((k, 2), dtype=bool)
    extent = np.full((k, 2), np.nan)
    inner = np.full((k, 2), np.nan)
    for side in (0, 1):
        pos, limit = first_dark_inward(strip, thr_map, exclude, from_right=bool(side))
        col = c0 + pos
        y = line.rows(col) - rows[None, :]
        inside = (y >= low) & (y <= high)
        limits[:, side] = (limit & window.any(axis=1)[None, :]).any(axis=1)
        jn = np.rint(np.nan_to_num(pos)).astype(np.intp)
        gr, gc = _slopes(strip, np.broadcast_to(h_idx[None, :], jn.shape), jn)
        use = inside & (gc >= 0.5 * gr)
        extent[:, side] = _extreme(np.where(inside, col, np.nan), side)
        inner[:, side] = _extreme(np.where(inside, col, np.nan), 1 - side)
        w = np.zeros((k, 2, len(rows)))
        w[:, side] = use
        pts_r.append(np.broadcast_to(rows[None, :], (k, len(rows))).astype(np.float64))
        pts_c.append(np.where(use, col, 0.0))
        pts_w.append(w)

    # Crossings up the columns, from the lowest row of the window.
    start = np.floor(line_rows - low).astype(np.intp) - r0  # (W,) strip row index
    steps = int(np.ceil(high - low)) + 2
    ridx = start[None, :] - np.arange(steps)[:, None]
    valid_col = (ridx.min(axis=0) >= 0) & (start < len(rows))
    ridx = np.clip(ridx, 0, len(rows) - 1)
    cidx = np.broadcast_to(np.arange(len(cols))[None, :], ridx.shape)
    column = strip[:, ridx, cidx]  # (K, steps, W)
    left_cols = cols < axis_col
    rise = first_change_upward(column, thr_map[:, ridx, cidx])
    y = heights[start.clip(0, len(rows) - 1), np.arange(len(cols))][None, :] + rise
    row_c = line_rows[None, :] - y
    inside = (y >= low) & (y <= high) & valid_col[None, :]
    rn = np.rint(np.nan_to_num(row_c)).astype(np.intp) - r0
    gr, gc = _slopes(strip, rn, np.broadcast_to(np.arange(len(cols))[None, :], rn.shape))
    use = inside & (gr >= 0.5 * gc)
    # Only columns outward of the innermost outline point found along the rows:
    # nearer the axis a crossing belongs to something inside the drop (its
    # bright spot), not to the outline near the contact line.
    left_ok = ~(cols[None, :] > np.nan_to_num(inner[:, :1], nan=np.inf) + 1.0)
    right_ok = ~(cols[None, :] < np.nan_to_num(inner[:, 1:], nan=-np.inf) - 1.0)
    w = np.zeros((k, 2, len(cols)))
    w[:, 0] = use & left_cols[None, :] & left_ok
    w[:, 1] = use & ~left_cols[None, :] & right_ok
    pts_r.append(np.where(use, row_c, 0.0))
    pts_c.append(np.broadcast_to(cols[None, :], (k, len(cols))).astype(np.float64))
    pts_w.append(w)

    p_row = np.concatenate(pts_r, axis=1)[:, None, :]
    p_col = np.concatenate(pts_c, axis=1)[:, None, :]
    weight = np.concatenate(pts_w, axis=2)
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
    radius_all = 0.5 * (u[:, 1] - u[:, 0])
    wedge = np.stack(
        [
            wedge_height(
                u[:, 0],
                centre_u[:, 0],
                centre_h[:, 0],
                c_rad[:, 0],
                -1.0,
                wedge_distance(radius_all),
            ),
            wedge_height(
                u[:, 1],
                centre_u[:, 1],
                centre_h[:, 1],
                c_rad[:, 1],
                1.0,
                wedge_distance(radius_all),
            ),
        ],
        axis=1,
    )

    # Uncertainty: the fit's scatter, carried to the foot as for a straight-line
    # extrapolation, then along the line (divided by the sine of the angle).
    norm = np.hypot(1.0, line.tilt)
    e_r, e_c = line.tilt / norm, 1.0 / norm
    foot_r = line.row0 + u * e_r
    foot_c = line.col0 + u * e_c
    dist = np.hypot(p_row - foot_r[..., None], p_col - foot_c[..., None])
    cnt = np.maximum((weight > 0).sum(-1), 1)
    mean_d = (weight * dist).sum(-1) / cnt
    spread = np.maximum((weight * (dist - mean_d[..., None]) ** 2).sum(-1), 1e-6)
    # Scatter of one point: the residuals, at least the image noise over the
    # edge's largest slope (the step over sigma sqrt(2 pi)).
    step = np.maximum(np.stack([bg_left, bg_right], axis=1) - t_drop, 1e-6)
    point_sd = np.maximum(rms, noise * sigma * np.sqrt(2 * np.pi) / step)
    err_n = point_sd * np.sqrt(1.0 / cnt + mean_d**2 / spread)
    sin = np.maximum(np.sin(np.radians(np.nan_to_num(angles, nan=90.0))), 0.1)
    err_u = err_n / sin
    radius_err_all = np.hypot(0.5 * np.hypot(err_u[:, 0], err_u[:, 1]), 0.1)

    # Along the axis: contact, and the gap before it.
    axis_up = 2.0 * setup.drop.radius + 4.0
    l_up = float(min(4.0 * sigma + 6.0, 0.5 * setup.drop.radius))
    # Below the line: past the plate's blurred edge, or into the mirror image
    # (whose top lies as far below the line as the drop's bottom lies above).
    l_dn = l_up + 3.0 * sigma + 2.0 if setup.mirror else 3.0 * sigma + 3.0
    prof, prow, prof_line = _axis_profile(
        frames, illumination, dark, line, axis_col, axis_up, l_dn + 1.0
    )
    bg = 0.5 * (bg_left + bg_right)
    span = np.maximum(bg - t_drop, 1e-6)
    thr_axis = t_drop + level * (bg - t_drop)
    above = prof_line - prow >= 0.25
    ordered = prof[:, above][:, ::-1]  # from the line upward
    dark_ax = ordered < thr_axis[:, None]
    first_dark = np.argmax(dark_ax, axis=1)
    has_dark = dark_ax.any(axis=1)
    before = has_dark & (first_dark > 0)
    y_axis = (prof_line - prow[above])[::-1]
    gap = _axis_gap(
        prof,
        prow,
        prof_line,
        t_drop,
        span,
        setup,
        l_up,
        l_dn,
        has_dark,
        first_dark,
        ordered,
        thr_axis,
        y_axis,
        sigma,
    )

    nothing = ~has_dark & ~(np.isfinite(c_rad).any(axis=1))
    status = np.full(k, OK, dtype=np.int8)
    radius = np.full(k, np.nan)
    radius_err = np.full(k, np.nan)
    edges = np.full((k, 2, 2), np.nan)
    out_angles = np.full((k, 2), np.nan)
    at_border = np.array([c0 == 0, c1 == n])
    for i in range(k):
        if nothing[i]:
            status[i] = NOT_FOUND
        elif before[i]:
            status[i] = BEFORE_CONTACT
        elif limits[i].any():
            # The drop reaches an end of the strip: the frame's border, or the
            # strip was too narrow (the caller measures again on a wider one).
            status[i] = AT_EDGE if (limits[i] & at_border).any() else BAND_LIMIT
        elif not np.all(np.isfinite(c_rad[i])):
            status[i] = NOT_FOUND
        elif not np.all(np.isfinite(u[i])):
            status[i] = UNRESOLVED  # the outline does not reach the line: contact hidden
        else:
            radius[i] = radius_all[i]
            radius_err[i] = radius_err_all[i]
            edges[i, :, 0] = foot_r[i]
            edges[i, :, 1] = foot_c[i]
            out_angles[i] = angles[i]
            if foot_c[i].min() < 0 or foot_c[i].max() > n - 1:
                status[i] = AT_EDGE
            elif np.any((angles[i] > 90.0) & (wedge[i] < gap_blurs * sigma)):
                status[i] = UNRESOLVED
    return {
        "radius": radius,
        "radius_err": radius_err,
        "edges": edges,
        "status": status,
        "gap": gap,
        "angles": out_angles,
        "wedge": wedge,
        "extent": extent,
        "limit": limits,
    }


def _extreme(values, side):
    """Row-wise min (side 0) or max (side 1) ignoring NaN; NaN for an all-NaN row."""
    filled = np.where(np.isnan(values), np.inf if side == 0 else -np.inf, values)
    best = filled.min(axis=1) if side == 0 else filled.max(axis=1)
    return np.where(np.isfinite(best), best, np.nan)


def _axis_gap(
    prof,
    prow,
    line_row,
    t_drop,
    span,
    setup,
    l_up,
    l_dn,
    has_dark,
    first_dark,
    ordered,
    thr,
    y_axis,
    sigma,
):
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
    k = len(prof)
    rows_f = np.arange(k)
    # From the line up: where the first dark run ends.
    dark = ordered < thr[:, None]
    after = np.arange(ordered.shape[1])[None, :] >= first_dark[:, None]
    bright_after = ~dark & after
    run_end = np.where(bright_after.any(axis=1), np.argmax(bright_after, axis=1), ordered.shape[1])
    top_h = np.minimum(l_up, y_axis[np.maximum(run_end - 1, 0)] - (2.0 * sigma + 1.0))
    start_h = y_axis[np.minimum(first_dark, len(y_axis) - 1)]
    top_ok = has_dark & (top_h >= start_h + 2.0 * sigma)
    r_a = np.rint(line_row - np.where(top_ok, top_h, l_up)).astype(np.intp)
    r_b = int(np.rint(line_row + l_dn))
    if prow[-1] < r_b:
        return np.full(k, np.nan)
    u = (prof - t_drop) / span[:, None]
    u_plate = (setup.plate_level - t_drop) / span
    csum = np.concatenate([np.zeros((k, 1)), np.cumsum(u, axis=1)], axis=1)
    ia = np.clip(r_a - prow[0], 0, len(prow) - 1)
    ib = r_b - prow[0]
    total = csum[:, ib + 1] - csum[rows_f, ia]
    b = r_b + 0.5
    if setup.mirror:
        gap = total / (1.0 + u_plate)
        bottom_ok = u[:, ib] < 0.25
    else:
        gap = total - (b - line_row) * u_plate
        bottom_ok = np.abs(u[:, ib] - u_plate) < 0.25
    # Fallback: height of the first dark sample going up, interpolated.
    j = np.clip(first_dark, 1, ordered.shape[1] - 1)
    t_hi = ordered[rows_f, j]
    t_lo = ordered[rows_f, j - 1]
    frac = np.clip((t_lo - thr) / np.maximum(t_lo - t_hi, 1e-6), 0.0, 1.0)
    edge = y_axis[j - 1] + frac * (y_axis[j] - y_axis[j - 1])
    conserved = np.where(bottom_ok, gap, np.nan)
    gap = np.where(top_ok, conserved, np.where(first_dark > 0, edge, np.nan))
    return np.where(has_dark, gap, np.nan)
