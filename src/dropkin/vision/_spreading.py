"""A drop spreading on a substrate: the contact line, side view or bottom view.

Side view: the substrate is a band across the bottom of the frame, the drop a
dark cap on it (before contact, a sphere above it); a reflective substrate
also shows the drop's mirror image below its surface, which is ignored. The
contact radius is half the distance between the two contact points on the
substrate line (see :mod:`dropkin.vision._substrate` for how they are found,
and :mod:`dropkin.vision._side` for how they are measured in every frame).

Bottom view, through a transparent substrate: the wetted disc is a darker
disc inside the drop's outline (the outline itself is the drop's widest
circle seen from below, or the wetted disc once the contact angle is below 90
degrees). The contact radius is the wetted disc's equivalent radius
``sqrt(A / pi)``, with the area ``A`` from the summed coverage of the pixels
(blur and pixel averaging move light between pixels but conserve the sum; see
:mod:`dropkin.vision._wetted` and :mod:`dropkin.vision._wetted_area`).

As for the neck (:mod:`dropkin.vision._neck`), :func:`find_spreading_drop`
works once on a reference frame and :func:`measure_contact_lines` on whole
chunks of frames, looking only at a thin strip above the substrate line (side
view) or an annulus around the wetted disc's edge (bottom view).
"""

from __future__ import annotations

import numpy as np

from ..errors import MeasurementError
from ._band import BAND_LIMIT, redone
from ._side import measure_side
from ._spreading_records import ContactLineResult, SpreadingSetup, check_view
from ._substrate import (
    SubstrateLine,
    drop_above,
    find_substrate,
    fit_drop_above,
    mirror_below,
    slope_blur,
    substrate_line,
)
from ._wetted import find_bottom
from ._wetted_area import measure_bottom_chunk

__all__ = [
    "SpreadingSetup",
    "ContactLineResult",
    "find_spreading_drop",
    "measure_contact_lines",
    "spreading_background_mask",
]


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
    check_view(view)
    trans = np.asarray(trans, dtype=np.float64)
    if trans.ndim != 2:
        raise ValueError(f"trans must be a 2-D array, got shape {trans.shape}")
    if not 0.0 < level < 1.0:
        raise ValueError(f"level must lie between 0 and 1, got {level}")
    if view == "side":
        return _find_side(trans, level)
    return find_bottom(trans, level)


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
    levels=(),
) -> ContactLineResult:
    # Long only by its notes (statuses, resolution, bottom view); the code dispatches.
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
    levels : sequence of float, optional
        Other edge levels at which the contact radius is measured too, in
        the same pass (``level_radius`` of the result): side view, the
        outline's crossings of each level in the same strip, fitted alike;
        bottom view, the area's model at each level on the same profiles.

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
            levels=tuple(levels),
        )
    return measure_bottom_chunk(
        frames,
        setup,
        illumination=illumination,
        dark=dark,
        noise=noise,
        level=level,
        levels=tuple(levels),
    )


def _wedge_distance(radius):
    """Distance beyond the contact point at which the wedge is judged: the contact radius."""
    return np.maximum(np.nan_to_num(radius, nan=0.0), 0.0)


def _measure_side_chunk(frames, setup, **settings):
    """Side view: the chunk on a strip as wide as the last frame's drop, and again
    on the whole width for the frames whose drop reaches the strip's ends."""
    n = frames.shape[2]
    sigma = setup.blur

    def run(sub, col_range):
        return measure_side(
            sub, setup, col_range=col_range, wedge_distance=_wedge_distance, **settings
        )

    probe = run(frames[-1:], None)
    # The outline's outermost points in the fit window, or the contact points
    # if further out (at small angles the window's lowest row meets the
    # outline many pixels inside them).
    ext = np.concatenate([probe.extent[0], probe.edges[0, :, 1]])
    if np.all(np.isfinite(ext[:2])):
        half = np.nanmax(np.abs(ext - setup.axis_col))
    else:
        half = setup.drop_radius
    half += 3.0 * sigma + 8.0
    c0 = int(max(np.floor(setup.axis_col - half), 0))
    c1 = int(min(np.ceil(setup.axis_col + half) + 1, n))
    result = run(frames, (c0, c1))
    redo = result.status == BAND_LIMIT
    again = run(frames[redo], None) if redo.any() else None
    names = ("radius", "radius_err", "edges", "status", "gap", "angles", "level_radius")
    return ContactLineResult(**redone(result, again, redo, names))
