"""Pixel coverage: the fraction of each pixel that a shape covers.

Discs (also cut by a horizontal line) get their exact area: the disc's area
inside each pixel square is a difference of a closed-form primitive at the
pixel corners. Composite outlines (a bridge between drops, a needle entering a
drop) are supersampled, on an n x n grid of sub-pixel centres, only in small
boxes around the junctions; elsewhere the exact disc areas are used.

Supersampling error bound: each sub-cell has area 1/n^2 and is wrong only if
the outline passes through it; a nearly straight piece of outline crosses at
most 2n - 1 sub-cells of a pixel, so a boundary pixel's coverage is off by at
most 2/n (0.125 for the default n = 16), and by far less on average because
the errors along an outline have both signs.

Pixel convention: pixel (i, j) is the square rows i - 0.5 .. i + 0.5, cols
j - 0.5 .. j + 0.5.
"""

from __future__ import annotations

import math

import numpy as np

from ._scenes import CapScene, PairScene, WettedDiscScene

__all__ = [
    "disc_coverage",
    "rectangle_coverage",
    "supersampled_coverage",
    "render_opacity",
    "SUPERSAMPLING",
]

#: Sub-samples per pixel side for composite outlines.
SUPERSAMPLING = 16


def _segment_primitive(x, radius):
    """Integral of sqrt(R^2 - X^2) from 0 to x, for |x| <= R."""
    s = np.sqrt(np.maximum(radius**2 - x**2, 0.0))
    return 0.5 * (x * s + radius**2 * np.arcsin(np.clip(x / radius, -1.0, 1.0)))


def _quadrant_area(x, y, radius):
    """Area of the disc |(X, Y)| <= R (centred at 0) with X <= x and Y <= y.

    Closed form: integrate over X the length of {Y <= y} inside the disc, which
    is 2 s(X) where s(X) = sqrt(R^2 - X^2) <= y, s(X) + y where |y| < s(X), and
    0 where y <= -s(X).
    """
    xc = np.clip(x, -radius, radius)
    w = np.sqrt(np.maximum(radius**2 - y**2, 0.0))  # |X| < w  <=>  s(X) > |y|
    upper = np.clip(xc, -w, w)
    length = upper + w  # length of [-w, w] cut at xc (>= 0)
    inner = _segment_primitive(upper, radius) - _segment_primitive(-w, radius)
    full = 2.0 * (_segment_primitive(xc, radius) - _segment_primitive(-radius, radius))
    return np.where(y >= 0, full - inner + y * length, inner + y * length)


def _window(shape, lo_row, hi_row, lo_col, hi_col):
    """Pixel index ranges (clipped to the image) touched by a bounding box."""
    rows, cols = shape
    r0 = max(int(math.floor(lo_row + 0.5)), 0)
    r1 = min(int(math.ceil(hi_row + 0.5)), rows)
    c0 = max(int(math.floor(lo_col + 0.5)), 0)
    c1 = min(int(math.ceil(hi_col + 0.5)), cols)
    return r0, r1, c0, c1


def disc_coverage(shape, centre_row, centre_col, radius, *, below_row=math.inf):
    """Exact area fraction of each pixel covered by a disc.

    Parameters
    ----------
    shape : tuple of int
        (M, N) of the image.
    centre_row, centre_col : float
        Disc centre, in pixel coordinates.
    radius : float
        Disc radius in pixels (0 gives an empty image).
    below_row : float, optional
        Keep only the part of the disc at rows < `below_row` (a disc cut by a
        horizontal line, e.g. a drop on a substrate).

    Returns
    -------
    coverage : (M, N) ndarray of float
        Values in [0, 1].

    Examples
    --------
    >>> cov = disc_coverage((120, 120), 60.3, 59.8, 50.0)
    >>> bool(abs(cov.sum() - math.pi * 50**2) < 1e-6)
    True
    """
    rows, cols = int(shape[0]), int(shape[1])
    if rows <= 0 or cols <= 0:
        raise ValueError(f"shape must be positive, got {shape}")
    if not radius >= 0:
        raise ValueError(f"radius must be >= 0, got {radius}")
    out = np.zeros((rows, cols))
    if radius == 0:
        return out
    hi_row = min(centre_row + radius, below_row)
    r0, r1, c0, c1 = _window(
        (rows, cols), centre_row - radius, hi_row, centre_col - radius, centre_col + radius
    )
    if r0 >= r1 or c0 >= c1:
        return out
    # Pixel edges relative to the centre; the row axis plays the role of y.
    y = np.arange(r0, r1 + 1) - 0.5 - centre_row
    y = np.minimum(y, below_row - centre_row)
    x = np.arange(c0, c1 + 1) - 0.5 - centre_col
    g = _quadrant_area(x[None, :], y[:, None], radius)
    cov = g[1:, 1:] - g[:-1, 1:] - g[1:, :-1] + g[:-1, :-1]
    out[r0:r1, c0:c1] = np.clip(cov, 0.0, 1.0)
    return out


def rectangle_coverage(shape, lo_row, hi_row, lo_col, hi_col):
    """Exact area fraction of each pixel covered by an axis-aligned rectangle.

    Parameters
    ----------
    shape : tuple of int
        (M, N).
    lo_row, hi_row, lo_col, hi_col : float
        Rectangle bounds in pixel coordinates (may extend beyond the image).

    Returns
    -------
    coverage : (M, N) ndarray of float
    """
    rows, cols = int(shape[0]), int(shape[1])
    edge_r = np.arange(rows)
    edge_c = np.arange(cols)
    fr = np.clip(np.minimum(edge_r + 0.5, hi_row) - np.maximum(edge_r - 0.5, lo_row), 0, 1)
    fc = np.clip(np.minimum(edge_c + 0.5, hi_col) - np.maximum(edge_c - 0.5, lo_col), 0, 1)
    return fr[:, None] * fc[None, :]


def supersampled_coverage(inside, rows, cols, *, factor=SUPERSAMPLING, circles=None):
    """Coverage of pixels rows x cols by a shape given as a point test.

    Parameters
    ----------
    inside : callable
        ``inside(row_coords, col_coords) -> bool array``, broadcasting.
    rows, cols : range
        The pixel rows and columns to evaluate.
    factor : int
        Sub-samples per pixel side (error bound 2/factor per boundary pixel,
        see the module docstring).
    circles : sequence of (row, col, radius), optional
        Circles that carry the whole outline of the shape inside the window.
        When given, only pixels whose centre lies within half a pixel diagonal
        of one of them are supersampled; any other pixel does not meet the
        outline, so it is wholly inside or outside, and its centre decides.

    Returns
    -------
    coverage : (len(rows), len(cols)) ndarray of float
    """
    r = np.asarray(rows, dtype=float)
    c = np.asarray(cols, dtype=float)
    offsets = (np.arange(factor) + 0.5) / factor - 0.5
    if circles is None:
        sub_r = (r[:, None] + offsets[None, :]).ravel()
        sub_c = (c[:, None] + offsets[None, :]).ravel()
        hits = inside(sub_r[:, None], sub_c[None, :]).astype(float)
        return hits.reshape(len(r), factor, len(c), factor).mean(axis=(1, 3))
    rr, cc = np.meshgrid(r, c, indexing="ij")
    out = inside(rr, cc).astype(float)
    near = np.zeros(out.shape, dtype=bool)
    for row, col, radius in circles:
        near |= np.abs(np.hypot(rr - row, cc - col) - radius) <= math.sqrt(0.5)
    if np.any(near):
        sub_r = rr[near][:, None, None] + offsets[None, :, None]
        sub_c = cc[near][:, None, None] + offsets[None, None, :]
        out[near] = inside(sub_r, sub_c).mean(axis=(1, 2))
    return out


def _resample_box(out, inside, shape, lo_row, hi_row, lo_col, hi_col, circles=None):
    r0, r1, c0, c1 = _window(shape, lo_row - 1, hi_row + 1, lo_col - 1, hi_col + 1)
    if r0 < r1 and c0 < c1:
        out[r0:r1, c0:c1] = supersampled_coverage(
            inside, range(r0, r1), range(c0, c1), circles=circles
        )


def _pair_opacity(scene: PairScene, shape):
    (r1, c1), (r2, c2) = scene.centre_1_px, scene.centre_2_px
    opacity = disc_coverage(shape, r1, c1, scene.radius_1_px)
    opacity += disc_coverage(shape, r2, c2, scene.radius_2_px)
    bridge = scene.bridge()
    if bridge is not None:
        ar, ac = scene.axis()
        # Box around the tangent points on both sides of the axis.
        us = (bridge.tangent_u1, bridge.tangent_u2)
        vs = (bridge.tangent_v1, bridge.tangent_v2)
        pts_r = [r1 + u * ar + s * v * ac for u, v in zip(us, vs, strict=True) for s in (1, -1)]
        pts_c = [c1 + u * ac - s * v * ar for u, v in zip(us, vs, strict=True) for s in (1, -1)]
        # Inside the box the outline is made of the two drop circles and the two
        # fillet circles (the trapezoid's own sides lie inside the drops or fillets).
        fillets = [
            (
                r1 + bridge.centre_u * ar + s * bridge.centre_v * ac,
                c1 + bridge.centre_u * ac - s * bridge.centre_v * ar,
                bridge.fillet_radius,
            )
            for s in (1, -1)
        ]
        circles = [(r1, c1, scene.radius_1_px), (r2, c2, scene.radius_2_px), *fillets]
        box = (min(pts_r), max(pts_r), min(pts_c), max(pts_c))
        _resample_box(opacity, scene.inside, shape, *box, circles=circles)
    if scene.needle_width_px > 0:
        if scene.needle_drop == 1:
            (nr, nc), radius = scene.centre_1_px, scene.radius_1_px
        else:
            (nr, nc), radius = scene.centre_2_px, scene.radius_2_px
        half = scene.needle_width_px / 2
        # Where the needle's edges meet the drop's top; above that only the needle.
        top = nr - radius
        meet = nr - math.sqrt(max(radius**2 - half**2, 0.0))
        box_top = math.floor(top - 1.5) + 0.5  # a pixel edge above the drop's top
        opacity += rectangle_coverage(shape, -math.inf, box_top, nc - half, nc + half)
        _resample_box(opacity, scene.inside, shape, box_top + 1.0, meet, nc - half, nc + half)
    np.clip(opacity, 0.0, 1.0, out=opacity)
    spot = np.zeros(opacity.shape)
    if scene.spot_fraction > 0:
        spot += disc_coverage(shape, r1, c1, scene.spot_fraction * scene.radius_1_px)
        spot += disc_coverage(shape, r2, c2, scene.spot_fraction * scene.radius_2_px)
    return opacity, spot


def _cap_opacity(scene: CapScene, shape):
    s = scene.substrate_row_px
    cr, cc, radius = scene.centre_row_px, scene.centre_col_px, scene.sphere_radius_px
    drop = disc_coverage(shape, cr, cc, radius, below_row=s)
    band = rectangle_coverage(shape, s, s + scene.band_px, -math.inf, math.inf)
    if scene.reflectivity > 0:
        # Mirror of the drop in the surface: flip rows about s, then keep rows > s.
        mirror = disc_coverage(shape, 2 * s - cr, cc, radius) - disc_coverage(
            shape, 2 * s - cr, cc, radius, below_row=s
        )
        mirror = np.minimum(mirror, band)
        plate = band * (1.0 - scene.reflectivity) + mirror * scene.reflectivity
    else:
        plate = band * scene.plate_opacity
    opacity = np.clip(drop + plate, 0.0, 1.0)
    spot = np.zeros(opacity.shape)
    if scene.spot_fraction > 0 and scene.centre_height_px > scene.spot_fraction * radius:
        spot = disc_coverage(shape, cr, cc, scene.spot_fraction * radius, below_row=s)
    return opacity, spot


def _wetted_opacity(scene: WettedDiscScene, shape):
    r, c = scene.centre_px
    outline = disc_coverage(shape, r, c, scene.outline_radius_px)
    wetted = disc_coverage(shape, r, c, min(scene.contact_radius_px, scene.outline_radius_px))
    opacity = scene.outline_opacity * outline + (1.0 - scene.outline_opacity) * wetted
    return opacity, np.zeros(opacity.shape)


def render_opacity(scene, shape):
    """Opacity and bright-spot images of one scene.

    Parameters
    ----------
    scene : PairScene, CapScene, WettedDiscScene or SessileScene
    shape : tuple of int
        (M, N) of the frame.

    Returns
    -------
    opacity : (M, N) ndarray of float
        Fraction of each pixel's backlight that the scene blocks (the area
        coverage of the silhouette, weighted by the opacity of its parts).
    spot : (M, N) ndarray of float
        Area coverage of the drops' bright central spots.
    """
    if isinstance(scene, PairScene):
        return _pair_opacity(scene, shape)
    if isinstance(scene, CapScene):
        return _cap_opacity(scene, shape)
    if isinstance(scene, WettedDiscScene):
        return _wetted_opacity(scene, shape)
    from ._sessile import SessileScene, sessile_opacity

    if isinstance(scene, SessileScene):
        return sessile_opacity(scene, shape)
    raise TypeError(f"not a scene: {type(scene).__name__}")
