"""A drop spreading on a substrate: the contact line, side view or bottom view.

Side view: the substrate is a band across the bottom of the frame, the drop a
dark cap on it (before contact, a sphere above it); a reflective substrate
also shows the drop's mirror image below its surface, which is ignored. The
contact radius is half the distance between the two contact points on the
substrate line (see :mod:`dropkin.vision._substrate` for how they are found).

Bottom view, through a transparent substrate: the wetted disc is a darker
disc inside the drop's outline (the outline itself is the drop's widest
circle seen from below, or the wetted disc once the contact angle is below 90
degrees). The contact radius is the wetted disc's equivalent radius
``sqrt(A / pi)``, with the area ``A`` from the summed coverage of the pixels
(blur and pixel averaging move light between pixels but conserve the sum).

As for the neck (:mod:`dropkin.vision._neck`), :func:`find_spreading_drop`
works once on a reference frame and :func:`measure_contact_lines` on whole
chunks of frames, looking only at a thin strip above the substrate line (side
view) or an annulus around the wetted disc's edge (bottom view).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import ndimage, special
from skimage import measure as skmeasure

from ..errors import MeasurementError
from ._circle import CircleFit, fit_circle
from ._neck import AT_EDGE, BAND_LIMIT, BEFORE_CONTACT, NOT_FOUND, OK
from ._silhouette import threshold_midpoint
from ._substrate import (
    SubstrateLine,
    drop_above,
    find_substrate,
    fit_drop_above,
    measure_side,
    mirror_below,
    slope_blur,
    substrate_line,
)

__all__ = [
    "SpreadingSetup",
    "ContactLineResult",
    "find_spreading_drop",
    "measure_contact_lines",
    "spreading_background_mask",
]

VIEWS = ("side", "bottom")
#: Radial bin width (px) of the bottom view's profiles.
BIN = 0.25
#: Bottom view: crossing distances within this many sigmas of a single edge's
#: (1.349 sigma) count as no ring (interpolation between bins widens them by
#: about 0.01 sigma; see `_ring_widths`).
WIDTH_TOLERANCE = 0.03


@dataclass(frozen=True)
class SpreadingSetup:
    """Where the drop and the substrate are, from one reference frame (pixels).

    Attributes
    ----------
    view : str
        ``"side"`` or ``"bottom"``.
    drop : CircleFit
        Side view: the circle fitted to the drop's outline above the
        substrate (the sphere before contact, the cap's circle after).
        Bottom view: the drop's outline seen from below.
    centre : (2,) ndarray
        (row, col) of the drop axis: side view, where it meets the substrate
        line; bottom view, the centre of the drop's outline.
    tilt : float
        Side view: slope d(row)/d(col) of the substrate line, which passes
        through `centre`; 0 in bottom view.
    blur : float
        Edge blur, the sigma (px) of an equivalent Gaussian, measured across
        the drop's outline (see :func:`dropkin.vision.edge_blur`).
    background_level : float
        Transmission of the background beside the drop.
    drop_level : float
        Side view: transmission of the drop's dark rim. Bottom view: of the
        drop's outline outside the wetted disc (the ring).
    plate_level : float
        Side view: transmission of the substrate band away from the drop;
        NaN in bottom view.
    mirror : bool
        Side view: the band shows the drop's mirror image.
    in_contact : bool
        The reference frame already shows contact (side view: the drop's
        circle reaches the substrate; bottom view: a wetted disc).
    wetted : CircleFit or None
        Bottom view: the wetted disc in the reference frame, if any.
    wetted_level : float
        Bottom view: transmission of the wetted disc, NaN if the reference
        frame shows none (and in side view).
    """

    view: str
    drop: CircleFit
    centre: np.ndarray
    tilt: float
    blur: float
    background_level: float
    drop_level: float
    plate_level: float
    mirror: bool
    in_contact: bool
    wetted: CircleFit | None = None
    wetted_level: float = math.nan

    @property
    def substrate_row(self) -> float:
        """Side view: row of the substrate surface at the drop axis (NaN in bottom view)."""
        return float(self.centre[0]) if self.view == "side" else math.nan

    @property
    def axis_col(self) -> float:
        """Column of the drop axis."""
        return float(self.centre[1])

    @property
    def drop_radius(self) -> float:
        """Radius (px) of the drop's circle (see `drop`)."""
        return float(self.drop.radius)


@dataclass(frozen=True)
class ContactLineResult:
    """Contact-line measurements for a chunk of frames (pixels).

    Attributes
    ----------
    radius : (K,) ndarray
        Contact radius (px): side view, half the distance between the two
        contact points; bottom view, ``sqrt(A / pi)`` of the wetted area.
        NaN where there is no measurement.
    radius_err : (K,) ndarray
        Its standard uncertainty (px), from the fit's scatter and the image
        noise, at least 0.1 px.
    edges : (K, 2, 2) ndarray
        Two contact points (row, col) per frame: side view, the left and
        right ends of the contact line on the substrate; bottom view, the
        ends of the wetted disc's horizontal diameter.
    status : (K,) ndarray of int8
        Codes into :data:`dropkin.vision.STATUS_NAMES`.
    gap : (K,) ndarray
        Side view: the gap (px) between the drop and the substrate on the
        axis, as conserved transmission (sub-pixel gaps still show); about
        zero once in contact; NaN where not measurable. NaN in bottom view.
    angles : (K, 2) ndarray
        Side view: apparent contact angle (degrees, inside the liquid) at the
        left and right contact points, from the local fit of the outline;
        NaN where there is no measurement and in bottom view.
    """

    radius: np.ndarray
    radius_err: np.ndarray
    edges: np.ndarray
    status: np.ndarray
    gap: np.ndarray
    angles: np.ndarray


def _check_view(view):
    if view not in VIEWS:
        raise ValueError(f"view must be 'side' or 'bottom', got {view!r}")


def find_spreading_drop(trans, *, view: str, level: float = 0.5) -> SpreadingSetup:
    """Locate the substrate and the drop (side view) or the drop's outline (bottom view).

    Parameters
    ----------
    trans : (M, N) ndarray
        Transmission frame (about 0 in the drop's dark rim, 1 on the
        background), preferably one taken before contact.
    view : {"side", "bottom"}
        How the drop is filmed.
    level : float, optional
        Edge level, as the fraction of the way from the dark level to the
        background (one half: the midpoint of a blurred edge).

    Returns
    -------
    SpreadingSetup

    Raises
    ------
    MeasurementError
        If no substrate or no drop is found.

    Notes
    -----
    Side view: the substrate's top edge is the largest fall, going down, of
    a row profile of the frame (the 75th percentile across the columns, so a
    drop narrower than three quarters of the frame does not show in it); in
    every column away from the drop the edge's sub-pixel row is where the
    transmission crosses the midpoint between background and band, and a
    straight line is fitted to them. The drop is the largest dark region
    above the line; a circle is fitted to its sub-pixel outline (marching
    squares) leaving out the points within a few blur sigmas of the line and
    everything below it (the mirror image).

    Bottom view: the drop is the largest region darker than the background,
    its outline is fitted with a circle; a wetted disc, if any, is the region
    darker than the drop's ring. A frame in which the wetted disc fills the
    whole outline (contact angle below 90 degrees) shows one level only,
    which is taken for the ring: use a frame from before contact, or one that
    still shows the ring. The blur is the 25-75 % width of the outline's
    radial profile averaged over the whole circle (over 1.349), which noise
    does not bias; the bottom view's ring-width model relies on it.

    Examples
    --------
    >>> rows, cols = np.mgrid[0:60, 0:80]
    >>> trans = np.ones((60, 80))
    >>> trans[rows >= 45] = 0.2                                      # the substrate band
    >>> trans[(rows - 30.0) ** 2 + (cols - 40.0) ** 2 <= 12.0**2] = 0.0  # the drop, above it
    >>> setup = find_spreading_drop(trans, view="side")
    >>> round(setup.substrate_row, 2), round(setup.axis_col, 1), setup.in_contact
    (44.5, 40.0, False)
    """
    _check_view(view)
    trans = np.asarray(trans, dtype=np.float64)
    if trans.ndim != 2:
        raise ValueError(f"trans must be a 2-D array, got shape {trans.shape}")
    if not 0.0 < level < 1.0:
        raise ValueError(f"level must lie between 0 and 1, got {level}")
    if view == "side":
        return _find_side(trans, level)
    return _find_bottom(trans, level)


def _find_side(trans, level):
    m, n = trans.shape
    step, background, plate = find_substrate(trans)
    above = trans[: max(step - 1, 1)]
    t_drop = float(np.percentile(above, 0.5))
    if not background - t_drop > 0.2 * max(abs(background), 1e-6):
        raise MeasurementError("no drop found above the substrate (no dark region)")
    threshold = t_drop + level * (background - t_drop)
    # The line, first from all columns (the drop's columns fall out as outliers),
    # then from the columns away from the drop.
    first = substrate_line(
        trans,
        step,
        background,
        plate,
        np.zeros(n, dtype=bool),
        axis_col=0.5 * (n - 1),
        half_window=12,
    )
    region = drop_above(trans, first, threshold, clearance=2.0)
    if region is None:
        raise MeasurementError("no drop found above the substrate")
    cols_of_drop = region.any(axis=0)
    cols_of_drop = np.convolve(cols_of_drop, np.ones(9), mode="same") > 0
    axis_guess = float(np.nonzero(region.any(axis=0))[0].mean())
    line = substrate_line(trans, step, background, plate, cols_of_drop, axis_col=axis_guess)
    circle = fit_drop_above(trans, line, region, threshold, t_drop, background, clearance=5.0)
    blur = slope_blur(
        trans,
        circle,
        t_drop,
        background,
        keep=lambda rows, cols: line.heights(rows, cols).min() >= 5.0,
    )
    clearance = max(5.0, 3.0 * blur + 2.0)
    if clearance > 5.0:
        circle = fit_drop_above(
            trans, line, region, threshold, t_drop, background, clearance=clearance
        )
    axis_col = float(circle.centre[1])
    line = SubstrateLine(float(line.rows(axis_col)), axis_col, line.tilt)
    mirror = mirror_below(trans, line, circle, plate, t_drop, blur=blur)
    bottom = circle.centre[0] + circle.radius
    in_contact = bool(line.row0 - bottom < 0.5)
    return SpreadingSetup(
        view="side",
        drop=circle,
        centre=np.array([line.row0, axis_col]),
        tilt=line.tilt,
        blur=blur,
        background_level=background,
        drop_level=t_drop,
        plate_level=plate,
        mirror=mirror,
        in_contact=in_contact,
    )


def spreading_background_mask(shape, setup: SpreadingSetup):
    """Pixels that show only the backlight, for refitting the illumination.

    :func:`dropkin.vision.fit_illumination` takes by default every pixel
    brighter than Otsu's threshold as background; a reflective substrate (side
    view) is that bright, and a backlight fitted through it is off by several
    per cent near the substrate, which moves the contact points inward (on
    synthetic recordings with a reflectivity of 0.6: by 0.06 px on average
    for a 30 px drop, 0.14 px for a 60 px drop; 0.01 px with this mask). This
    mask keeps only what the reference frame shows of the background: side
    view, the rows more than ``3 blur + 2`` px above the substrate line, less
    the drop's circle grown by ``3 blur + 3`` px; bottom view, the outside of
    the drop's outline grown likewise.

    Parameters
    ----------
    shape : tuple of int
        (M, N) of the frames.
    setup : SpreadingSetup

    Returns
    -------
    mask : (M, N) ndarray of bool

    Examples
    --------
    >>> rows, cols = np.mgrid[0:60, 0:80]
    >>> trans = np.ones((60, 80))
    >>> trans[rows >= 45] = 0.7
    >>> trans[(rows - 30.0) ** 2 + (cols - 40.0) ** 2 <= 12.0**2] = 0.0
    >>> mask = spreading_background_mask(trans.shape, find_spreading_drop(trans, view="side"))
    >>> bool(mask[5, 5]), bool(mask[30, 40]), bool(mask[50, 5])
    (True, False, False)
    """
    m, n = (int(v) for v in shape)
    rows, cols = np.mgrid[0:m, 0:n]
    grow = 3.0 * setup.blur + 3.0
    centre, radius = setup.drop.centre, setup.drop.radius
    outside = np.hypot(rows - centre[0], cols - centre[1]) > radius + grow
    if setup.view == "bottom":
        return outside
    line = SubstrateLine(setup.substrate_row, setup.axis_col, setup.tilt)
    return outside & (line.heights(rows, cols) > 3.0 * setup.blur + 2.0)


def measure_contact_lines(
    frames,
    setup: SpreadingSetup,
    *,
    illumination,
    dark: float,
    noise: float,
    level: float = 0.5,
    gap_blurs: float = 3.0,
) -> ContactLineResult:
    """Contact radius in each frame of a chunk, looking only near the contact line.

    Parameters
    ----------
    frames : (K, M, N) ndarray
        Raw frames.
    setup : SpreadingSetup
        From :func:`find_spreading_drop`.
    illumination : (M, N) ndarray
        Backlight model (see :func:`dropkin.vision.fit_illumination`).
    dark : float
        Grey level of a fully dark drop (side view) or of the wetted disc
        (bottom view; there only a fallback for the wetted disc's level, see
        Notes).
    noise : float
        Transmission noise on the background.
    level : float, optional
        Edge level, as for :func:`find_spreading_drop`.
    gap_blurs : float, optional
        Side view: the contact point counts as resolved once the air wedge
        beside it is this many blur sigmas high (see Notes).

    Returns
    -------
    ContactLineResult

    Notes
    -----
    *Statuses.* ``before-contact`` while a bright gap shows on the drop axis
    between drop and substrate (side view; a gap narrower than about 1.2
    blur sigmas does not show, and such a frame is ``unresolved``) or while
    no wetted disc darker than the drop's ring shows at the centre (bottom
    view); ``at-edge`` if the drop reaches the frame border near the contact
    line (side view: a row of the strip dark at the frame border, or a
    contact point outside the frame; bottom view: the pixels needed for the
    area run off the frame); ``not-found`` if nothing dark is seen;
    ``unresolved`` (side view only) see below.

    *Resolution (side view).* While the apparent contact angle exceeds 90
    degrees the drop overhangs its contact line, and between its underside
    and the substrate lies an air wedge. For a sphere of radius R cut by the
    substrate at the contact radius a, the underside's height a distance a
    beyond the contact point is ``z - sqrt(R**2 - 4 a**2)`` (z the height of
    the sphere's centre), about ``3 a**2 / (2 R)`` for small a; beyond the
    sphere's widest point there is no overhang and the wedge counts as open.
    It is computed from the circle fitted on each side. While it is below
    ``gap_blurs`` blur sigmas on either side (the angle there being above 90
    degrees) the contact point is extrapolated from outline points far from
    it along an outline nearly tangent to the substrate, and the frame is
    ``unresolved`` (its radius is still given). Calibration on 1,316
    synthetic frames (``dropkin.synth``: drops of 30, 60, 100 px, blur sigma
    0 to 3 px, opaque and reflective plates, 8-bit noise, the truth's wedge
    at least 3 sigmas): mean error -0.05 px, RMS 0.21 px, 5 % beyond 0.5 px,
    largest 1.3 px (a 30 px drop under a 3 px blur). At 2 sigmas: RMS 0.25
    px, largest 1.8 px; wedges of 1 to 2 sigmas: RMS 0.8 px, up to 4.5 px.

    *Bottom view.* The contact radius is ``sqrt(A / pi)``. While the drop's
    outline lies well outside the wetted disc (the two edge-level crossings
    of the radial profile at least ``4 sigma + 2`` px apart) ``A`` sums the
    wetted fraction ``(T_ring - T) / (T_ring - T_wet)`` of every pixel out
    to the middle of the ring (pixels further in count whole). Closer, the
    two blurred edges overlap: the sum of ``T_bg - T`` over the whole drop is
    ``pi (q a**2 + p b**2)`` (q, p the wetted disc's and the ring's steps,
    b = a + d the outline), and the ring width d follows from the distance
    between the crossings for two Gaussian-blurred concentric steps (0 once
    the contact angle is below 90 degrees and the outline is the wetted
    disc). The wetted disc's level is read inside the disc where it is
    larger than a few blurs, else taken from other frames of the chunk, the
    setup, or, last, the caller's `dark`.
    """
    frames = np.asarray(frames)
    if frames.ndim != 3:
        raise ValueError(f"frames must be (K, M, N), got shape {frames.shape}")
    if frames.shape[1:] != np.shape(illumination):
        raise ValueError(
            f"illumination has shape {np.shape(illumination)}, frames are {frames.shape[1:]}"
        )
    if setup.view == "side":
        return _measure_side_chunk(
            frames,
            setup,
            illumination=illumination,
            dark=dark,
            noise=noise,
            level=level,
            gap_blurs=gap_blurs,
        )
    return _measure_bottom_chunk(
        frames, setup, illumination=illumination, dark=dark, noise=noise, level=level
    )


def _wedge_distance(radius):
    """Distance beyond the contact point at which the wedge is judged: the contact radius."""
    return np.maximum(np.nan_to_num(radius, nan=0.0), 0.0)


def _measure_side_chunk(frames, setup, **settings):
    k, m, n = frames.shape
    sigma = setup.blur

    def run(sub, col_range):
        return measure_side(
            sub, setup, col_range=col_range, wedge_distance=_wedge_distance, **settings
        )

    probe = run(frames[-1:], None)
    ext = probe["extent"][0]
    if np.all(np.isfinite(ext)):
        half = max(setup.axis_col - ext[0], ext[1] - setup.axis_col)
    else:
        half = setup.drop_radius
    half += 3.0 * sigma + 8.0
    c0 = int(max(np.floor(setup.axis_col - half), 0))
    c1 = int(min(np.ceil(setup.axis_col + half) + 1, n))
    result = run(frames, (c0, c1))
    redo = result["status"] == BAND_LIMIT
    if redo.any():
        again = run(frames[redo], None)
        for name in ("radius", "radius_err", "edges", "status", "gap", "angles"):
            result[name][redo] = again[name]
    status = result["status"]
    status[status == BAND_LIMIT] = NOT_FOUND
    return ContactLineResult(
        radius=result["radius"],
        radius_err=result["radius_err"],
        edges=result["edges"],
        status=status,
        gap=result["gap"],
        angles=result["angles"],
    )


# --- bottom view --------------------------------------------------------------------------


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
    c25 = _crossing_outward(frac[None], centres, np.array([0.25]), np.zeros(1, np.intp))[0]
    c75 = _crossing_inward(frac[None], centres, np.array([0.75]))[0]
    width = c75 - c25
    if not (np.isfinite(width) and width > 0):
        return guess
    return max(float(width) / 1.349, 0.3)


def _find_bottom(trans, level):
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


def _trans_at(frames_flat, illumination_flat, dark, index):
    """Transmission (K, P) of the frames (K, M * N) at flat pixel indices (P,)."""
    d32 = np.float32(dark)
    span = np.maximum(illumination_flat[index] - d32, 1e-6)
    return (frames_flat[:, index].astype(np.float32) - d32) / span


def _coarse_profiles(frames_flat, illumination_flat, dark, centre, shape, reach, rays=16):
    """Median over `rays` rays of the transmission at whole-pixel radii 0 .. reach - 1."""
    rho = np.arange(reach, dtype=np.float64)
    angle = (np.arange(rays) + 0.5) * (2 * np.pi / rays)
    rows = np.rint(centre[0] + np.sin(angle)[:, None] * rho).astype(np.intp)
    cols = np.rint(centre[1] + np.cos(angle)[:, None] * rho).astype(np.intp)
    index = rows * shape[1] + cols
    trans = _trans_at(frames_flat, illumination_flat, dark, index.ravel())
    return np.median(trans.reshape(len(frames_flat), rays, reach), axis=1)


def _crossing_outward(profile, rho, level, start):
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


def _crossing_inward(profile, rho, level):
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


def _segments(starts, stops):
    """Concatenated ranges ``starts[i] .. stops[i] - 1``.

    Returns the segment of each element, its value, and where each segment
    begins in the concatenation.
    """
    lengths = np.maximum(stops - starts, 0)
    owner = np.repeat(np.arange(len(starts)), lengths)
    offsets = np.cumsum(lengths) - lengths
    return owner, np.arange(int(lengths.sum())) - offsets[owner] + starts[owner], offsets


def _masked_median(values, mask):
    """Row-wise median of `values` where `mask`; NaN for rows without any."""
    out = np.full(len(values), np.nan)
    for i in np.nonzero(mask.any(axis=1))[0]:
        out[i] = np.median(values[i, mask[i]])
    return out


def _ring_widths(p, q, level):
    """Distance between the two edge-level crossings of a wetted edge and a ring.

    The radial profile across the wetted disc's edge (at 0) and the outline
    (at d, both in blur sigmas) is modelled as ``q Phi(x) + p Phi(x - d)``
    above the wetted level (q the wetted disc's step to the ring, p the ring's
    step to the background, Phi the normal distribution function): a
    Gaussian-blurred two-step edge. Its crossings of the edge levels ``level
    q`` and ``q + level p`` are found by bisection for a grid of d.

    Returns
    -------
    d, width : (G,) ndarray
        Ring widths and the crossing distances (sigmas), `width` increasing.
    """
    d = np.linspace(0.0, 8.0, 161)

    def crossing(target):
        lo, hi = np.full(d.shape, -8.0), d + 8.0
        for _ in range(40):
            mid = 0.5 * (lo + hi)
            above = q * special.ndtr(mid) + p * special.ndtr(mid - d) >= target
            lo, hi = np.where(above, lo, mid), np.where(above, mid, hi)
        return 0.5 * (lo + hi)

    width = crossing(q + level * p) - crossing(level * q)
    return d, np.maximum.accumulate(width)


def _measure_bottom_chunk(frames, setup, *, illumination, dark, noise, level):
    k, m, n = frames.shape
    sigma = float(setup.blur)
    centre = np.asarray(setup.centre, dtype=np.float64)
    flat = frames.reshape(k, -1)
    ill = np.asarray(illumination, dtype=np.float32).ravel()
    t_bg, t_ring = float(setup.background_level), float(setup.drop_level)
    step = max(t_bg - t_ring, 1e-6)
    reach = int(np.floor(min(centre[0], m - 1 - centre[0], centre[1], n - 1 - centre[1])))
    status = np.full(k, OK, dtype=np.int8)
    radius = np.full(k, np.nan)
    radius_err = np.full(k, np.nan)
    edges = np.full((k, 2, 2), np.nan)
    nan2 = np.full((k, 2), np.nan)
    if reach < 4:
        status[:] = AT_EDGE
        return ContactLineResult(radius, radius_err, edges, status, np.full(k, np.nan), nan2)

    # Coarse pass, along rays: the outline, whether a wetted disc shows, and its size.
    coarse = _coarse_profiles(flat, ill, dark, centre, (m, n), reach)
    rho = np.arange(reach, dtype=np.float64)
    mid_out = np.full(k, t_ring + level * step)
    outline = _crossing_inward(coarse, rho, mid_out)
    dip = max(0.15 * step, 5.0 * noise)
    wet_seen = coarse[:, :3].mean(axis=1) < t_ring - dip
    wet_coarse = _crossing_outward(coarse, rho, np.full(k, t_ring - dip), np.zeros(k, np.intp))
    nothing = ~(coarse < mid_out[:, None]).any(axis=1)

    margin = 3.0 * sigma + 4.0
    # A wetted disc that does not end within the rays' reach runs off the frame.
    wet0 = np.where(wet_seen & np.isnan(wet_coarse), np.inf, np.nan_to_num(wet_coarse, nan=0.0))
    # The outline beyond the rays' reach (the drop runs off the frame) counts as far.
    out0 = np.where(coarse[:, -1] < mid_out, np.inf, np.nan_to_num(outline, nan=0.0))
    # With a ring clearly wider than needed (see `wide` below) the outline is not
    # used, and only the wetted edge must lie inside the frame.
    with np.errstate(invalid="ignore"):
        clear = (out0 - wet0 > 6.0 * sigma + 2.0 * margin) & np.isfinite(wet0)
    lo = np.maximum(wet0 - margin, 0.0)
    hi_in = wet0 + margin
    hi = np.where(clear, hi_in, np.fmax(wet0, out0) + margin)
    measure = wet_seen & ~nothing & (hi < reach)
    status[nothing] = NOT_FOUND
    status[~nothing & ~wet_seen] = BEFORE_CONTACT
    status[~nothing & wet_seen & ~measure] = AT_EDGE
    gap = np.full(k, np.nan)
    if not measure.any():
        return ContactLineResult(radius, radius_err, edges, status, gap, nan2)

    # Fine pass: every pixel of an annulus around each frame's wetted edge, and
    # one around the outline (the two merge when the ring is narrow).
    idx = np.nonzero(measure)[0]
    lo, hi, hi_in, clear = lo[idx], hi[idx], np.minimum(hi_in[idx], hi[idx]), clear[idx]
    lo_out = np.where(clear, hi_in, np.maximum(out0[idx] - margin, hi_in))
    # Annulus limits on the grid of radial bins, so that every bin is whole.
    b_lo = np.floor(lo / BIN).astype(np.intp)
    b_hi_in = np.ceil(hi_in / BIN).astype(np.intp)
    b_lo_out = np.maximum(np.floor(lo_out / BIN).astype(np.intp), b_hi_in)
    b_hi = np.maximum(np.ceil(hi / BIN).astype(np.intp), b_lo_out)
    top = float(b_hi.max() * BIN)
    r0, r1 = int(max(np.floor(centre[0] - top), 0)), int(min(np.ceil(centre[0] + top) + 1, m))
    c0, c1 = int(max(np.floor(centre[1] - top), 0)), int(min(np.ceil(centre[1] + top) + 1, n))
    rr, cc = np.mgrid[r0:r1, c0:c1]
    dist = np.hypot(rr - centre[0], cc - centre[1]).ravel()
    keep = dist < top
    order = np.argsort(dist[keep], kind="stable")
    pix = (rr.ravel() * n + cc.ravel())[keep][order]
    dist = dist[keep][order]
    gbin = (dist / BIN).astype(np.intp)  # radial bin of each pixel, nearest first
    n_global = int(b_hi.max()) + 1
    g_count = np.bincount(gbin, minlength=n_global)[:n_global]
    g_centre = np.bincount(gbin, weights=dist, minlength=n_global)[:n_global] / np.maximum(
        g_count, 1
    )
    first_of = np.searchsorted(gbin, np.arange(n_global + 1))
    start = first_of[b_lo]
    # The pixels of all frames' annuli in one flat list, with their owner frame.
    start_out = first_of[b_lo_out]
    owner, pos, offset = _segments(
        np.concatenate([start, start_out]), np.concatenate([first_of[b_hi_in], first_of[b_hi]])
    )
    owner %= len(idx)
    d32 = np.float32(dark)
    span = np.maximum(ill[pix] - d32, 1e-6)
    values = frames.reshape(-1)[idx[owner] * (m * n) + pix[pos]]
    trans = (values.astype(np.float32) - d32) / span[pos]

    # Radial profile in quarter-pixel bins: each bin is a run of the flat list,
    # its sum a difference of the running sum.
    nbins = int((b_hi - b_lo).max())
    g = b_lo[:, None] + np.arange(nbins)[None, :]
    inner_bin = g < b_hi_in[:, None]
    present = inner_bin | ((g >= b_lo_out[:, None]) & (g < b_hi[:, None]))
    g = np.minimum(g, n_global - 1)
    count = np.where(present, g_count[g], 0)
    first = np.where(
        inner_bin,
        offset[: len(idx), None] + first_of[g] - start[:, None],
        offset[len(idx) :, None] + first_of[g] - start_out[:, None],
    )
    running = np.concatenate([[0.0], np.cumsum(trans, dtype=np.float64)])
    first = np.clip(first, 0, len(trans))
    t_sum = running[np.clip(first + count, 0, len(trans))] - running[first]
    profile = t_sum / np.maximum(count, 1)
    centres = g_centre[g]
    empty = count == 0
    # Empty bins (near the centre, where pixels are sparse, and past a frame's own
    # annulus) take the value of the nearest filled bin before them, or after them.
    cols = np.arange(nbins)[None, :]
    last = np.maximum.accumulate(np.where(empty, 0, cols), axis=1)
    first = np.argmax(~empty, axis=1)[:, None]
    src = np.where(empty & (cols < first), first, np.where(empty, last, cols))
    profile = np.take_along_axis(profile, src, axis=1)
    centres = np.where(empty, BIN * (g + 0.5), centres)

    # Levels: the wetted disc inside, the background outside (per frame where seen).
    inner = (centres < (wet_coarse[idx] - 2.0 * sigma - 2.0)[:, None]) & ~empty
    t_wet = _masked_median(profile, inner)
    if np.isfinite(t_wet).any():
        fallback = float(np.nanmedian(t_wet))
    elif math.isfinite(setup.wetted_level):
        fallback = float(setup.wetted_level)
    else:
        fallback = 0.0  # the caller's dark level: a fully dark wetted disc
    t_wet = np.where(np.isfinite(t_wet), t_wet, fallback)
    contrast = t_ring - t_wet
    usable = contrast > 0.2 * step
    outer = (centres > (hi - 1.5)[:, None]) & ~empty
    bg_local = _masked_median(profile, outer)
    t_bg_k = np.where(np.isfinite(bg_local) & (bg_local > t_ring + level * step), bg_local, t_bg)

    c_lo = _crossing_outward(
        profile, centres, t_wet + level * contrast, np.zeros(len(idx), np.intp)
    )
    c_hi = _crossing_inward(profile, centres, t_ring + level * (t_bg_k - t_ring))
    width = np.where(clear, np.inf, c_hi - c_lo)
    wide = width >= 4.0 * sigma + 2.0
    # Area by summed coverage. With a resolved ring, the wetted fraction of each
    # pixel is (T_ring - T) / (T_ring - T_wet), summed out to the ring's middle;
    # pixels inside `lo` count whole. Otherwise the sum of (T_bg - T) out past the
    # outline is the whole drop: q a^2 + p b^2 (times pi; q = T_ring - T_wet,
    # p = T_bg - T_ring, b = a + d the outline), with the ring width d from the
    # distance of the two edge-level crossings (see `_ring_widths`); d = 0, no
    # ring, once the contact angle is below 90 degrees.
    ring_end = np.fmin(c_lo + 3.0 * sigma + 2.0, 0.5 * (c_lo + c_hi))
    ref = np.where(wide, t_ring, t_bg_k)
    limit = np.where(wide, ring_end, hi)
    # Whole bins inside the limit (it lies on a plateau, where the terms vanish).
    use = (g + 1) * BIN <= limit[:, None]
    deficit = np.where(use, count * (ref[:, None] - profile), 0.0).sum(axis=1)
    q_step = np.maximum(t_ring - t_wet, 1e-6)
    p_step = np.maximum(t_bg_k - t_ring, 0.0)
    d_grid, w_grid = _ring_widths(float(np.median(p_step)), float(np.median(q_step)), level)
    ring = sigma * np.interp(
        np.nan_to_num(width, nan=0.0, posinf=1e6) / sigma - WIDTH_TOLERANCE, w_grid, d_grid
    )
    whole = start * (ref - t_wet) + deficit  # pi (q a^2 + p b^2), or pi q a^2 when wide
    a_ring = np.sqrt(np.maximum(start + deficit / q_step, 0.0) / math.pi)
    # (p + q) a^2 + 2 p d a + p d^2 = whole / pi, for a:
    pq = p_step + q_step
    disc = (p_step * ring) ** 2 - pq * (p_step * ring**2 - whole / math.pi)
    a_mass = (-p_step * ring + np.sqrt(np.maximum(disc, 0.0))) / pq
    a_all = np.where(wide, a_ring, a_mass)
    used = np.maximum(np.where(use, count, 0).sum(axis=1), 1)
    err = noise * np.sqrt(used) / q_step / (2 * math.pi * np.maximum(a_all, 1.0))
    # A ring narrower than about two sigmas is poorly determined by the width:
    # allow for a tenth of a sigma in its share of the outline.
    err = np.where(wide, err, np.hypot(err, 0.1 * sigma))
    good = np.isfinite(a_all) & usable & np.isfinite(c_lo)
    radius[idx] = np.where(good, a_all, np.nan)
    radius_err[idx] = np.where(good, np.hypot(err, 0.1), np.nan)
    status[idx[~good]] = NOT_FOUND
    edges[idx, 0, 0] = edges[idx, 1, 0] = centre[0]
    edges[idx, 0, 1] = centre[1] - radius[idx]
    edges[idx, 1, 1] = centre[1] + radius[idx]
    return ContactLineResult(radius, radius_err, edges, status, gap, nan2)
