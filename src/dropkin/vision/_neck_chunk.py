"""The neck in a chunk of frames: which bands to sample, and the chunk's result.

:func:`measure_necks` looks roughly at a chunk's ends, samples the whole
chunk on a band bounded by what it found, and measures again on the full band
the frames whose neck does not fit (see :mod:`dropkin.vision._neck` for the
measurement on one band).
"""

from __future__ import annotations

import math

import numpy as np

from ._band import BAND_LIMIT, _band_transmission, _sample_block, make_band, redone
from ._neck import NeckResult, gap_on_axis, neck_from_band
from ._silhouette import light_span

__all__ = ["measure_necks"]


class _Bands:
    """Bands around one pair's neck on frames of one shape, cached, and the
    neck measured on them (internal).

    Parameters
    ----------
    shape : tuple of int
        (M, N) of the frames.
    pair : DropPair
    illumination : (M, N) ndarray
    dark, noise, blur, level, min_gap : float
        As for :func:`measure_necks` and :func:`neck_from_band`.
    cache : dict or None
        Bands and their illumination, kept between calls (a new dict if None).
    levels : tuple of float
        Other edge levels measured too (see :func:`neck_from_band`).
    """

    def __init__(
        self, shape, pair, illumination, dark, noise, blur, level, min_gap, cache, levels=()
    ):
        self.shape = shape
        self.pair = pair
        self.illum = illumination[None]
        self.dark = dark
        self.noise = noise
        self.blur = blur
        self.level = level
        self.min_gap = min_gap
        self.cache = {} if cache is None else cache
        self.levels = tuple(levels)

    def band(self, s_centre, s_half, u_lo, u_hi, step, sparse=None):
        """A band (cached) and the inverse of its illumination span: the axis,
        and rows from u_lo to u_hi every pixel (and every `sparse` px below
        u_lo, if given); the axis alone if `u_hi` is 0."""
        lo, hi = 4 * int(max(u_lo, 0.0) // 4), 4 * math.ceil(u_hi / 4.0)
        key = (self.shape, round(s_centre / 2.0), math.ceil(s_half / 4.0), lo, hi, step, sparse)
        if key not in self.cache:
            inner = np.arange(0.0, lo, sparse) if sparse else np.zeros(1)
            u_values = np.concatenate([inner, np.arange(lo, hi + 1.0)]) if hi > 0 else inner
            band = make_band(
                self.shape,
                self.pair.contact_point,
                self.pair.axis,
                s_centre=2.0 * key[1],
                s_half=4.0 * key[2],
                u_half=hi,
                s_step=step,
                u_values=np.unique(u_values),
            )
            span = light_span(_sample_block(self.illum, band), self.dark)
            self.cache[key] = (band, 1.0 / span)
        return self.cache[key]

    def neck(self, frames, s_centre, s_half, u_lo, u_hi, step, *, sparse=None, rough=False):
        """The neck measured on a band (see :meth:`band`), and the frames whose
        narrowest column is at one of the band's ends."""
        band, inv_span = self.band(s_centre, s_half, u_lo, u_hi, step, sparse)
        result = neck_from_band(
            _band_transmission(frames, band, self.dark, inv_span),
            band,
            noise=self.noise,
            radii=self.pair.radii,
            blur=self.blur,
            level=self.level,
            min_gap=self.min_gap,
            allow_coarse=rough,
            with_gap=False,  # measured once, on a fixed stretch of the axis
            levels=() if rough else self.levels,
        )
        ends = np.isin(result.s_neck, (band.s[0], band.s[-1]))
        return result, ends


def measure_necks(
    frames,
    pair,
    *,
    illumination,
    dark: float,
    noise: float,
    blur: float,
    level: float = 0.5,
    gap_blurs: float = 3.0,
    cache: dict | None = None,
    hint: float | None = None,
    levels=(),
    shift_correction: bool = True,
) -> NeckResult:
    """Neck radius in each frame of a chunk, looking only at a band around the neck.

    The chunk's first and last frames are looked at first, roughly (every
    2 px), on a band as wide as the smaller drop; the frames are then sampled
    on the line of centres and, across it, only between the two neck radii
    found, with a margin of 4 px, every pixel, over a few px of the axis
    around the neck found. Frames whose edge falls outside the dense rows,
    whose bridge does not fit, or whose narrowest column is at the band's
    end, are measured again on the full band. Chunks are independent of each
    other, so they can be measured in parallel.

    Parameters
    ----------
    frames : (K, M, N) ndarray
        Raw frames.
    pair : DropPair
        The drops, from :func:`find_drop_pair`.
    illumination : (M, N) ndarray
        Backlight model (see :func:`fit_illumination`).
    dark : float
        Grey level of the drops' dark rim.
    noise : float
        Transmission noise on the background.
    blur : float
        Edge blur sigma (px), from :func:`edge_blur`.
    level : float, optional
        As for :func:`neck_from_band`.
    gap_blurs : float, optional
        The neck counts as resolved once the gap beside it is this many blur
        sigmas wide (``min_gap = gap_blurs * blur``).
    cache : dict, optional
        Keeps bands and their illumination between calls (pass the same
        dict for every chunk of one recording); bands are sized in steps of
        4 px so that most chunks reuse one.
    hint : float, optional
        The neck radius (px) just before the chunk, when known (the previous
        chunk's last one); it saves a look at the chunk's first frame. The
        result does not depend on it: every band samples the same grid, and
        frames whose edge falls outside the dense rows are measured again.
    levels : sequence of float, optional
        Other edge levels at which the neck is measured too, in the same
        pass (``level_radius`` of the result; see :func:`neck_from_band`).
    shift_correction : bool, optional
        Correct the radius for blur's outward shift of the concave outline
        beside the neck (:mod:`._neck_curvature`); off for outlines whose
        notch is not a rounded tip (the footprints of sessile drops seen from
        below, whose shape is not modelled).

    Returns
    -------
    NeckResult
    """
    frames = np.asarray(frames)
    if frames.ndim != 3:
        raise ValueError(f"frames must be (K, M, N), got shape {frames.shape}")
    min_gap = gap_blurs * blur
    shift_blur = blur if shift_correction else 0.0  # 0: no correction (neck_from_band)
    shape, light = frames.shape[1:], (illumination, dark, noise)
    bands = _Bands(shape, pair, *light, shift_blur, level, min_gap, cache, levels)
    r_small = float(min(pair.radii))
    full_s = 0.25 * r_small + 6.0
    full_u = 1.1 * r_small + 4.0
    step = 0.5 if r_small < 80 else 1.0
    result, ends = _bounded(bands, frames, hint, full_s, full_u, step)
    redo = (result.status == BAND_LIMIT) | ends
    again = bands.neck(frames[redo], 0.0, full_s, 0.0, full_u, step)[0] if redo.any() else None
    # The gap on a fixed stretch of the axis, the same for every chunk.
    axis_band, inv_span = bands.band(0.0, full_s, 0.0, 0.0, step)
    on_axis = _band_transmission(frames, axis_band, dark, inv_span)[:, 0]
    return _merged(result, again, redo, gap_on_axis(on_axis, axis_band.valid[0], step))


def _bounded(bands: _Bands, frames, hint, full_s, full_u, step):
    """The chunk measured on a band bounded by a rough look at its ends.

    Returns the NeckResult and the frames whose neck is at the band's ends
    (none when the rough look found no neck and the full band was used).
    """
    # A rough look (every 2 px) at the chunk's last frame, and at its first
    # unless the caller knows the neck there, bounds the neck in the chunk.
    probe_frames = frames[-1:] if hint is not None else frames[[0, -1]]
    probe, _ = bands.neck(probe_frames, 0.0, full_s, full_u, full_u, 2.0, sparse=2.0, rough=True)
    if not np.isfinite(probe.radius[-1]):
        result, ends = bands.neck(frames, 0.0, full_s, 0.0, full_u, step)
        return result, np.zeros_like(ends)
    if hint is not None:
        r_first = hint
    else:
        r_first = probe.radius[0] if np.isfinite(probe.radius[0]) else 0.0
    r_last, s_last = float(probe.radius[-1]), float(probe.s_neck[-1])
    # Margins: the neck moves along the axis by a few px per chunk at most
    # (unequal drops), and the rough look is within a px of the radius;
    # a frame whose neck falls outside is measured again on the full band.
    s_half = min(0.05 * r_last + 4.0, full_s)
    u_lo = min(r_first, r_last) - 4.0
    u_hi = min(1.03 * max(r_first, r_last) + 4.0, full_u)
    return bands.neck(frames, s_last, s_half, u_lo, u_hi, step)


def _merged(first: NeckResult, again: NeckResult | None, redo, gap) -> NeckResult:
    """The chunk's result: `first`, with the frames `redo` from `again` (see
    :func:`dropkin.vision._band.redone`) and the gap on the axis `gap`."""
    names = ("radius", "radius_err", "s_neck", "edges", "status", "level_radius")
    values = redone(first, again, redo, names)
    return NeckResult(**values, gap=np.asarray(gap, dtype=np.float64))
