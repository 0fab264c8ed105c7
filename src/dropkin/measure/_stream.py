"""From a recording and its experiment to a radius series in SI units.

:func:`measure` prepares the analysis on the first frames (the backlight, the
dark level, the noise, the drops' geometry), then streams the recording in
chunks through the per-frame image analysis of :mod:`dropkin.vision`,
optionally in parallel processes, attaches an uncertainty and a status to
every frame, finds the contact instant, and converts pixels to metres.
"""

from __future__ import annotations

import dataclasses
import hashlib
import math
import pickle
from collections.abc import Callable
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

import numpy as np

from .. import vision
from .._version import __version__
from ..contact._estimate import estimate_contact
from ..errors import ExperimentError, MeasurementError
from ..series import RadiusSeries

__all__ = ["MeasureOptions", "Preparation", "measure", "prepare", "recording_sha256"]


@dataclasses.dataclass(frozen=True)
class MeasureOptions:
    """Settings of a measurement (all optional).

    Attributes
    ----------
    roi : tuple of int or None
        Region of interest (row_start, row_stop, col_start, col_stop), in
        pixels of the full frame; only this part of each frame is analysed.
    level : float
        Edge level: the fraction of the way from the drops' dark level to the
        local background at which the outline lies (0.5, the midpoint of a
        blurred edge, unless a recording needs another by hand).
    chunk_size : int
        Frames per chunk (memory holds a few chunks at most).
    jobs : int
        Worker processes for the chunks (1: in this process).
    gap_blurs : float
        The neck counts as resolved once the gap beside it is this many edge
        blurs (sigma, px) wide; see :func:`dropkin.vision.neck_from_band`.
    background : (M, N) ndarray or None
        An image of the empty field of view (full frame), used as the
        backlight instead of the model fitted to each recording's first
        frames.
    """

    roi: tuple[int, int, int, int] | None = None
    level: float = 0.5
    chunk_size: int = 64
    jobs: int = 1
    gap_blurs: float = 3.0
    background: np.ndarray | None = dataclasses.field(default=None, repr=False, compare=False)


@dataclasses.dataclass(frozen=True)
class Preparation:
    """What the first frames tell, used for every frame.

    Attributes
    ----------
    illumination : (M, N) ndarray
        Backlight model over the analysed region.
    dark : float
        Grey level of the drops' dark rim.
    noise : float
        Standard deviation of the transmission on the background.
    blur : float
        Edge blur sigma (px).
    pair : DropPair or None
        The drops (coalescence).
    spreading : SpreadingSetup or None
        The drop and the substrate (spreading).
    reference_frame : int
        Index (in the recording) of the frame they were found in.
    cache : dict
        Sampling bands kept between chunks (an implementation detail).
    """

    illumination: np.ndarray
    dark: float
    noise: float
    blur: float
    pair: object | None
    reference_frame: int
    spreading: object | None = None
    cache: dict = dataclasses.field(default_factory=dict, repr=False, compare=False)


def _crop(frames, roi):
    if roi is None:
        return frames
    r0, r1, c0, c1 = roi
    return frames[..., r0:r1, c0:c1]


def _check_roi(roi, shape):
    if roi is None:
        return None
    r0, r1, c0, c1 = (int(v) for v in roi)
    m, n = shape
    if not (0 <= r0 < r1 <= m and 0 <= c0 < c1 <= n) or r1 - r0 < 8 or c1 - c0 < 8:
        raise ExperimentError(
            f"lies outside the {m} x {n} frame or is smaller than 8 x 8 px",
            key="--roi",
            value=f"{r0}:{r1},{c0}:{c1}",
            expected=f"rows within 0:{m} and columns within 0:{n}",
        )
    return (r0, r1, c0, c1)


def _noise(trans) -> float:
    """Noise of the transmission on the background, from neighbour differences."""
    diff = np.diff(trans, axis=1)
    bright = (trans[:, 1:] > 0.8) & (trans[:, :-1] > 0.8)
    values = diff[bright]  # a copy: the medians below may reorder it
    if values.size < 100:
        return 0.01
    values -= np.median(values, overwrite_input=True)
    mad = float(np.median(np.abs(values, out=values), overwrite_input=True))
    return max(1.4826 * mad / math.sqrt(2.0), 1e-4)


def prepare(
    recording, *, geometry: str, view: str = "side", options: MeasureOptions = MeasureOptions()
):
    """Analyse the first frames: backlight, dark level, noise and the drops.

    The drops are looked for in the first frame, then in up to ten frames
    spread over the first tenth of the recording.

    Raises
    ------
    MeasurementError
        If no frame among those shows the drops.
    """
    n = len(recording)
    candidates = sorted({0, *np.linspace(0, max(n // 10, 1), 10, dtype=int).tolist()})
    reason = "no frames"
    for index in candidates:
        if index >= n:
            break
        frame = _crop(recording[index], options.roi)
        if options.background is not None:
            illumination = _crop(np.asarray(options.background, dtype=np.float64), options.roi)
        else:
            illumination = vision.fit_illumination(frame)
        dark = vision.dark_level(frame)
        # (The backlight's median on every fourth row and column: a check.)
        if float(np.median(illumination[::4, ::4])) - dark < 1e-3 * max(abs(dark), 1.0):
            reason = "the frame has no contrast"
            continue
        trans = vision.transmission(frame, illumination, dark)
        try:
            if geometry == "spreading":
                return _prepare_spreading(frame, trans, illumination, dark, index, view, options)
            pair = vision.find_drop_pair(trans, level=options.level)
        except MeasurementError as exc:
            reason = exc.message
            continue
        blur = vision.edge_blur(trans, pair)
        return Preparation(illumination, dark, _noise(trans), blur, pair, index)
    raise MeasurementError(
        f"the drops were not found in the first frames ({reason})", path=recording.path
    )


def _prepare_spreading(frame, trans, illumination, dark, index, view, options):
    """The drop and substrate; the backlight refitted away from a mirror image."""
    setup = vision.find_spreading_drop(trans, view=view, level=options.level)
    if options.background is None:
        # A reflective substrate shows the drop's mirror image, which the
        # default backlight fit would take for background.
        mask = vision.spreading_background_mask(frame.shape, setup)
        illumination = vision.fit_illumination(frame, background=mask)
        trans = vision.transmission(frame, illumination, dark)
        setup = vision.find_spreading_drop(trans, view=view, level=options.level)
    return Preparation(illumination, dark, _noise(trans), setup.blur, None, index, spreading=setup)


#: In a worker process: (recording, preparation, options), set once by
#: :func:`_start_worker` so that each chunk's task carries two numbers only
#: (opening a recording and pickling the preparation cost more than a chunk).
_WORKER: tuple = ()


def _start_worker(state: bytes):
    """Unpickle the recording (so that the worker opens the file itself: a
    forked worker must not share the parent's file position), the
    preparation and the options."""
    global _WORKER
    _WORKER = pickle.loads(state)


def _measure_chunk(bounds):
    """One chunk in a worker (module level: picklable): memory-mapped when
    the file allows (only the pages the bands touch are read)."""
    recording, prep, options = _WORKER
    start, stop = bounds
    frames = recording.memmap(start, stop)
    if frames is None:
        _, frames = next(recording[start:stop].chunks(stop - start))
    return start, _neck_chunk(_crop(frames, options.roi), prep, options)


def _neck_chunk(frames, prep, options, hint=None):
    if prep.spreading is not None:
        return vision.measure_contact_lines(
            frames,
            prep.spreading,
            illumination=prep.illumination,
            dark=prep.dark,
            noise=prep.noise,
            level=options.level,
            gap_blurs=options.gap_blurs,
        )
    return vision.measure_necks(
        frames,
        prep.pair,
        illumination=prep.illumination,
        dark=prep.dark,
        noise=prep.noise,
        blur=prep.blur,
        level=options.level,
        gap_blurs=options.gap_blurs,
        cache=prep.cache,
        hint=hint,
    )


def _last_radius(result, previous):
    """The last measured neck radius of a chunk (a hint for the next one)."""
    finite = np.nonzero(np.isfinite(result.radius))[0]
    return float(result.radius[finite[-1]]) if finite.size else previous


def _sequential_chunks(recording, size):
    """(start, frames) over the recording: memory-mapped when the file allows.

    A memory-mapped stack is handed over four chunks at a time, each mapped
    on its own and unmapped when dropped: the band sampling reads only the
    pages it touches, and resident memory stays at a chunk's pages.
    """
    if recording.memmap(0, 1) is None:
        yield from recording.chunks(size)
        return
    for start in range(0, len(recording), 4 * size):
        yield start, recording.memmap(start, start + 4 * size)


def _stream(recording, prep, options, progress):
    """Yield (start, NeckResult) over the whole recording, in order."""
    n = len(recording)
    size = max(int(options.chunk_size), 1)
    if options.jobs <= 1:
        hint = None
        for start, chunk in _sequential_chunks(recording, size):
            result = _neck_chunk(_crop(chunk, options.roi), prep, options, hint)
            hint = _last_radius(result, hint)
            if progress is not None:
                progress(start + len(chunk), n)
            del chunk  # hold no chunk (or map) while the next one is read
            yield start, result
        return
    starts = list(range(0, n, size))
    with ProcessPoolExecutor(
        max_workers=options.jobs,
        initializer=_start_worker,
        initargs=(pickle.dumps((recording, prep, options)),),
    ) as pool:
        # Keep at most two chunks per worker in flight: memory stays bounded.
        window = 2 * options.jobs
        pending = []
        done = 0
        for start in starts:
            pending.append(pool.submit(_measure_chunk, (start, min(start + size, n))))
            if len(pending) >= window:
                first, result = pending.pop(0).result()
                done += len(result.radius)
                if progress is not None:
                    progress(done, n)
                yield first, result
        for future in pending:
            first, result = future.result()
            done += len(result.radius)
            if progress is not None:
                progress(done, n)
            yield first, result


def _drop_radii_px(prep) -> np.ndarray:
    if prep.spreading is not None:
        return np.array([prep.spreading.drop_radius])
    return np.asarray(prep.pair.radii, dtype=np.float64)


def _unresolved_criterion(prep, options) -> str:
    limit = f"{options.gap_blurs:g} edge blurs ({options.gap_blurs * prep.blur:.3g} px)"
    if prep.spreading is not None:
        if prep.spreading.view == "bottom":
            return "not used in bottom view (the wetted disc is seen directly)"
        return (
            "apparent contact angle above 90 degrees and the air wedge beside the "
            f"contact point lower than {limit}"
        )
    return f"gap beside the neck r^2/2 (1/R0 + 1/R1) narrower than {limit}"


def recording_sha256(recording) -> str:
    """SHA-256 of the recording's bytes (a folder: every frame file, in order)."""
    digest = hashlib.sha256()
    paths = recording.files if recording.files is not None else (recording.path,)
    for path in paths:
        with open(path, "rb") as handle:
            for block in iter(lambda h=handle: h.read(1 << 20), b""):
                digest.update(block)
    return digest.hexdigest()


def measure(
    recording,
    experiment,
    *,
    options: MeasureOptions = MeasureOptions(),
    progress: Callable[[int, int], None] | None = None,
    keep_edges: bool = False,
):
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
        ``preparation`` and, with `keep_edges`, ``edges`` ((F, 2, 2) px, in
        full-frame coordinates).

    Raises
    ------
    ExperimentError
        If the pixel size or the geometry is not known.
    MeasurementError
        If the drops are never found.
    """
    geometry = experiment.setup.geometry
    if geometry is None:
        raise ExperimentError(
            "is needed to measure",
            key="setup.geometry",
            path=experiment.path,
            expected="coalescence or spreading",
        )
    pixel = recording.pixel_size or experiment.recording.pixel_size
    if pixel is None:
        raise ExperimentError(
            "is needed to give radii in metres",
            key="recording.pixel_size",
            path=experiment.path or recording.path,
            expected='e.g. pixel_size = "5 um"',
        )
    options = dataclasses.replace(options, roi=_check_roi(options.roi, recording.shape))
    if options.background is not None and np.shape(options.background) != recording.shape:
        raise ExperimentError(
            f"is {np.shape(options.background)}, the frames are {recording.shape}",
            key="--background",
            expected="an image of the same size as the frames",
        )
    prep = prepare(recording, geometry=geometry, view=experiment.setup.view, options=options)
    n = len(recording)
    radius = np.full(n, np.nan)
    radius_err = np.full(n, np.nan)
    codes = np.zeros(n, dtype=np.int8)
    edges = np.full((n, 2, 2), np.nan)
    gap = np.full(n, np.nan)
    side_spreading = prep.spreading is not None and prep.spreading.view == "side"
    angles = np.full((n, 2), np.nan) if side_spreading else None
    for start, result in _stream(recording, prep, options, progress):
        stop = start + len(result.radius)
        radius[start:stop] = result.radius
        radius_err[start:stop] = result.radius_err
        codes[start:stop] = result.status
        edges[start:stop] = result.edges
        gap[start:stop] = result.gap
        if angles is not None:
            angles[start:stop] = result.angles
    status = tuple(vision.STATUS_NAMES[c] for c in codes)
    # In pixels: gaps below a tenth of a pixel count as closed.
    contact = estimate_contact(
        recording.times,
        radius,
        radius_err,
        status,
        gap=gap,
        early_radius=_drop_radii_px(prep).min() / 3.0,
        gap_floor=0.1,
    )
    if contact:
        # Frames before the contact instant that showed neither a gap nor a
        # resolved neck were before contact too, by the best estimate.
        times = np.asarray(recording.times)
        early = (times < contact.time) & (codes == vision.UNRESOLVED)
        codes[early] = vision.BEFORE_CONTACT
        radius[early] = np.nan
        radius_err[early] = np.nan
        edges[early] = np.nan
        if angles is not None:
            angles[early] = np.nan
        status = tuple(vision.STATUS_NAMES[c] for c in codes)
    if options.roi is not None:
        edges += np.array([options.roi[0], options.roi[2]], dtype=np.float64)
    radii_px = _drop_radii_px(prep)
    drop_radius = experiment.drops.radius
    if drop_radius is None:
        drop_radius = float(np.mean(radii_px)) * pixel
    details = {
        "drop_radii_m": [float(r) * pixel for r in radii_px],
        "drop_radius_origin": "experiment file" if experiment.drops.radius else "circle fit",
        "contact_bracket_s": None if contact.bracket is None else list(contact.bracket),
        "contact_method": contact.method,
        "edge_level": options.level,
        "noise_transmission": prep.noise,
        "edge_blur_px": prep.blur,
        "unresolved_criterion": _unresolved_criterion(prep, options),
        "reference_frame": int(recording.source_frames[prep.reference_frame]),
    }
    series = RadiusSeries(
        frame=np.asarray(recording.source_frames, dtype=np.int64),
        time=np.asarray(recording.times, dtype=np.float64),
        radius=radius * pixel,
        radius_err=radius_err * pixel,
        status=status,
        contact_time=contact.time,
        contact_time_err=contact.err,
        drop_radius=drop_radius,
        geometry=geometry,
        view=experiment.setup.view,
        frame_rate=recording.frame_rate,
        pixel_size=pixel,
        provenance={
            "tool": "dropkin",
            "version": __version__,
            "input": str(Path(recording.path).resolve()),
            "options": {
                "roi": None if options.roi is None else list(options.roi),
                "level": options.level,
                "chunk_size": options.chunk_size,
                "jobs": options.jobs,
                "gap_blurs": options.gap_blurs,
                "background": "given image" if options.background is not None else "fitted",
            },
        },
        details=details,
        angles=angles,
    )
    extras = {"preparation": prep, "contact": contact}
    if keep_edges:
        extras["edges"] = edges
    return series, extras
