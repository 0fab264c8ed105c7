"""The contact bracket a fit searches t0 in: what the frames prove, nothing narrower.

Every fit of the radius law treats the contact instant t0 as a parameter,
bounded by the frames (:func:`frames_bracket`): from the time of the last
frame that shows the drops apart (status ``before-contact``) to the time of
the first frame that shows them in contact (a status of
:data:`dropkin.status.IN_CONTACT`: ``ok``, ``unresolved`` — a neck too narrow
to measure, but a neck — or ``at-edge``). The bracket is never narrowed to
± k standard errors of an estimate: the measured contact instant of
:func:`estimate_contact` may start the search and is reported, but the fit
and its bootstrap search the whole bracket the images prove.

When the statuses do not bracket contact (a series without a frame before
contact), :func:`default_bracket` falls back on the frame interval that holds
the given contact instant. In either case :func:`bracket_before_first_point`
ends the bracket just before the first measured point after its start (a
measured bridge means contact has happened).

Examples
--------
>>> frames_bracket([0.0, 1.0, 2.0, 3.0, 4.0],
...                ["before-contact", "before-contact", "unresolved", "ok", "ok"])
(1.0, 2.0)
>>> default_bracket([0.0, 1.0, 2.0, 3.0], ["ok"] * 4, 1.4)   # the frame holding 1.4
(1.0, 2.0)
"""

from __future__ import annotations

import numpy as np

from ..status import IN_CONTACT, STATUSES, status_mask

__all__ = ["frames_bracket", "default_bracket", "bracket_before_first_point"]

_BEFORE = STATUSES[1]  # "before-contact"


def frames_bracket(time, status, *, last_apart=None) -> tuple[float, float] | None:
    """The contact bracket the frames prove: (last frame apart, first frame in contact).

    Contact is taken as lasting from the first ``ok`` frame on (a measured
    neck); the bracket's upper end is the first frame in contact
    (:data:`dropkin.status.IN_CONTACT`) after the last ``before-contact``
    frame that precedes it. ``before-contact`` frames after the first ``ok``
    frame are misreadings and do not move the bracket.

    Parameters
    ----------
    time : (F,) array_like
        Frame times (s).
    status : (F,) sequence of str
        Per-frame status (:data:`dropkin.status.STATUSES`).
    last_apart : float, optional
        Time of the last frame other evidence shows apart (``measure.json``'s
        ``contact_bracket_s[0]``: the last frame with a clearly open gap). The
        bracket starts there when that is earlier than the statuses say (a
        measurement may have relabelled unresolved frames as before contact on
        the word of its estimate, which the images do not prove).

    Returns
    -------
    tuple of float, or None
        (lo, hi) in s; None when no frame shows the drops apart before a frame
        in contact, or none shows them in contact.

    Examples
    --------
    >>> frames_bracket([0.0, 1.0, 2.0, 3.0], ["before-contact", "unresolved", "unresolved", "ok"])
    (0.0, 1.0)
    >>> frames_bracket([0.0, 1.0, 2.0], ["ok"] * 3) is None
    True
    """
    t = np.asarray(time, dtype=np.float64)
    st = list(map(str, status))
    touching = status_mask(st, *IN_CONTACT)
    apart = status_mask(st, _BEFORE) & np.isfinite(t)
    measured = np.flatnonzero(status_mask(st, IN_CONTACT[0]))
    end = int(measured[0]) if len(measured) else len(st)
    before = np.nonzero(apart[:end])[0]
    if not len(before):
        return None
    after = np.nonzero(touching & np.isfinite(t) & (np.arange(len(st)) > before[-1]))[0]
    if not len(after):
        return None
    lo, hi = float(t[before[-1]]), float(t[after[0]])
    if last_apart is not None and np.isfinite(last_apart) and last_apart < lo:
        lo = float(last_apart)
    return lo, hi


def default_bracket(time, status, contact_time) -> tuple[float, float]:
    """The bracket when none is given: :func:`frames_bracket`, else the frame holding contact.

    Without a frame before contact in `status`, the images prove nothing
    about t0 beyond the frame interval that holds `contact_time` (from the
    last frame at or before it to the next frame; one median frame interval
    on a side that has no frame).
    """
    bracket = frames_bracket(time, status)
    if bracket is not None:
        return bracket
    t = np.sort(np.asarray(time, dtype=np.float64))
    t = t[np.isfinite(t)]
    step = float(np.median(np.diff(t))) if len(t) > 1 else 0.0
    below, above = t[t <= contact_time], t[t > contact_time]
    lo = float(below[-1]) if len(below) else contact_time - step
    hi = float(above[0]) if len(above) else contact_time + step
    return lo, hi


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
