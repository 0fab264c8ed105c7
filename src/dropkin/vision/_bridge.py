"""Two sessile drops merging on a plate, seen from the side: the bridge height.

The plate is a band across the bottom of the frame (found as for a spreading
drop, :mod:`dropkin.vision._substrate`); the drops are two dark caps on it,
each fitted with a circle above the plate. Between the two caps' axes, in
every pixel column, the outline is found going *up* from the plate: the first
row where the transmission rises through the edge level (the fraction `level`
of the way from the drops' dark level to the background), at a sub-pixel row
by linear interpolation between the two rows around the crossing. Going up
from the plate, neither noise in the background far above nor the mirror
image in a reflective plate below is met. The column's height is the
plate line's row minus the edge's row; the bridge height is the lowest
column, refined by a parabola through its neighbours (as the free neck's
narrowest column, :mod:`dropkin.vision._neck`).

*Contact*: a frame is before contact while some column between the caps is
bright just above the plate (the plate is seen between the drops).

*Resolution*: two caps of sphere radius R_s whose centres lie c below the
plate, joined by a bridge of height h, leave beside it a notch whose rounded
bottom has the radius ``rho = h (h + 2c) / (2 (R_s - c - h))`` (a circle
tangent to both caps; ``h^2 / 2R`` at 90 degrees, as for free drops). While
``2 rho`` is narrower than ``gap_blurs`` blur sigmas, blur fills the notch
and the measured height is too large; while h itself is below half of
that, the blurred plate edge pulls the outline. Such frames are
``unresolved``, as for the free neck.

:func:`find_sessile_pair` works once on a reference frame (before contact, or
one still showing the two caps); :func:`measure_bridges` on chunks of frames.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import ndimage

from ..errors import MeasurementError
from ._circle import CircleFit
from ._substrate import (
    SubstrateLine,
    find_substrate,
    fit_drop_above,
    slope_blur,
    substrate_line,
)

__all__ = ["SessilePair", "find_sessile_pair", "sessile_background_mask"]


@dataclass(frozen=True)
class SessilePair:
    """Two sessile drops and the plate, from a reference frame (pixels).

    Attributes
    ----------
    line : SubstrateLine
        The plate's surface; its ``col0`` is midway between the caps' axes.
    caps : tuple of CircleFit
        The caps' circles, left one first.
    footprints : tuple of float
        Half the chord of each circle at the plate line (the footprint radius).
    cols : tuple of int
        First and last column searched for the bridge (between the axes).
    top_row : int
        Highest row looked at (a few px above the higher apex).
    blur : float
        Edge blur sigma.
    background_level, drop_level, plate_level : float
        Transmission of the background, the drops and the plate.
    in_contact : bool
        Whether the caps already touch in the reference frame.
    """

    line: SubstrateLine
    caps: tuple[CircleFit, CircleFit]
    footprints: tuple[float, float]
    cols: tuple[int, int]
    top_row: int
    blur: float
    background_level: float
    drop_level: float
    plate_level: float
    in_contact: bool

    @property
    def radii(self) -> np.ndarray:
        """The footprint radii (px), as the drops' size."""
        return np.asarray(self.footprints, dtype=np.float64)

    def notch_radius(self, height):
        """The notch's bottom radius rho beside a bridge of `height` (px); see the notes."""
        sphere = float(np.mean([c.radius for c in self.caps]))
        depth = float(np.mean([c.centre[0] - self.line.rows(c.centre[1]) for c in self.caps]))
        h = np.asarray(height, dtype=np.float64)
        room = np.maximum(sphere - depth - h, 1e-9)
        return np.maximum(h * (h + 2.0 * depth), 0.0) / (2.0 * room)


def _two_regions(mask):
    """The two largest regions of `mask` (left first), splitting a single one
    at its lowest column between the quarter points."""
    labels, count = ndimage.label(mask)
    sizes = np.bincount(labels.ravel())[1:]
    order = np.argsort(sizes)[::-1]
    if count >= 2 and sizes[order[1]] >= 20:
        regions = [labels == order[0] + 1, labels == order[1] + 1]
    elif count >= 1 and sizes[order[0]] >= 40:
        region = labels == order[0] + 1
        cols = np.nonzero(region.any(axis=0))[0]
        top = np.argmax(region, axis=0).astype(float)
        lo, hi = cols[0] + (cols[-1] - cols[0]) // 4, cols[-1] - (cols[-1] - cols[0]) // 4
        split = lo + int(np.argmax(top[lo : hi + 1]))
        left = region.copy()
        left[:, split:] = False
        regions = [left, region & ~left]
    else:
        raise MeasurementError("two drops were not found above the plate")
    regions.sort(key=lambda r: np.nonzero(r.any(axis=0))[0].mean())
    return regions


def _bare_plate_columns(trans):
    """Columns that show the bare plate: those whose first dark row from the top
    is the lowest such row, or one above it (two caps may cover most of the
    width, more than :func:`find_substrate`'s percentile profile allows)."""
    mid = 0.5 * (float(np.percentile(trans, 99)) + float(np.percentile(trans, 1)))
    dark = trans < mid
    first = np.where(dark.any(axis=0), np.argmax(dark, axis=0), -1)
    low = np.percentile(first[first >= 0], 95) if (first >= 0).any() else 0
    cols = np.nonzero(first >= low - 1)[0]
    return cols if cols.size >= 8 else np.arange(trans.shape[1])


def find_sessile_pair(trans, *, level: float = 0.5) -> SessilePair:
    """Locate the plate and the two caps on it in a side-view frame.

    Parameters
    ----------
    trans : (M, N) ndarray
        Transmission frame (about 0 in the drops, 1 on the background).
    level : float, optional
        Edge level, as the fraction of the way from the drops' dark level to
        the background.

    Raises
    ------
    MeasurementError
        If no plate or not two drops are found.
    """
    trans = np.asarray(trans, dtype=np.float64)
    m, n = trans.shape
    bare = _bare_plate_columns(trans)
    step, background, plate = find_substrate(trans[:, bare])
    t_drop = float(np.percentile(trans[: max(step - 1, 1)], 0.5))
    if not background - t_drop > 0.2 * max(abs(background), 1e-6):
        raise MeasurementError("no drops found above the plate (no dark region)")
    threshold = t_drop + level * (background - t_drop)
    not_bare = np.ones(n, dtype=bool)
    not_bare[bare] = False
    first = substrate_line(trans, step, background, plate, not_bare, axis_col=0.5 * (n - 1))
    rows = np.arange(m)[:, None]
    above = first.heights(rows, np.arange(n)[None, :]) > 1.0
    regions = _two_regions(ndimage.binary_fill_holes((trans < threshold) & above))
    drop_cols = np.convolve((regions[0] | regions[1]).any(axis=0), np.ones(13), mode="same") > 0
    axes = [float(np.nonzero(r.any(axis=0))[0].mean()) for r in regions]
    line = substrate_line(trans, step, background, plate, drop_cols, axis_col=float(np.mean(axes)))
    caps = [
        fit_drop_above(trans, line, r, threshold, t_drop, background, clearance=5.0)
        for r in regions
    ]
    blur = slope_blur(
        trans, caps[0], t_drop, background,
        keep=lambda r, c: line.heights(r, c).min() >= 5.0,
    )  # fmt: skip
    clearance = max(5.0, 3.0 * blur + 2.0)
    if clearance > 5.0:
        caps = [
            fit_drop_above(trans, line, r, threshold, t_drop, background, clearance=clearance)
            for r in regions
        ]
    return _pair(caps, line, blur, (background, t_drop, plate))


def _pair(caps, line: SubstrateLine, blur: float, levels) -> SessilePair:
    """The record, with the footprints, the columns and rows to search."""
    caps = sorted(caps, key=lambda c: c.centre[1])
    mid = 0.5 * (caps[0].centre[1] + caps[1].centre[1])
    line = SubstrateLine(float(line.rows(mid)), float(mid), line.tilt)
    feet = []
    for cap in caps:
        below = float(line.rows(cap.centre[1]) - cap.centre[0])  # centre height above the line
        if below > 0.05 * cap.radius:
            raise MeasurementError(
                "the drops overhang the plate (contact angle above 90 degrees): their bulges"
                " meet above the plate, and no bridge on the plate is seen from the side"
            )
        feet.append(float(np.sqrt(max(cap.radius**2 - below**2, 0.0))))
    apex = min(float(c.centre[0] - c.radius) for c in caps)
    lo, hi = int(np.ceil(caps[0].centre[1])) + 1, int(np.floor(caps[1].centre[1])) - 1
    if hi - lo < 4:
        raise MeasurementError("the two drops' axes are too close to look between them")
    gap = (caps[1].centre[1] - feet[1]) - (caps[0].centre[1] + feet[0])
    return SessilePair(
        line=line,
        caps=(caps[0], caps[1]),
        footprints=(feet[0], feet[1]),
        cols=(lo, hi),
        top_row=max(int(np.floor(apex - 3.0 * blur - 3.0)), 0),
        blur=float(blur),
        background_level=float(levels[0]),
        drop_level=float(levels[1]),
        plate_level=float(levels[2]),
        in_contact=bool(gap < 0.5),
    )


def sessile_background_mask(shape, pair: SessilePair):
    """Pixels that show only the backlight: the rows more than ``3 blur + 2`` px
    above the plate, less the caps' circles grown by ``3 blur + 3`` px (a
    reflective plate is as bright as the background and must not be fitted
    as backlight; see :func:`dropkin.vision.spreading_background_mask`)."""
    m, n = shape
    rows, cols = np.mgrid[0:m, 0:n]
    margin = 3.0 * pair.blur
    mask = pair.line.heights(rows, cols) > margin + 2.0
    for cap in pair.caps:
        grown = cap.radius + margin + 3.0
        mask &= (rows - cap.centre[0]) ** 2 + (cols - cap.centre[1]) ** 2 > grown**2
    return mask
