"""Find the two drops of a coalescence recording: their circles and the line of centres."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import ndimage
from skimage import measure as skmeasure

from ..errors import MeasurementError
from ._circle import CircleFit, fit_circle
from ._silhouette import dilate, label_regions, silhouette_mask

__all__ = ["DropPair", "find_drop_pair", "substrate_rows"]


@dataclass(frozen=True)
class DropPair:
    """Two drops about to merge (or merging), as circles in the image.

    Attributes
    ----------
    circles : tuple of CircleFit
        Drop 0 and drop 1; drop 0 is the left one (the upper one for a pair
        closer to vertical than to horizontal).
    axis : (2,) ndarray
        Unit vector (row, col) along the line of centres, from drop 0 to 1.
    normal : (2,) ndarray
        Unit vector across the line of centres.
    contact_point : (2,) ndarray
        Midpoint of the gap between the circles on the line of centres
        (row, col): where the bridge forms.
    in_contact : bool
        Whether the frame the pair was found in already showed one merged
        silhouette (then the bridge region was left out of the circle fits).
    """

    circles: tuple[CircleFit, CircleFit]
    axis: np.ndarray
    normal: np.ndarray
    contact_point: np.ndarray
    in_contact: bool

    @property
    def radii(self) -> np.ndarray:
        """Radii of drop 0 and drop 1 (px)."""
        return np.array([c.radius for c in self.circles])

    @property
    def gap(self) -> float:
        """Distance between the circles along the line of centres (px); < 0 if they overlap."""
        c0, c1 = (c.centre for c in self.circles)
        return float(np.hypot(*(c1 - c0)) - self.radii.sum())


def substrate_rows(mask, *, fraction: float = 0.95) -> tuple[int, int]:
    """Rows at the top and bottom of a mask that are a dark band across the frame.

    Returns ``(top, bottom)``: rows ``[0, top)`` and ``[bottom, M)`` are band
    rows (a substrate, a holder plate), where at least `fraction` of the
    pixels are dark. ``(0, M)`` when there is no band.
    """
    mask = np.asarray(mask, dtype=bool)
    full = mask.mean(axis=1) >= fraction
    top = 0
    while top < len(full) and full[top]:
        top += 1
    bottom = len(full)
    while bottom > top and full[bottom - 1]:
        bottom -= 1
    return top, bottom


def _order(c0: CircleFit, c1: CircleFit):
    d = c1.centre - c0.centre
    key = 1 if abs(d[1]) >= abs(d[0]) else 0
    return (c0, c1) if d[key] >= 0 else (c1, c0)


def _fit_away_from(points, first: CircleFit, other_centre, *, exclude_deg: float = 40.0):
    """Refit `first` without the outline facing the other drop (the bridge).

    The points `first` trimmed as outliers stay out; the refit needs no
    consensus search.
    """
    towards = other_centre - first.centre
    towards = towards / max(np.hypot(*towards), 1e-12)
    rel = points - first.centre
    cosang = (rel @ towards) / np.maximum(np.hypot(rel[:, 0], rel[:, 1]), 1e-12)
    keep = (cosang < np.cos(np.deg2rad(exclude_deg))) & first.used
    return fit_circle(points[keep], consensus=None) if keep.sum() >= 8 else first


def _bounding_box(mask, *, margin: int = 0):
    """(row_start, row_stop, col_start, col_stop) of a mask's True pixels,
    grown by `margin` and clipped to the mask; the whole mask if it is empty."""
    rows = np.flatnonzero(mask.any(axis=1))
    cols = np.flatnonzero(mask.any(axis=0))
    if not rows.size:
        return 0, mask.shape[0], 0, mask.shape[1]
    return (
        max(int(rows[0]) - margin, 0),
        min(int(rows[-1]) + 1 + margin, mask.shape[0]),
        max(int(cols[0]) - margin, 0),
        min(int(cols[-1]) + 1 + margin, mask.shape[1]),
    )


def _outline_points(trans, near, level: float):
    """Sub-pixel outline points (P, 2) at `level`, traced only where `near` is.

    The same points, in the same order, as
    ``skimage.measure.find_contours(np.where(near, trans, 1.0), level)``
    concatenated: only the box around `near`, with a border of ones, is
    traced, and outside it there is no crossing of `level` (< 1).
    """
    r0, r1, c0, c1 = _bounding_box(near, margin=1)
    clean = np.where(near[r0:r1, c0:c1], trans[r0:r1, c0:c1], 1.0)
    contours = skmeasure.find_contours(clean, level) if min(clean.shape) >= 2 else []
    if not contours:
        return np.empty((0, 2))
    return np.concatenate(contours) + np.array([r0, c0], dtype=np.float64)


def _largest_label_near(labels, keep, rows, cols, *, reach: int):
    """At each (row, col), the largest label among `keep` within `reach` px
    (a square window), 0 if none: what a grey dilation of the kept labels by
    a (2 reach + 1)-square would give there, computed at those points only.
    """
    offsets = np.arange(-reach, reach + 1)
    # Clipped to the frame: a window reaching past the border sees the
    # border pixels, which it holds anyway (as the dilation's reflection).
    window = labels[
        np.clip(rows[:, None, None] + offsets[None, :, None], 0, labels.shape[0] - 1),
        np.clip(cols[:, None, None] + offsets[None, None, :], 0, labels.shape[1] - 1),
    ].reshape(len(rows), -1)
    return np.where(np.isin(window, keep), window, 0).max(axis=1)


def find_drop_pair(trans, *, level: float = 0.5, min_area: int = 20) -> DropPair:
    """Locate the two drops in a transmission frame and fit a circle to each.

    Parameters
    ----------
    trans : (M, N) ndarray
        Transmission frame (0 in the drops' dark rim, 1 on the background),
        preferably one taken before contact.
    level : float, optional
        Transmission of the outline (one half: the midpoint of a blurred edge).
    min_area : int, optional
        Dark specks smaller than this (px) are ignored.

    Returns
    -------
    DropPair

    Raises
    ------
    MeasurementError
        If the frame does not show two drops.

    Notes
    -----
    Outline points come from marching squares on the grey levels
    (:func:`skimage.measure.find_contours` at `level`), so they are
    sub-pixel. Points on the frame border, on a substrate band, and facing the
    other drop are left out; the fit itself trims outliers (a needle).
    """
    trans = np.asarray(trans)
    if trans.dtype not in (np.float32, np.float64):
        trans = trans.astype(np.float64)
    if trans.ndim != 2:
        raise ValueError(f"trans must be 2-D, got shape {trans.shape}")
    mask = silhouette_mask(trans, level=level, min_area=min_area)
    top, bottom = substrate_rows(mask)
    mask[:top] = False
    mask[bottom:] = False
    labels, count = label_regions(mask)
    if count == 0:
        raise MeasurementError("no drops found (no dark region in the frame)")
    sizes = np.bincount(labels.ravel())[1:]
    order = np.argsort(sizes)[::-1]
    big = sizes[order[0]]
    second = sizes[order[1]] if count > 1 else 0
    points = _pair_outline(trans, labels, top, bottom, level)
    if second >= 0.02 * big:
        groups, in_contact = _by_silhouette(points, labels, order), False
    else:
        groups, in_contact = _split_merged(points, labels == order[0] + 1), True
    if min(len(g) for g in groups) < 8:
        raise MeasurementError("fewer than two drops found in the frame")
    first = [fit_circle(g) for g in groups]
    circles = (
        _fit_away_from(groups[0], first[0], first[1].centre),
        _fit_away_from(groups[1], first[1], first[0].centre),
    )
    c0, c1 = _order(*circles)
    delta = c1.centre - c0.centre
    distance = float(np.hypot(*delta))
    if distance < 1e-6:
        raise MeasurementError("the two drops have the same centre")
    axis = delta / distance
    normal = np.array([-axis[1], axis[0]])
    gap = distance - c0.radius - c1.radius
    contact = c0.centre + axis * (c0.radius + 0.5 * gap)
    return DropPair(
        circles=(c0, c1), axis=axis, normal=normal, contact_point=contact, in_contact=in_contact
    )


def _pair_outline(trans, labels, top: int, bottom: int, level: float):
    """Sub-pixel outline points near the silhouettes, away from the frame border
    and from a substrate band (rows above `top` or from `bottom` on)."""
    rows, cols = trans.shape
    near = dilate(labels > 0, 2)
    near[:top] = False
    near[bottom:] = False
    points = _outline_points(trans, near, level)
    if not len(points):
        raise MeasurementError("no drop outline found")
    inside = (
        (points[:, 0] > 1.5)
        & (points[:, 0] < rows - 2.5)
        & (points[:, 1] > 1.5)
        & (points[:, 1] < cols - 2.5)
    )
    if top > 0:
        inside &= points[:, 0] > top + 2.0
    if bottom < rows:
        inside &= points[:, 0] < bottom - 3.0
    return points[inside]


def _by_silhouette(points, labels, order):
    """Two silhouettes (before contact): each outline point goes to the nearer.

    The nearer is the largest of the two labels within 2 px (a 5 x 5 grey
    dilation of the two silhouettes' labels, looked up at the points).
    """
    rows, cols = labels.shape
    owner = _largest_label_near(
        labels,
        order[:2] + 1,
        np.clip(np.rint(points[:, 0]).astype(int), 0, rows - 1),
        np.clip(np.rint(points[:, 1]).astype(int), 0, cols - 1),
        reach=2,
    )
    return [points[owner == order[0] + 1], points[owner == order[1] + 1]]


def _split_merged(points, silhouette):
    """One silhouette (already merged): the outline points on either side of
    the narrowest place in the middle part of its long axis."""
    rr, cc = np.nonzero(silhouette)
    centre = np.array([rr.mean(), cc.mean()])
    cov = np.cov(np.vstack([rr - centre[0], cc - centre[1]]))
    evals, evecs = np.linalg.eigh(cov)
    long_axis = evecs[:, np.argmax(evals)]
    proj = (rr - centre[0]) * long_axis[0] + (cc - centre[1]) * long_axis[1]
    lo, hi = np.percentile(proj, [20, 80])
    bins = np.arange(np.floor(lo), np.ceil(hi) + 1)
    if len(bins) < 3:
        raise MeasurementError("the silhouette is too small to hold two drops")
    counts, _ = np.histogram(proj, bins=bins)
    split = bins[int(np.argmin(counts))] + 0.5
    side = (points - centre) @ long_axis >= split
    return [points[~side], points[side]]


def edge_blur(trans, pair: DropPair, *, angles: int = 48, own_step: bool = False) -> float:
    """Width of the drops' edges: the sigma (px) of an equivalent Gaussian blur.

    Transmission profiles are sampled across each drop's outline along radial
    lines (0.25 px apart, bilinear), away from the other drop and from the
    frame border. A step edge blurred by a Gaussian of standard deviation
    sigma has a largest slope of ``1 / (sigma sqrt(2 pi))`` (in transmission
    per pixel), so sigma follows from the median largest slope. The result
    includes the pixel's own averaging and is at least 0.3 px.

    With `own_step`, each profile's slope is divided by its own step (the
    difference of its ends, 4 px either side of the outline, at least 0.2):
    for drops whose level changes around the outline (bright drops lit from
    one side), where the unit step of the transmission holds on average only.
    """
    trans = np.asarray(trans, dtype=np.float64)
    m, n = trans.shape
    offsets = np.arange(-4.0, 4.0001, 0.25)
    lines = []
    for k, circle in enumerate(pair.circles):
        towards = pair.axis if k == 0 else -pair.axis
        theta = np.linspace(0, 2 * np.pi, angles, endpoint=False)
        direction = np.stack([np.sin(theta), np.cos(theta)], axis=1)
        direction = direction[direction @ towards <= 0.5]
        pts = circle.centre[None, :, None] + direction[:, :, None] * (circle.radius + offsets)
        inside = (
            (pts[:, 0].min(axis=1) >= 1)
            & (pts[:, 0].max(axis=1) <= m - 2)
            & (pts[:, 1].min(axis=1) >= 1)
            & (pts[:, 1].max(axis=1) <= n - 2)
        )
        lines.append(pts[inside])
    lines = np.concatenate(lines)
    slopes = []
    if len(lines):
        profiles = ndimage.map_coordinates(
            trans, [lines[:, 0].ravel(), lines[:, 1].ravel()], order=1
        ).reshape(len(lines), -1)
        slopes = np.max(np.diff(profiles, axis=1), axis=1) / 0.25
        if own_step:
            slopes = slopes / np.maximum(profiles[:, -1] - profiles[:, 0], 0.2)
    if not len(slopes):
        return 1.0
    slope = float(np.median(slopes))
    return max(1.0 / (np.sqrt(2 * np.pi) * max(slope, 1e-6)), 0.3)
