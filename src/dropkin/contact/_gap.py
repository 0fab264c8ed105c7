"""The gap closure: where the light on the line of centres stops closing.

Used by :func:`dropkin.contact.estimate_contact`. The gap between the drops
(or the drop and the substrate) on the line of centres is read from the
light that passes there, which blur conserves, so sub-pixel gaps still
show; but blur also carries light onto the axis from beside a neck narrower
than itself, so frames just after contact still read a small gap. A frame is
open only when its gap exceeds that level of contact, found from the frames
themselves (a hinge: a straight closing line, then a flat level).
"""

from __future__ import annotations

import math

import numpy as np

from ._extrapolate import from_gap

__all__ = ["gap_estimate"]


def gap_estimate(time, gap, ok, first_ok, lo, gap_frames, gap_floor):
    """The gap closure: (lo moved to the last open gap, (t0, err) or None, method, light).

    `light` is the bracket the light on the axis proves: (last frame whose
    gap is open, first frame at the level of frames in contact), or None.
    """
    gap = np.asarray(gap, dtype=np.float64)
    # From a few frames before the last one with status before-contact on.
    start = max(int(np.searchsorted(time, lo)) - gap_frames - 2, 0)
    index = np.arange(len(ok))
    seen = np.nonzero(np.isfinite(gap) & (index < first_ok) & (index >= start))[0]
    anchors = np.nonzero(ok & np.isfinite(gap))[0][:3]
    # The scatter of the gaps of frames with a measured neck gives the noise.
    level = gap[ok & np.isfinite(gap)]
    noise = 1.4826 * float(np.median(np.abs(level - np.median(level)))) if level.size else 0.0
    found = _closing_line(time, gap, seen, anchors, max(3.0 * noise, gap_floor), gap_frames)
    if found is None:
        return lo, None, "", None
    idx, base, base_err, last_open, first_closed = found
    # The light decides over the statuses: a frame whose gap reads at the
    # level of contact shows a neck below the blur, not a gap.
    lo = float(time[last_open])
    light = (float(time[last_open]), float(time[first_closed]))
    t0, err = from_gap(time[idx], gap[idx] - base)
    if t0 is None or err is None:
        return lo, None, "", light
    # Allow for a bias of the measured gap of `gap_floor / 2` (on synthetic
    # frames the smallest gaps read a few hundredths of a pixel wide) and for
    # the uncertainty of the level of frames in contact, converted to time
    # by the closing speed.
    speed = abs(np.polyfit(time[idx], gap[idx], 1)[0])
    if speed > 0:
        err = math.sqrt(err**2 + (0.5 * gap_floor / speed) ** 2 + (base_err / speed) ** 2)
    if err > 0:
        return lo, (t0, err), f"gap closure over {len(idx)} frames", light
    return lo, None, "", light


def _closing_line(time, gap, seen, anchors, threshold, gap_frames):
    """Where the light on the axis stops closing: the open gaps and the level of contact.

    The gaps of the frames before the first measured neck (`seen`) and of
    the first measured ones (`anchors`) are fitted by a hinge, ``gap = b + s
    max(t0 - t, 0)``: a gap closing at a steady speed onto the level ``b``
    that frames in contact still show (blur carries light onto the axis
    from beside a neck narrower than the blur, about ``sigma**2 / 2 (1/R0 +
    1/R1)``; a neck of a pixel is not a gap). A frame is open while its gap
    exceeds ``b`` by `threshold` before the hinge. Returns (the last
    `gap_frames` open frames, b, its standard error, the last open frame,
    the first frame after it), or None with fewer than three open frames.
    """
    idx = np.concatenate([seen, anchors])
    if len(seen) < 3:
        return None
    t, g = time[idx], gap[idx]
    best = None
    end = float(time[seen[-1]] + (time[seen[-1]] - time[seen[-2]]))
    for t0 in np.linspace(float(t[0]), end, 401):
        x = np.maximum(t0 - t, 0.0)
        if np.count_nonzero(x > 0) < 3 or np.count_nonzero(x == 0) < 1:
            continue
        design = np.stack([np.ones_like(x), x], axis=1)
        coef, *_ = np.linalg.lstsq(design, g, rcond=None)
        ssr = float(np.sum((g - design @ coef) ** 2))
        if coef[1] > 0 and (best is None or ssr < best[0]):
            best = (ssr, t0, float(coef[0]))
    if best is None:
        # No frame at the level of contact before the first measured neck.
        base = float(np.median(gap[anchors])) if len(anchors) else 0.0
        flat = np.array([], dtype=np.intp)
        t_hinge = math.inf
    else:
        _, t_hinge, base = best
        flat = idx[t >= t_hinge]
        # The level right after contact: the light beside a neck fades as it widens.
        base = float(np.median(gap[flat[:3]]))
    open_ = seen[(gap[seen] - base > threshold) & (time[seen] < t_hinge)]
    if len(open_) < 3:
        return None
    last = int(open_[-1])
    base_err = 0.0
    if len(flat) > 1:
        near = gap[flat[:3]]
        base_err = 1.2533 * float(np.std(near, ddof=1)) / math.sqrt(len(near))
    following = seen[seen > last]
    if len(following):
        first_closed = int(following[0])
    else:
        first_closed = int(anchors[0]) if len(anchors) else last
    return open_[-gap_frames:], base, base_err, last, first_closed
