"""The bridge height of sessile drops in a chunk of side-view frames.

See :mod:`dropkin.vision._bridge` for the method, the contact and the
resolution criteria. Only the block of rows from a few px above the caps'
apexes down to the plate, and the columns between the caps' axes, is read.
"""

from __future__ import annotations

import numpy as np

from ..status import BEFORE_CONTACT, NOT_FOUND, OK, UNRESOLVED
from ._bridge import SessilePair
from ._neck import NeckResult, _vertex
from ._silhouette import light_span

__all__ = ["measure_bridges"]


def _block(frames, pair: SessilePair, illumination, dark: float):
    """Transmission (R, C, K) of the block, its first row, the columns and the
    index of the last row wholly above the plate in each column."""
    lo, hi = pair.cols
    cols = np.arange(lo, hi + 1)
    plate = pair.line.rows(cols)
    r0 = pair.top_row
    r1 = min(int(np.ceil(plate.max())) + 2, frames.shape[1])
    span = light_span(illumination[r0:r1, lo : hi + 1], dark)
    # One array, written in its (R, C, K) order: (float32(frames) - dark) / span
    # as before, without the two block-sized temporaries (8 bytes a pixel).
    samples = frames[:, r0:r1, lo : hi + 1].transpose(1, 2, 0)
    dtype = np.result_type(np.float32, dark)  # a Python float stays float32
    block = np.empty(samples.shape, dtype=dtype)
    block[...] = samples if dtype == np.float32 else np.asarray(samples, dtype=np.float32)
    block -= dark
    block /= span[:, :, None]
    # The lowest pixel row mostly above the plate (i + 0.25 <= plate): its
    # centre lies 0.25 to 1.25 px above the plate line.
    last = np.floor(plate - 0.25).astype(int) - r0
    return block, r0, cols, last


def _heights(t, last, plate_rows, r0: int, threshold: float):
    """Going up from the plate, the first crossing of `threshold` in each column.

    Returns heights (C, K) (inf where the column is dark to the block's top),
    the slope at the crossing (C, K) and whether the column is bright at the
    plate (C, K).
    """
    n_r, n_c, k = t.shape
    rows = np.arange(n_r)[:, None, None]
    usable = rows <= last[None, :, None]
    bright = (t >= threshold) & usable
    # The highest-index (lowest) bright row at or above the plate in each column.
    found = bright.any(axis=0)
    j = n_r - 1 - np.argmax(bright[::-1], axis=0)
    open_ = bright[np.clip(last, 0, n_r - 1)[:, None], np.arange(n_c)[:, None], np.arange(k)]
    below = np.minimum(j + 1, n_r - 1)
    c_idx, k_idx = np.arange(n_c)[:, None], np.arange(k)[None, :]
    t_up, t_down = t[j, c_idx, k_idx], t[below, c_idx, k_idx]
    slope = np.maximum(t_up - t_down, 1e-6)
    frac = np.clip((t_up - threshold) / slope, 0.0, 1.0)
    edge_row = r0 + j + frac
    heights = np.where(found & ~open_, plate_rows[:, None] - edge_row, np.inf)
    return heights, slope, open_


def _status(nothing, before, no_vertex, unresolved):
    status = np.full(len(nothing), OK, dtype=np.int8)
    status[no_vertex] = NOT_FOUND
    status[~no_vertex & unresolved] = UNRESOLVED
    status[before] = BEFORE_CONTACT
    status[nothing] = NOT_FOUND
    return status


def measure_bridges(
    frames,
    pair: SessilePair,
    *,
    illumination,
    dark: float,
    noise: float,
    level: float = 0.5,
    gap_blurs: float = 3.0,
    levels=(),
    err_floor: float = 0.1,
) -> NeckResult:
    """Bridge height (px) of two sessile drops in each frame of a chunk (side view).

    Parameters
    ----------
    frames : (K, M, N) ndarray
        Raw frames.
    pair : SessilePair
        From :func:`dropkin.vision.find_sessile_pair`.
    illumination : (M, N) ndarray
        Backlight model.
    dark : float
        Grey level of the drops' dark rim.
    noise : float
        Transmission noise on the background, for the uncertainty.
    level : float, optional
        Edge level, as the fraction of the way from the drops' level to the
        background's (as measured on the reference frame).
    gap_blurs : float, optional
        A bridge counts as resolved once the notch beside it (twice its
        bottom radius) is this many blur sigmas wide and the bridge is half
        as high.
    levels : sequence of float, optional
        Other edge levels at which the height is measured too.
    err_floor : float, optional
        Uncertainty floor (px) for interpolation error.

    Returns
    -------
    NeckResult
        ``radius`` is the bridge height, ``s_neck`` the column of the lowest
        point, ``edges`` the bridge's top and its foot on the plate (row,
        col); ``gap`` is not measured (NaN).
    """
    frames = np.asarray(frames)
    if frames.ndim != 3:
        raise ValueError(f"frames must be (K, M, N), got shape {frames.shape}")
    k = frames.shape[0]
    t, r0, cols, last = _block(frames, pair, illumination, dark)
    plate_rows = pair.line.rows(cols)
    span = pair.background_level - pair.drop_level
    height, slope, open_ = _heights(t, last, plate_rows, r0, pair.drop_level + level * span)
    nothing = ~(t < pair.drop_level + 0.5 * span).any(axis=(0, 1))
    before = open_.any(axis=0) & ~nothing
    m, idx = np.argmin(height, axis=0), np.arange(k)
    h_min, offset, h_ref = _vertex(height, m, idx)
    no_vertex = (m == 0) | (m == len(cols) - 1) | ~np.isfinite(h_min)
    unresolved = (2.0 * pair.notch_radius(h_ref) < gap_blurs * pair.blur) | (
        h_ref < 0.5 * gap_blurs * pair.blur
    )
    status = _status(nothing, before, no_vertex, unresolved)
    measured = (status == OK) | (status == UNRESOLVED)
    radius = np.where(measured, h_ref, np.nan)
    err = np.hypot(noise / slope[m, idx], err_floor)
    col = cols[0] + m + offset
    s_neck = np.where(measured, col, np.nan)
    edges = np.full((k, 2, 2), np.nan)
    foot = pair.line.rows(col)
    edges[:, 0] = np.where(measured[:, None], np.stack([foot - h_ref, col], axis=1), np.nan)
    edges[:, 1] = np.where(measured[:, None], np.stack([foot, col], axis=1), np.nan)
    others = np.full((k, len(levels)), np.nan)
    for i, other in enumerate(levels):
        h_other = _heights(t, last, plate_rows, r0, pair.drop_level + other * span)[0]
        others[:, i] = np.where(measured, _vertex(h_other, m, idx)[2], np.nan)
    return NeckResult(
        radius=radius,
        radius_err=np.where(measured, err, np.nan),
        s_neck=s_neck,
        edges=edges,
        status=status,
        gap=np.full(k, np.nan),
        level_radius=others,
    )
