"""The gap on the line of centres, once it has closed for good.

Two drops that have touched do not come apart again (a merging pair, a drop
wetting its plate): after the gap reads closed in a few consecutive frames,
a later frame whose gap reads open is an artefact of the picture, not a gap.
Lossy video makes such frames: an MPEG-4 or H.264 key frame, re-coded in
full, can lift a 16 px block on the line of centres by a grey count or two,
and the transmission summed along the axis then reads a gap of a few tenths
of a pixel 20 frames after contact. Taken at its word, that frame moved the
contact instant 26 frames late and called every neck before it
``before-contact``.

An inter-frame codec also *holds* blocks: where a block changed little it is
copied from the frame before, so a gap that closed between two frames can go
on reading open, to the same bit, for ten frames or more (and then differ
by a few millionths of a pixel when a block further along the axis changes).
An open reading within a thousandth of a pixel of the one before it is no new
observation, and is dropped: with noise in the picture two readings of an
open gap differ by hundredths of a pixel (a real reading is lost now and
then, which costs the extrapolation one point of several).
"""

from __future__ import annotations

import numpy as np

__all__ = ["settled_gap", "fresh_gap"]


def settled_gap(gap, floor: float, run: int = 3) -> np.ndarray:
    """The gaps with every reading from the first lasting closure on held to `floor`.

    Parameters
    ----------
    gap : (F,) array_like
        Gap on the line of centres per frame, in frame order (NaN where not
        measured).
    floor : float
        A reading at or below this counts as closed.
    run : int, optional
        Consecutive closed readings that make a closure lasting; a single
        closed reading between open ones (noise on a gap near the floor) does
        not.

    Returns
    -------
    gap : (F,) ndarray
        A copy; unchanged up to the first lasting closure, and from it on no
        reading above `floor` (readings below it, the noise of a closed gap,
        are kept as they are; NaN stays NaN).

    Examples
    --------
    >>> settled_gap([2.0, 1.0, 0.0, -0.02, 0.01, 0.4, 0.0], floor=0.1).tolist()
    [2.0, 1.0, 0.0, -0.02, 0.01, 0.1, 0.0]
    >>> settled_gap([2.0, 0.0, 1.0, 0.5, 0.0, 0.0, 0.0], floor=0.1).tolist()
    [2.0, 0.0, 1.0, 0.5, 0.0, 0.0, 0.0]
    """
    out = np.array(gap, dtype=np.float64)
    if run < 1:
        raise ValueError(f"run must be at least 1, got {run}")
    closed = np.isfinite(out) & (out <= floor)
    if len(out) < run:
        return out
    # Windows of `run` frames all closed; the first one starts the closure.
    lasting = np.lib.stride_tricks.sliding_window_view(closed, run).all(axis=1)
    starts = np.nonzero(lasting)[0]
    if starts.size:
        out[starts[0] :] = np.minimum(out[starts[0] :], floor)  # NaN stays NaN
    return out


def fresh_gap(gap, floor: float, tolerance: float = 1e-3) -> np.ndarray:
    """The gaps with every open reading that repeats the one before it set to NaN.

    Parameters
    ----------
    gap : (F,) array_like
        Gap on the line of centres per frame, in frame order.
    floor : float
        Readings at or below this (closed) are kept as they are.
    tolerance : float, optional
        A reading within this of the one before it (in the unit of `gap`)
        repeats it.

    Returns
    -------
    gap : (F,) ndarray
        A copy.

    Examples
    --------
    >>> fresh_gap([1.0, 0.42, 0.42, 0.42, 0.0, 0.0], floor=0.1).tolist()
    [1.0, 0.42, nan, nan, 0.0, 0.0]
    """
    out = np.array(gap, dtype=np.float64)
    if len(out) < 2:
        return out
    held = np.zeros(len(out), dtype=bool)
    held[1:] = (np.abs(out[1:] - out[:-1]) <= tolerance) & (out[1:] > floor)
    out[held] = np.nan
    return out
