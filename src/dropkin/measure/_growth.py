"""The end of the growth phase: where the neck stops following its law.

After contact the neck grows by a law of the form ``r = A (t - t0)**n``
until the merged liquid takes over: the neck nears the drop radius, or the
merged drop (or the liquid bridge held by the needles) overshoots and rings
about its rest shape. Frames after that are no longer the growth the fit is
about. :func:`growth_end` looks at the measured (``ok``) frames after
contact for three signs:

- **ringing**: the neck shrinks, by more than three of its standard
  uncertainties and more than half a pixel below the largest radius so far,
  over three measured frames in a row (a growing neck never shrinks); the
  frame of the largest radius before that is the end candidate (the first
  frame after the growth);
- **the drop radius reached**: the neck passes 0.9 of the smaller drop's
  radius (coalescence of free drops only): the end candidate is that frame;
- **the law left**: before the end candidate, a straight line is fitted to
  ln r against ln(t - t0) over the 0.3 decades of time that end 0.3 decades
  before the candidate; the growth ends at the first frame after that from
  which every measured radius up to the candidate falls short of the line by
  more than three standard uncertainties and 1 % of the radius. Without five
  frames in the line's window the end candidate stands.

The frames from the end on get the status ``after-growth``
(:mod:`dropkin.status`) and stay out of every fit.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..status import AFTER_GROWTH, STATUSES

__all__ = ["GrowthEnd", "growth_end", "mark_after_growth"]

#: The neck past this fraction of the smaller drop radius: the growth has ended.
NEAR_RADIUS = 0.9
#: Decades of time: the line's window, and how far it ends before the candidate.
LAW_DECADES = 0.3
#: A radius this fraction below the line (and three uncertainties) has left the law.
SHORT_FRACTION = 0.01


@dataclass(frozen=True)
class GrowthEnd:
    """Where the growth phase ends.

    Attributes
    ----------
    index : int
        Index (into the series) of the first frame after the growth phase.
    method : str
        How it was found, in a sentence.
    """

    index: int
    method: str


def _ringing_peak(r, err, step):
    """Position (into `r`) of the largest radius before the neck first shrinks
    for good (by more than `step` px and three uncertainties), or None."""
    top = np.maximum.accumulate(r)
    below = r < top - np.maximum(3.0 * err, step)
    run = below[:-2] & below[1:-1] & below[2:]
    if not run.any():
        return None
    first = int(np.argmax(run))
    return int(np.argmax(r[: first + 1]))


def _left_law(x, y, err_rel, candidate, floor_rel):
    """Position of the first point after which the points up to `candidate`
    all fall below the line fitted before them, or `candidate` itself."""
    width = LAW_DECADES * math.log(10.0)
    end = x[candidate]
    window = (x >= end - 2.0 * width) & (x < end - width)
    if window.sum() < 5:
        return candidate
    slope, intercept = np.polyfit(x[window], y[window], 1)
    short = y < slope * x + intercept - np.maximum(3.0 * err_rel, floor_rel)
    after = np.nonzero(x >= end - width)[0]
    after = after[after <= candidate]
    start = candidate
    for i in after[::-1]:
        if not short[i]:
            break
        start = int(i)
    return start


def growth_end(
    time, radius, radius_err, status, contact_time, *, drop_radius=None, step=0.5, lossy=False
) -> GrowthEnd | None:
    """The first frame after the growth phase, or None while the neck still grows.

    Parameters
    ----------
    time : (F,) array_like
        Frame times (s).
    radius, radius_err : (F,) array_like
        Measured radius and its uncertainty (px); NaN where none.
    status : sequence of str
        Per-frame status; only ``ok`` frames are looked at.
    contact_time : float or None
        The contact instant (s); None: no growth phase to end.
    drop_radius : float, optional
        The smaller drop's radius (px), for the "drop radius reached" sign
        (free drops only; None leaves it out).
    step : float, optional
        A neck must shrink by more than this (px, and three uncertainties)
        to ring: half a pixel for lossless frames.
    lossy : bool, optional
        The frames went through lossy compression, whose codec moves edges
        by a pixel or more at once from one key frame to the next: a neck
        must then also fall short of its law by more than `step` pixels
        (besides 1 % and three uncertainties) to have left it.

    Returns
    -------
    GrowthEnd or None
        The frame's index (into the series) and a sentence saying how it
        was found.

    Examples
    --------
    >>> t = np.arange(40.0)
    >>> r = np.where(t < 20, 2.0 * np.sqrt(t), 9.0 - 0.4 * (t - 20))
    >>> end = growth_end(t, r, np.full(40, 0.05), ["ok"] * 40, 0.0)
    >>> end.index, end.method   # the largest radius, the first frame that rings
    (20, 'the neck rings (shrinks after its largest radius)')
    """
    if contact_time is None:
        return None
    t = np.asarray(time, dtype=np.float64)
    r = np.asarray(radius, dtype=np.float64)
    err = np.asarray(radius_err, dtype=np.float64)
    ok = np.array([s == "ok" for s in status], dtype=bool) & np.isfinite(r) & (r > 0)
    idx = np.nonzero(ok & (t > contact_time))[0]
    if len(idx) < 8:
        return None
    r_ok = r[idx]
    e_ok = np.where(np.isfinite(err[idx]), err[idx], 0.0)
    signs = []
    peak = _ringing_peak(r_ok, e_ok, step)
    if peak is not None:
        signs.append((peak, "the neck rings (shrinks after its largest radius)"))
    if drop_radius is not None and drop_radius > 0:
        near = np.nonzero(r_ok >= NEAR_RADIUS * drop_radius)[0]
        if near.size:
            signs.append((int(near[0]), f"the neck passes {NEAR_RADIUS:g} of the drop radius"))
    if not signs:
        return None
    candidate, method = min(signs)
    x = np.log(t[idx] - contact_time)
    y = np.log(r_ok)
    floor = np.maximum(SHORT_FRACTION, step / r_ok) if lossy else SHORT_FRACTION
    start = _left_law(x, y, e_ok / r_ok, candidate, floor)
    if start < candidate:
        method += "; the growth left its law before that"
    return GrowthEnd(int(idx[start]), method)


def mark_after_growth(status, end: GrowthEnd | None) -> tuple[str, ...]:
    """The statuses with the ``ok`` and ``unresolved`` frames from `end` on set ``after-growth``.

    Examples
    --------
    >>> mark_after_growth(["ok", "ok", "unresolved", "not-found"], GrowthEnd(1, ""))
    ('ok', 'after-growth', 'after-growth', 'not-found')
    """
    if end is None:
        return tuple(status)
    after = STATUSES[AFTER_GROWTH]
    return tuple(
        after if i >= end.index and s in ("ok", "unresolved") else s for i, s in enumerate(status)
    )
