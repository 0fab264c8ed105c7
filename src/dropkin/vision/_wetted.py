"""A drop spreading on a substrate, seen from below: the wetted disc.

Through a transparent substrate the wetted disc is a darker disc inside the
drop's outline. Its equivalent radius ``sqrt(A / pi)`` comes from the summed
coverage of the pixels over an annulus around its edge (blur and pixel
averaging move light between pixels but conserve the sum); when the ring
between the wetted disc and the outline is thinner than the blur lets it show,
a two-edge blur model gives the ring's width instead. Used through
:func:`dropkin.vision.find_spreading_drop` and
:func:`dropkin.vision.measure_contact_lines`.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import ndimage, special
from skimage import measure as skmeasure

from ..errors import MeasurementError
from ._circle import fit_circle
from ._neck import AT_EDGE, BEFORE_CONTACT, NOT_FOUND, OK
from ._silhouette import threshold_midpoint
from ._spreading import BIN, WIDTH_TOLERANCE, ContactLineResult, SpreadingSetup
from ._substrate import slope_blur


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
