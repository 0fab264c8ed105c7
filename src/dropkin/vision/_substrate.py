"""Side view of a spreading drop: the substrate line and the drop on it, in one frame.

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

This module finds the substrate and the drop in a reference frame;
:mod:`dropkin.vision._side` measures the contact points in every frame of a
chunk (with :mod:`dropkin.vision._strip`, :mod:`dropkin.vision._local_circle`
and :mod:`dropkin.vision._side_axis`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import ndimage
from skimage import measure as skmeasure

from ..errors import MeasurementError
from ._circle import CircleFit, fit_circle

__all__ = [
    "SubstrateLine",
    "find_substrate",
    "substrate_line",
    "drop_above",
    "fit_drop_above",
    "slope_blur",
    "mirror_below",
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
    spread = _edge_spread(trans, cols.astype(np.intp), rows, half_window)
    window = int(min(max(4, np.ceil(3.0 * spread + 0.5)), half_window))
    rows = _conserved_rows(trans, cols.astype(np.intp), rows, window)
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


def _edge_spread(trans, cols, rows, half_window: int) -> float:
    """The band edge's blur sigma (px), from the steepest slope of its median column profile.

    A Gaussian-blurred step of unit height rises at most ``1 / (sigma sqrt(2
    pi))`` per pixel; at least 0.5 px.
    """
    m = trans.shape[0]
    centre = np.rint(rows).astype(np.intp)
    fits = (centre - half_window >= 0) & (centre + half_window < m)
    if not fits.any():
        return 1.0
    offsets = np.arange(-half_window, half_window + 1)
    block = trans[centre[fits, None] + offsets[None, :], cols[fits, None]]
    profile = np.median(block, axis=0)
    span = float(profile[:2].mean() - profile[-2:].mean())
    slope = float(np.max(-np.diff(profile))) / max(span, 1e-6)
    return max(1.0 / (np.sqrt(2.0 * np.pi) * max(slope, 1e-6)), 0.5)


def _conserved_rows(trans, cols, rows, half_window: int, level_rows: int = 8):
    """The edge rows refined by conserving the light of each column (sub-pixel, unbiased).

    Around the first guess `rows` (the midpoint crossing, whose linear
    interpolation between pixel centres errs by a few hundredths of a pixel
    with the edge's position inside its pixel), the column's transmission is
    scaled to ``u = (T - T_plate) / (T_bg - T_plate)`` with both levels read
    just outside the window (`level_rows` rows on each side), and summed over
    the window's whole rows ``a .. b``: for a step edge at row ``e`` blurred
    by any symmetric spread and averaged over pixels the sum is ``e - (a -
    0.5)``, whatever the edge's position inside its pixel. Columns whose window
    or levels leave the frame keep their first guess.
    """
    m = trans.shape[0]
    w = int(half_window)
    centre = np.rint(rows).astype(np.intp)
    a, b = centre - w, centre + w
    fits = (a - level_rows >= 0) & (b + level_rows < m)
    out = rows.copy()
    if not fits.any():
        return out
    cols, a, b = cols[fits], a[fits], b[fits]
    offsets = np.arange(-w - level_rows, w + level_rows + 1)
    block = trans[a[:, None] + w + offsets[None, :], cols[:, None]]  # (C, rows)
    # Each level drifts with the row (light falling off towards the band's
    # inside, a glow): its slope, from the median over the columns, carries
    # each column's mean level to the window's rows.
    median = np.median(block, axis=0)
    rel = np.arange(level_rows) - 0.5 * (level_rows - 1)
    slope_top = float(np.polyfit(rel, median[:level_rows], 1)[0])
    slope_low = float(np.polyfit(rel, median[-level_rows:], 1)[0])
    inner = np.arange(1, 2 * w + 2)  # the window's rows, counted from the top level rows
    top = block[:, :level_rows].mean(axis=1)[:, None] + slope_top * (
        inner + 0.5 * (level_rows - 1)
    )
    low = block[:, -level_rows:].mean(axis=1)[:, None] - slope_low * (
        2 * w + 2 - inner + 0.5 * (level_rows - 1)
    )
    span = top - low
    window = block[:, level_rows:-level_rows]
    good = span.min(axis=1) > 0.25 * max(float(np.median(span)), 1e-6)
    u = (window - low) / np.where(good[:, None], span, 1.0)
    edge = a - 0.5 + u.sum(axis=1)
    # A refined row far from the guess means something else lies in the window.
    good &= np.abs(edge - rows[fits]) < 1.5
    out[np.nonzero(fits)[0][good]] = edge[good]
    return out


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
