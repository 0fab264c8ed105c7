"""Bottom view: the wetted disc's equivalent radius in every frame of a chunk.

A coarse look along rays from the drop's centre tells, per frame, whether a
wetted disc shows and roughly how large it is; every pixel of an annulus
around its edge (and one around the drop's outline) is then binned by its
distance from the centre into a radial profile, whose summed coverage gives
the area (see :func:`dropkin.vision.measure_contact_lines`, Notes).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

from ..status import AT_EDGE, BEFORE_CONTACT, NOT_FOUND, OK
from ._silhouette import light_span
from ._spreading_records import ContactLineResult
from ._wetted import BIN, crossing_inward, crossing_outward

__all__ = ["measure_bottom_chunk"]

#: Crossing distances within this many sigmas of a single edge's (1.349
#: sigma) count as no ring (interpolation between bins widens them by about
#: 0.01 sigma; see `_ring_widths`).
WIDTH_TOLERANCE = 0.03


@dataclass(frozen=True)
class _Coarse:
    """What the rays show in each frame of a chunk (K,) (internal).

    Attributes
    ----------
    nothing : ndarray of bool
        Nothing darker than the outline's edge level.
    wet_seen : ndarray of bool
        The centre is darker than the ring: a wetted disc shows.
    wet : ndarray
        The wetted disc's radius along the rays (px); NaN if not found.
    measure : ndarray of bool
        A wetted disc whose annuli lie inside the frame.
    lo, hi, hi_in : ndarray
        The annuli's radii: from `lo` to `hi_in` around the wetted edge, to
        `hi` with the outline (px).
    out0 : ndarray
        The outline's radius along the rays (infinite beyond their reach).
    clear : ndarray of bool
        The ring is clearly wider than needed: the outline is not used.
    margin : float
        Half-width of an annulus around an edge (px).
    """

    nothing: np.ndarray
    wet_seen: np.ndarray
    wet: np.ndarray
    measure: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    hi_in: np.ndarray
    out0: np.ndarray
    clear: np.ndarray
    margin: float


@dataclass(frozen=True)
class _Profiles:
    """Radial profiles of the measured frames (F, B) in quarter-pixel bins (internal).

    Attributes
    ----------
    profile : ndarray
        Mean transmission in each bin (empty bins take the nearest filled
        bin's value).
    centres : ndarray
        Mean distance from the centre of each bin's pixels (px).
    count : ndarray of int
        Pixels in each bin (0 where empty or outside a frame's annuli).
    g : ndarray of int
        Global index of each bin (distance // BIN).
    empty : ndarray of bool
        Bins without pixels.
    start : (F,) ndarray of int
        Pixels nearer the centre than the first bin (they count whole).
    """

    profile: np.ndarray
    centres: np.ndarray
    count: np.ndarray
    g: np.ndarray
    empty: np.ndarray
    start: np.ndarray


def measure_bottom_chunk(frames, setup, *, illumination, dark, noise, level, levels=()):
    """Bottom view: the wetted disc in every frame of a chunk (see
    :func:`dropkin.vision.measure_contact_lines`); at the other edge `levels`
    too, from the same radial profiles."""
    k, m, n = frames.shape
    centre = np.asarray(setup.centre, dtype=np.float64)
    ill = np.asarray(illumination, dtype=np.float32).ravel()
    reach = int(np.floor(min(centre[0], m - 1 - centre[0], centre[1], n - 1 - centre[1])))
    status = np.full(k, OK, dtype=np.int8)
    radius = np.full(k, np.nan)
    radius_err = np.full(k, np.nan)
    edges = np.full((k, 2, 2), np.nan)
    nan2 = np.full((k, 2), np.nan)
    others = np.full((k, len(levels)), np.nan)
    if reach < 4:
        status[:] = AT_EDGE
        gap = np.full(k, np.nan)
        return ContactLineResult(radius, radius_err, edges, status, gap, nan2, others)
    flat = frames.reshape(k, -1)
    coarse = _coarse_pass(flat, ill, dark, setup, (m, n), reach, level, noise)
    status[coarse.nothing] = NOT_FOUND
    status[~coarse.nothing & ~coarse.wet_seen] = BEFORE_CONTACT
    status[~coarse.nothing & coarse.wet_seen & ~coarse.measure] = AT_EDGE
    gap = np.full(k, np.nan)
    if not coarse.measure.any():
        return ContactLineResult(radius, radius_err, edges, status, gap, nan2, others)
    idx = np.nonzero(coarse.measure)[0]
    prof = _wetted_profiles(frames, ill, dark, setup, coarse, idx)
    a_all, err, good = _area(
        prof, setup, noise, level, coarse.wet[idx], coarse.hi[idx], coarse.clear[idx]
    )
    radius[idx] = np.where(good, a_all, np.nan)
    radius_err[idx] = np.where(good, np.hypot(err, 0.1), np.nan)
    status[idx[~good]] = NOT_FOUND
    edges[idx, 0, 0] = edges[idx, 1, 0] = centre[0]
    edges[idx, 0, 1] = centre[1] - radius[idx]
    edges[idx, 1, 1] = centre[1] + radius[idx]
    for i, other in enumerate(levels):
        a_other, _, good_other = _area(
            prof, setup, noise, float(other), coarse.wet[idx], coarse.hi[idx], coarse.clear[idx]
        )
        others[idx, i] = np.where(good & good_other, a_other, np.nan)
    return ContactLineResult(radius, radius_err, edges, status, gap, nan2, others)


def _coarse_pass(flat, ill, dark, setup, shape, reach, level, noise) -> _Coarse:
    """Along rays: the outline, whether a wetted disc shows, and its size."""
    k = len(flat)
    sigma = float(setup.blur)
    centre = np.asarray(setup.centre, dtype=np.float64)
    t_bg, t_ring = float(setup.background_level), float(setup.drop_level)
    step = max(t_bg - t_ring, 1e-6)
    coarse = _coarse_profiles(flat, ill, dark, centre, shape, reach)
    rho = np.arange(reach, dtype=np.float64)
    mid_out = np.full(k, t_ring + level * step)
    outline = crossing_inward(coarse, rho, mid_out)
    dip = max(0.15 * step, 5.0 * noise)
    wet_seen = coarse[:, :3].mean(axis=1) < t_ring - dip
    wet_coarse = crossing_outward(coarse, rho, np.full(k, t_ring - dip), np.zeros(k, np.intp))
    nothing = ~(coarse < mid_out[:, None]).any(axis=1)

    margin = 3.0 * sigma + 4.0
    # A wetted disc that does not end within the rays' reach runs off the frame.
    wet0 = np.where(wet_seen & np.isnan(wet_coarse), np.inf, np.nan_to_num(wet_coarse, nan=0.0))
    # The outline beyond the rays' reach (the drop runs off the frame) counts as far.
    out0 = np.where(coarse[:, -1] < mid_out, np.inf, np.nan_to_num(outline, nan=0.0))
    # With a ring clearly wider than needed (see `wide` in `_area`) the outline is
    # not used, and only the wetted edge must lie inside the frame.
    with np.errstate(invalid="ignore"):
        clear = (out0 - wet0 > 6.0 * sigma + 2.0 * margin) & np.isfinite(wet0)
    lo = np.maximum(wet0 - margin, 0.0)
    hi_in = wet0 + margin
    hi = np.where(clear, hi_in, np.fmax(wet0, out0) + margin)
    measure = wet_seen & ~nothing & (hi < reach)
    return _Coarse(nothing, wet_seen, wet_coarse, measure, lo, hi, hi_in, out0, clear, margin)


def _wetted_profiles(frames, ill, dark, setup, coarse: _Coarse, idx) -> _Profiles:
    """The radial profiles of the frames `idx` over the annuli around their
    wetted edge and outline (see :func:`_area` for the radius from them)."""
    # Every pixel of an annulus around each frame's wetted edge, and one
    # around the outline (the two merge when the ring is narrow).
    lo, hi, clear = coarse.lo[idx], coarse.hi[idx], coarse.clear[idx]
    hi_in = np.minimum(coarse.hi_in[idx], hi)
    lo_out = np.where(clear, hi_in, np.maximum(coarse.out0[idx] - coarse.margin, hi_in))
    # Annulus limits on the grid of radial bins, so that every bin is whole.
    b_lo = np.floor(lo / BIN).astype(np.intp)
    b_hi_in = np.ceil(hi_in / BIN).astype(np.intp)
    b_lo_out = np.maximum(np.floor(lo_out / BIN).astype(np.intp), b_hi_in)
    b_hi = np.maximum(np.ceil(hi / BIN).astype(np.intp), b_lo_out)
    bins = (b_lo, b_hi_in, b_lo_out, b_hi)
    return _profiles(frames, ill, dark, np.asarray(setup.centre, dtype=np.float64), idx, bins)


def _profiles(frames, ill, dark, centre, idx, bins) -> _Profiles:
    """Radial profiles of the frames `idx` over their annuli (bin limits `bins`)."""
    k, m, n = frames.shape
    b_lo, b_hi_in, b_lo_out, b_hi = bins
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
    span = light_span(ill[pix], dark)
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
    profile, centres = _filled(t_sum / np.maximum(count, 1), g_centre[g], count == 0, g)
    return _Profiles(profile, centres, count, g, count == 0, start)


def _filled(profile, centres, empty, g):
    """Empty bins (near the centre, where pixels are sparse, and past a frame's own
    annulus) take the value of the nearest filled bin before them, or after them;
    their centres are the bins' middles."""
    cols = np.arange(profile.shape[1])[None, :]
    last = np.maximum.accumulate(np.where(empty, 0, cols), axis=1)
    first = np.argmax(~empty, axis=1)[:, None]
    src = np.where(empty & (cols < first), first, np.where(empty, last, cols))
    profile = np.take_along_axis(profile, src, axis=1)
    return profile, np.where(empty, BIN * (g + 0.5), centres)


def _area(prof: _Profiles, setup, noise, level, wet, hi, clear):
    """Equivalent radius ``sqrt(A / pi)`` of the wetted disc from the profiles,
    its uncertainty, and whether it was measured (each (F,))."""
    sigma = float(setup.blur)
    t_bg, t_ring = float(setup.background_level), float(setup.drop_level)
    step = max(t_bg - t_ring, 1e-6)
    profile, centres, count, g, start = prof.profile, prof.centres, prof.count, prof.g, prof.start
    t_wet, t_bg_k = _levels(prof, setup, level, wet, hi)
    contrast = t_ring - t_wet
    usable = contrast > 0.2 * step
    zero = np.zeros(len(profile), np.intp)
    c_lo = crossing_outward(profile, centres, t_wet + level * contrast, zero)
    c_hi = crossing_inward(profile, centres, t_ring + level * (t_bg_k - t_ring))
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
    return a_all, err, good


def _levels(prof: _Profiles, setup, level, wet, hi):
    """The wetted disc's transmission inside it, and the background outside
    (per frame where seen), each (F,)."""
    sigma = float(setup.blur)
    t_bg, t_ring = float(setup.background_level), float(setup.drop_level)
    step = max(t_bg - t_ring, 1e-6)
    inner = (prof.centres < (wet - 2.0 * sigma - 2.0)[:, None]) & ~prof.empty
    t_wet = _masked_median(prof.profile, inner)
    if np.isfinite(t_wet).any():
        fallback = float(np.nanmedian(t_wet))
    elif math.isfinite(setup.wetted_level):
        fallback = float(setup.wetted_level)
    else:
        fallback = 0.0  # the caller's dark level: a fully dark wetted disc
    t_wet = np.where(np.isfinite(t_wet), t_wet, fallback)
    outer = (prof.centres > (hi - 1.5)[:, None]) & ~prof.empty
    bg_local = _masked_median(prof.profile, outer)
    t_bg_k = np.where(np.isfinite(bg_local) & (bg_local > t_ring + level * step), bg_local, t_bg)
    return t_wet, t_bg_k


def _trans_at(frames_flat, illumination_flat, dark, index):
    """Transmission (K, P) of the frames (K, M * N) at flat pixel indices (P,)."""
    d32 = np.float32(dark)
    span = light_span(illumination_flat[index], dark)
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
