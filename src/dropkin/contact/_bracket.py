"""The contact bracket a fit searches t0 in, and how a bootstrap redraws t0 across it.

:func:`estimate_contact` gives the frames' bracket (last frame with a gap,
first frame with a resolved neck) and an instant with its standard error
inside it. The fit of the radius law does not search the whole frames'
bracket, which is often many frames wide: it searches

- the measured instant ± :data:`BRACKET_SIGMAS` standard errors, cut to the
  frames' bracket (:func:`measured_bracket`, what ``dropkin fit`` reads
  from ``measure.json``);
- when no bracket is given, the instant ± :data:`BRACKET_SIGMAS` errors, or
  ± half a frame interval when no error is known (:func:`default_bracket`);

and, either way, ends just before the first measured point after its start
(:func:`bracket_before_first_point`: a measured bridge means contact has
happened). The bootstrap of the fit redraws t0 uniformly across the whole
bracket (:func:`redraw_interval`), so that its intervals carry the
contact-instant uncertainty in full (a conservative choice).

Examples
--------
>>> measured_bracket(1.0e-4, 2.0e-6, [9.0e-5, 1.02e-4])     # ± 2 σ, cut to the frames
(9.6e-05, 0.000102)
>>> redraw_interval((3e-5, 3e-5)) is None                    # t0 fixed: nothing to redraw
True
"""

from __future__ import annotations

import math

import numpy as np

__all__ = [
    "BRACKET_SIGMAS",
    "measured_bracket",
    "default_bracket",
    "bracket_before_first_point",
    "redraw_interval",
]

#: Half-width of the bracket around a measured contact instant, in its standard errors.
BRACKET_SIGMAS = 2.0


def measured_bracket(contact_time, contact_time_err, frames_bracket):
    """The bracket to fit t0 in from a measured instant, its error and the frames' bracket.

    Parameters
    ----------
    contact_time : float or None
        The measured contact instant (s).
    contact_time_err : float or None
        Its standard error (s).
    frames_bracket : sequence of two floats, or None
        (last frame with a gap, first frame with a resolved neck) (s).

    Returns
    -------
    tuple of float or None
        ``contact_time ± 2 contact_time_err`` cut to `frames_bracket`; the
        frames' bracket itself when the error is unknown, zero or not
        finite, or when the cut leaves nothing; None when there is neither.
    """
    bracket = frames_bracket
    err = contact_time_err
    if contact_time is not None and err is not None and math.isfinite(err) and err > 0:
        # The fit redraws t0 across its bracket: the measured instant plus or
        # minus two standard errors (inside the frames' bracket) is what the
        # measurement knows; the frames' bracket alone is much wider.
        lo = contact_time - BRACKET_SIGMAS * err
        hi = contact_time + BRACKET_SIGMAS * err
        if bracket:
            lo, hi = max(lo, bracket[0]), min(hi, bracket[1])
        bracket = (lo, hi) if hi > lo else bracket
    return tuple(bracket) if bracket else None


def default_bracket(frame_times, contact_time, contact_time_err) -> tuple[float, float]:
    """The bracket around a contact instant when none is given.

    ``contact_time ± 2 contact_time_err``; without an error (None or 0),
    ± half the median interval between the finite `frame_times`.
    """
    if contact_time_err:
        return (
            contact_time - BRACKET_SIGMAS * contact_time_err,
            contact_time + BRACKET_SIGMAS * contact_time_err,
        )
    finite = np.sort(frame_times[np.isfinite(frame_times)])
    frame = float(np.median(np.diff(finite))) if len(finite) > 1 else 0.0
    return contact_time - 0.5 * frame, contact_time + 0.5 * frame


def bracket_before_first_point(lo, hi, point_times, frame_times) -> tuple[float, float]:
    """Cut the bracket (lo, hi) so that contact precedes the first measured point after lo.

    A frame with a measured bridge means contact has happened: t0 may not be
    later than 1 % of the shortest frame interval (of the finite
    `frame_times`) before the first of `point_times` after ``lo``.
    """
    after = point_times[point_times > lo]
    if hi <= lo or not len(after):
        return lo, hi
    finite = np.sort(frame_times[np.isfinite(frame_times)])
    steps = np.diff(finite)
    steps = steps[steps > 0]
    frame = float(np.min(steps)) if len(steps) else 0.0
    return lo, max(lo, min(hi, float(after[0]) - 0.01 * frame))


def redraw_interval(bracket) -> tuple[float, float] | None:
    """Where a bootstrap resample draws t0 (uniformly): the whole bracket, or None when fixed.

    A bracket of zero width (lo == hi) means t0 was fixed: it is kept.
    """
    lo, hi = bracket
    return (lo, hi) if hi > lo else None
