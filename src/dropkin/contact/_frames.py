"""The frames' statuses once the contact instant is known."""

from __future__ import annotations

import numpy as np

from ..status import BEFORE_CONTACT, STATUSES, UNRESOLVED

__all__ = ["relabel_before_contact"]


def relabel_before_contact(times, status, contact_time: float | None):
    """Statuses with the unresolved frames before the contact instant set before contact.

    Frames before the contact instant that showed neither a gap nor a
    resolved neck (``unresolved``) were before contact too, by the best
    estimate: they become ``before-contact``, and what was measured in them
    is no measurement.

    Parameters
    ----------
    times : (F,) array_like
        Frame times (s).
    status : sequence of str
        One of :data:`dropkin.status.STATUSES` per frame.
    contact_time : float or None
        The contact instant (s, same origin as `times`); None if unknown
        (then nothing changes).

    Returns
    -------
    status : tuple of str
        The statuses after relabelling.
    early : (F,) ndarray of bool
        The frames relabelled.

    Examples
    --------
    >>> relabel_before_contact([0.0, 1.0, 2.0], ["unresolved"] * 3, 1.5)
    (('before-contact', 'before-contact', 'unresolved'), array([ True,  True, False]))
    """
    unresolved = np.array([s == STATUSES[UNRESOLVED] for s in status], dtype=bool)
    if contact_time is None:
        return tuple(status), np.zeros(len(unresolved), dtype=bool)
    early = (np.asarray(times) < contact_time) & unresolved
    before = STATUSES[BEFORE_CONTACT]
    return tuple(before if e else s for s, e in zip(status, early, strict=True)), early
