"""From a recording and its experiment to a radius series in SI units.

:func:`measure` prepares the analysis on the first frames (see
:mod:`dropkin.measure._prepare`), streams the recording in chunks through the
per-frame image analysis of :mod:`dropkin.vision` (see
:mod:`dropkin.measure._stream`), attaches an uncertainty and a status to
every frame, finds the contact instant, and converts pixels to metres.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .._version import __version__
from ..contact._estimate import estimate_contact
from ..contact._frames import relabel_before_contact
from ..contact._settled import fresh_gap, settled_gap
from ..errors import ExperimentError
from ..recording import LOSSY_CAUTION
from ..series import RadiusSeries
from ..status import status_names
from ._growth import growth_end, mark_after_growth
from ._options import DEFAULT_OPTIONS, MeasureOptions, checked_options
from ._prepare import Preparation, prepare
from ._relocate import relocate_near_contact
from ._stream import stream

__all__ = ["measure"]


@dataclass(frozen=True)
class _PixelFrames:
    """Every frame's measurement in pixels, as the chunks gave it (internal).

    Attributes
    ----------
    radius, radius_err : (F,) ndarray
        Neck or contact radius and its uncertainty (px).
    codes : (F,) ndarray of int8
        Status codes (see :mod:`dropkin.status`).
    edges : (F, 2, 2) ndarray
        Edge points (row, col) in the analysed region.
    gap : (F,) ndarray
        Gap before contact (px).
    angles : (F, 2) ndarray or None
        Apparent contact angles (degrees), side-view spreading only.
    level_radius : (F, L) ndarray
        The radius (px) at each of the other edge levels.
    """

    radius: np.ndarray
    radius_err: np.ndarray
    codes: np.ndarray
    edges: np.ndarray
    gap: np.ndarray
    angles: np.ndarray | None
    level_radius: np.ndarray


def measure(
    recording,
    experiment,
    *,
    options: MeasureOptions = DEFAULT_OPTIONS,
    progress: Callable[[int, int], None] | None = None,
    keep_edges: bool = False,
):
    # Over 80 lines only by its numpydoc docstring and the record's fields.
    """Measure the neck or contact radius in every frame of a recording.

    Parameters
    ----------
    recording : Recording
        The frames, with times and pixel size.
    experiment : Experiment
        Geometry, view and drops; its pixel size must be known (here or in
        the recording).
    options : MeasureOptions, optional
    progress : callable, optional
        Called as ``progress(frames_done, frames_total)``.
    keep_edges : bool, optional
        Also return the per-frame edge points (for overlays).

    Returns
    -------
    series : RadiusSeries
    extras : dict
        ``preparation``, ``contact`` (the :class:`ContactEstimate`) and, with
        `keep_edges`, ``edges`` ((F, 2, 2) px, in full-frame coordinates).

    Raises
    ------
    ExperimentError
        If the pixel size or the geometry is not known.
    MeasurementError
        If the drops are never found.
    """
    geometry, pixel = _geometry_and_pixel(recording, experiment)
    options = checked_options(options, recording.frame_shape)
    prep = prepare(
        recording,
        geometry=geometry,
        view=experiment.setup.view,
        options=options,
        contrast=experiment.recording.contrast,
    )
    if prep.pair is not None:
        # The drops may have moved or grown by the time they touch.
        prep = relocate_near_contact(recording, prep, options)
    px = _collect(recording, prep, options, progress)
    # In pixels: gaps below a tenth of a pixel count as closed. From a lossy
    # source the gap also stays closed once it has been for a few frames,
    # and an open reading that repeats the one before is a block the codec
    # held (see dropkin.contact._settled). Lossless frames keep every
    # reading: still drops repeat theirs honestly, and drops grown on
    # needles can read a closed gap on the final line of centres long
    # before they touch.
    gap = px.gap
    if getattr(recording, "lossy", None) is not None:
        gap = fresh_gap(settled_gap(gap, floor=0.1), floor=0.1)
    contact = estimate_contact(
        recording.times,
        px.radius,
        px.radius_err,
        status_names(px.codes),
        gap=gap,
        early_radius=_drop_radii_px(prep).min() / 3.0,
        gap_floor=0.1,
        mirror=bool(getattr(prep.spreading or prep.sessile, "mirror", False)),
    )
    status, early = relabel_before_contact(recording.times, status_names(px.codes), contact.time)
    end = _growth_end(recording, prep, px, status, contact)
    status = mark_after_growth(status, end)
    radius, radius_err, edges = px.radius.copy(), px.radius_err.copy(), px.edges.copy()
    angles = None if px.angles is None else px.angles.copy()
    level_radius = px.level_radius.copy()
    for values in (radius, radius_err, edges, angles, level_radius):
        if values is not None:
            values[early] = np.nan
    if options.roi is not None:
        edges += np.array([options.roi[0], options.roi[2]], dtype=np.float64)
    series = RadiusSeries(
        frame=np.asarray(recording.source_frames, dtype=np.int64),
        time=np.asarray(recording.times, dtype=np.float64),
        radius=radius * pixel,
        radius_err=radius_err * pixel,
        status=status,
        contact_time=contact.time,
        contact_time_err=contact.err,
        drop_radius=_drop_radius(experiment, prep, pixel),
        geometry=geometry,
        view=experiment.setup.view,
        frame_rate=recording.frame_rate,
        pixel_size=pixel,
        provenance=_provenance(recording, options),
        details=_details(recording, experiment, prep, options, contact, pixel, end),
        angles=angles,
        level_radii={
            level: level_radius[:, i] * pixel for i, level in enumerate(options.other_levels)
        },
        trigger_time=getattr(recording, "trigger_time", None),
    )
    extras = {"preparation": prep, "contact": contact}
    if keep_edges:
        extras["edges"] = edges
    return series, extras


def _geometry_and_pixel(recording, experiment):
    """The geometry and the pixel size (m), or ExperimentError if one is unknown."""
    geometry = experiment.setup.geometry
    if geometry is None:
        raise ExperimentError(
            "is needed to measure",
            key="setup.geometry",
            path=experiment.path,
            expected="coalescence, sessile-coalescence or spreading",
        )
    pixel = recording.pixel_size or experiment.recording.pixel_size
    if pixel is None:
        raise ExperimentError(
            "is needed to give radii in metres",
            key="recording.pixel_size",
            path=experiment.path or recording.path,
            expected='e.g. pixel_size = "5 um"',
        )
    return geometry, pixel


def _collect(recording, prep: Preparation, options, progress) -> _PixelFrames:
    """Every frame's measurement, the chunks streamed in order."""
    n = len(recording)
    radius = np.full(n, np.nan)
    radius_err = np.full(n, np.nan)
    codes = np.zeros(n, dtype=np.int8)
    edges = np.full((n, 2, 2), np.nan)
    gap = np.full(n, np.nan)
    side_spreading = prep.spreading is not None and prep.spreading.view == "side"
    angles = np.full((n, 2), np.nan) if side_spreading else None
    level_radius = np.full((n, len(options.other_levels)), np.nan)
    for start, result in stream(recording, prep, options, progress):
        stop = start + len(result.radius)
        radius[start:stop] = result.radius
        radius_err[start:stop] = result.radius_err
        codes[start:stop] = result.status
        edges[start:stop] = result.edges
        gap[start:stop] = result.gap
        if angles is not None:
            angles[start:stop] = result.angles
        level_radius[start:stop] = result.level_radius
    return _PixelFrames(radius, radius_err, codes, edges, gap, angles, level_radius)


#: A lossy source's smallest resolved change of radius (px), for the growth's
#: end: an MPEG-4 key frame moves the edge by a pixel or two at once.
LOSSY_STEP_PX = 2.0


def _growth_end(recording, prep, px: _PixelFrames, status, contact):
    """Where the growth phase of two drops ends (a GrowthEnd), or None."""
    if prep.pair is None:
        return None
    free = prep.shift_correction  # free drops, not footprints seen from below
    lossy = getattr(recording, "lossy", None) is not None
    return growth_end(
        recording.times,
        px.radius,
        px.radius_err,
        status,
        contact.time,
        drop_radius=float(min(prep.pair.radii)) if free else None,
        step=LOSSY_STEP_PX if lossy else 0.5,
        lossy=lossy,
    )


def _drop_radii_px(prep) -> np.ndarray:
    if prep.sessile is not None:
        return prep.sessile.radii
    if prep.spreading is not None:
        return np.array([prep.spreading.drop_radius])
    return np.asarray(prep.pair.radii, dtype=np.float64)


def _drop_radius(experiment, prep, pixel: float) -> float:
    """The drop radius (m): the experiment's, else the mean of the circle fits."""
    drop_radius = experiment.drops.radius
    if drop_radius is None:
        drop_radius = float(np.mean(_drop_radii_px(prep))) * pixel
    return drop_radius


def _unresolved_criterion(prep, options) -> str:
    limit = f"{options.gap_blurs:g} edge blurs ({options.gap_blurs * prep.blur:.3g} px)"
    if prep.sessile is not None:
        return (
            f"notch beside the bridge, 2 rho = h (h + 2c) / (R_s - c - h), narrower than {limit},"
            " or the bridge lower than half of that"
        )
    if prep.spreading is not None:
        if prep.spreading.view == "bottom":
            return "not used in bottom view (the wetted disc is seen directly)"
        return (
            "apparent contact angle above 90 degrees and the air wedge beside the "
            f"contact point lower than {limit}"
        )
    return f"gap beside the neck r^2/2 (1/R0 + 1/R1) narrower than {limit}"


def _details(recording, experiment, prep, options, contact, pixel: float, end) -> dict:
    """The measurement's details, as written in ``measure.json``.

    The contact's time and error are fields of the series; its bracket and
    method come from the estimate's own file form (:meth:`ContactEstimate.to_dict`).
    `end` is the end of the growth phase (a :class:`GrowthEnd`), or None.
    """
    own = contact.to_dict()
    return {
        "drop_radii_m": [float(r) * pixel for r in _drop_radii_px(prep)],
        "drop_radius_origin": "experiment file" if experiment.drops.radius else "circle fit",
        "contact_bracket_s": own["contact_bracket_s"],
        "contact_method": own["contact_method"],
        "contact_signals": own["contact_signals"],
        "contact_disagreement": own["contact_disagreement"],
        "contrast": prep.contrast,
        "contrast_origin": prep.contrast_origin,
        "edge_level": options.level,
        "edge_levels": sorted([options.level, *options.other_levels]),
        "noise_transmission": prep.noise,
        "edge_blur_px": prep.blur,
        "unresolved_criterion": _unresolved_criterion(prep, options),
        "reference_frame": int(recording.source_frames[prep.reference_frame]),
        "growth_end_s": None if end is None else float(recording.times[end.index]),
        "growth_end_method": "" if end is None else end.method,
        "lossy_source": _lossy_source(recording),
    }


def _lossy_source(recording) -> dict | None:
    """``measure.json``'s note of a lossy source: what compression, and the caution."""
    lossy = getattr(recording, "lossy", None)
    return None if lossy is None else {"compression": lossy, "caution": LOSSY_CAUTION}


def _provenance(recording, options) -> dict:
    """Where the series comes from and how it was measured."""
    return {
        "tool": "dropkin",
        "version": __version__,
        "input": str(Path(recording.path).resolve()),
        "options": {
            "roi": None if options.roi is None else list(options.roi),
            "level": options.level,
            "chunk_size": options.chunk_size,
            "jobs": options.jobs,
            "gap_blurs": options.gap_blurs,
            "level_spread": options.level_spread,
            "background": "given image" if options.background is not None else "fitted",
        },
    }
