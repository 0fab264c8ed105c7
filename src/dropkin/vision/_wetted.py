"""A drop spreading on a substrate, seen from below: the wetted disc.

Through a transparent substrate the wetted disc is a darker disc inside the
drop's outline. Its equivalent radius ``sqrt(A / pi)`` comes from the summed
coverage of the pixels over an annulus around its edge (blur and pixel
averaging move light between pixels but conserve the sum); when the ring
between the wetted disc and the outline is thinner than the blur lets it show,
a two-edge blur model gives the ring's width instead.

This module finds the drop's outline and the wetted disc in a reference frame
(through :func:`dropkin.vision.find_spreading_drop`), and holds the radial
profile's crossings; :mod:`dropkin.vision._wetted_area` measures the wetted
disc in every frame of a chunk (through
:func:`dropkin.vision.measure_contact_lines`).
"""

from __future__ import annotations

import math

import numpy as np
from scipy import ndimage
from skimage import measure as skmeasure

from ..errors import MeasurementError
from ._circle import fit_circle
from ._silhouette import threshold_midpoint
from ._spreading_records import SpreadingSetup
from ._substrate import slope_blur

__all__ = ["BIN", "find_bottom", "crossing_outward", "crossing_inward"]

#: Radial bin width (px) of the bottom view's profiles.
BIN = 0.25


def _largest(mask):
    labels, count = ndimage.label(mask)
    if count == 0:
        return None
    sizes = np.bincount(labels.ravel())[1:]
    return labels == int(np.argmax(sizes)) + 1


def _outline_circle(trans, region, inside_level, outside_level, threshold):
    """Circle fit to the sub-pixel outline of `region` (contours of a cleaned copy)."""
    m, n = trans.shape
    inner = ndimage.binary_erosion(region, iterations=3)
    outer = ndimage.binary_dilation(region, iterations=3)
    clean = np.where(outer, trans, outside_level)
    clean[inner] = inside_level
    contours = skmeasure.find_contours(clean, threshold)
    if not contours:
        return None
    pts = np.concatenate(contours)
    keep = (pts[:, 0] > 1.5) & (pts[:, 0] < m - 2.5) & (pts[:, 1] > 1.5) & (pts[:, 1] < n - 2.5)
    pts = pts[keep]
    return fit_circle(pts) if len(pts) >= 8 else None


def _profile_blur(trans, circle, low, high, guess):
    """Edge sigma from the outline's radial profile, averaged over the whole circle.

    Every pixel within ``4 guess + 3`` px of the circle is binned by its
    distance from the centre (quarter-pixel bins); the profile's crossings of
    a quarter and three quarters of the step from `low` to `high` are 1.349
    sigma apart for a Gaussian-blurred step (twice the normal distribution's
    0.6745 quantile). Averaging over the circle leaves little noise, unlike
    the largest slope of single profiles, which noise biases upward.
    """
    m, n = trans.shape
    half = 4.0 * guess + 3.0
    r0 = int(max(np.floor(circle.centre[0] - circle.radius - half), 0))
    r1 = int(min(np.ceil(circle.centre[0] + circle.radius + half) + 1, m))
    c0 = int(max(np.floor(circle.centre[1] - circle.radius - half), 0))
    c1 = int(min(np.ceil(circle.centre[1] + circle.radius + half) + 1, n))
    rows, cols = np.mgrid[r0:r1, c0:c1]
    off = np.hypot(rows - circle.centre[0], cols - circle.centre[1]) - circle.radius
    # Within reach of the circle, and not on the frame's outermost rows and columns.
    keep = (np.abs(off) < half) & (rows > 0) & (rows < m - 1) & (cols > 0) & (cols < n - 1)
    bins = np.floor((off[keep] + half) / BIN).astype(np.intp)
    nb = int(np.ceil(2 * half / BIN)) + 1
    count = np.bincount(bins, minlength=nb)
    filled = count > 0
    if filled.sum() < 8:
        return guess
    profile = np.bincount(bins, weights=trans[r0:r1, c0:c1][keep], minlength=nb)[filled]
    centres = np.bincount(bins, weights=off[keep], minlength=nb)[filled]
    profile, centres = profile / count[filled], centres / count[filled]
    frac = (profile - low) / max(high - low, 1e-6)
    c25 = crossing_outward(frac[None], centres, np.array([0.25]), np.zeros(1, np.intp))[0]
    c75 = crossing_inward(frac[None], centres, np.array([0.75]))[0]
    width = c75 - c25
    if not (np.isfinite(width) and width > 0):
        return guess
    return max(float(width) / 1.349, 0.3)


def find_bottom(trans, level):
    """The drop's outline, and the wetted disc if any, in a bottom-view frame."""
    m, n = trans.shape
    border = np.concatenate(
        [trans[:2].ravel(), trans[-2:].ravel(), trans[:, :2].ravel(), trans[:, -2:].ravel()]
    )
    background = float(np.median(border))
    region = _largest(ndimage.binary_fill_holes(trans < threshold_midpoint(trans)))
    if region is None or region.sum() < 20:
        raise MeasurementError("no drop found (no region darker than the background)")
    core = ndimage.binary_erosion(region, iterations=3)
    values = trans[core] if core.sum() >= 20 else trans[region]
    ring, wetted_level, wetted = float(np.median(values)), math.nan, None
    if not background - ring > 0.1 * max(abs(background), 1e-6):
        raise MeasurementError("no drop found (too little contrast with the background)")
    split = threshold_midpoint(values[None, :])
    lo, hi = values[values < split], values[values >= split]
    if len(lo) >= 12 and len(hi) >= 12:
        t_lo, t_hi = float(np.median(lo)), float(np.median(hi))
        if t_hi - t_lo > 0.2 * (background - t_hi):
            # Two levels inside the drop: the wetted disc (darker) inside its ring.
            disc = _largest(core & (trans < t_lo + level * (t_hi - t_lo)))
            if disc is not None and disc.sum() >= 12:
                wetted = _outline_circle(trans, disc, t_lo, t_hi, t_lo + level * (t_hi - t_lo))
                if wetted is not None:
                    ring, wetted_level = t_hi, t_lo
    outline = _outline_circle(trans, region, ring, background, ring + level * (background - ring))
    if outline is None:
        raise MeasurementError("no drop outline found")
    blur = _profile_blur(
        trans, outline, ring, background, slope_blur(trans, outline, ring, background)
    )
    return SpreadingSetup(
        view="bottom",
        drop=outline,
        centre=outline.centre.copy(),
        tilt=0.0,
        blur=blur,
        background_level=background,
        drop_level=ring,
        plate_level=math.nan,
        mirror=False,
        in_contact=wetted is not None,
        wetted=wetted,
        wetted_level=wetted_level,
    )


def crossing_outward(profile, rho, level, start):
    """First rise above `level` going outward from index `start` (K,); NaN if none."""
    k, r = profile.shape
    above = (profile >= level[:, None]) & (np.arange(r)[None, :] > start[:, None])
    j = np.argmax(above, axis=1)
    ok = above.any(axis=1)
    j = np.maximum(j, 1)
    t_hi = profile[np.arange(k), j]
    t_lo = profile[np.arange(k), j - 1]
    frac = np.clip((level - t_lo) / np.maximum(t_hi - t_lo, 1e-6), 0.0, 1.0)
    r_lo = rho[np.arange(k), j - 1] if rho.ndim == 2 else rho[j - 1]
    r_hi = rho[np.arange(k), j] if rho.ndim == 2 else rho[j]
    return np.where(ok, r_lo + frac * (r_hi - r_lo), np.nan)


def crossing_inward(profile, rho, level):
    """Outermost fall below `level`, found going inward from the last sample; NaN if none."""
    rev = profile[:, ::-1]
    below = rev < level[:, None]
    j = np.argmax(below, axis=1)
    ok = below.any(axis=1) & (j > 0)
    j = np.maximum(j, 1)
    k = len(profile)
    t_in = rev[np.arange(k), j]
    t_out = rev[np.arange(k), j - 1]
    frac = np.clip((t_out - level) / np.maximum(t_out - t_in, 1e-6), 0.0, 1.0)
    rr = rho[:, ::-1] if rho.ndim == 2 else np.broadcast_to(rho[::-1], profile.shape)
    r_out = rr[np.arange(k), j - 1]
    r_in = rr[np.arange(k), j]
    return np.where(ok, r_out + frac * (r_in - r_out), np.nan)
