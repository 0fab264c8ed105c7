"""The per-frame status vocabulary: what each frame of a radius series shows.

A frame's status is one of :data:`STATUSES`, as written in ``radius.csv``:

``ok``
    A radius was measured.
``before-contact``
    The drops (or the drop and the substrate) have not touched yet.
``unresolved``
    In contact, but the neck or contact point is narrower than the optics
    resolve (a radius may still be given).
``not-found``
    Nothing to measure was seen.
``at-edge``
    What is measured reaches the frame's border.
``after-growth``
    In contact, after the growth phase has ended (the merged drop rings, the
    neck nears the drop radius, or the growth has left its law; see
    :mod:`dropkin.measure._growth`): a radius may be given, but the frame is
    kept out of every fit.

The image analysis works on integer codes, which index :data:`STATUSES`;
:func:`status_names` turns codes into names.
"""

from __future__ import annotations

__all__ = [
    "STATUSES",
    "OK",
    "BEFORE_CONTACT",
    "UNRESOLVED",
    "NOT_FOUND",
    "AT_EDGE",
    "AFTER_GROWTH",
    "IN_CONTACT",
    "status_names",
    "status_mask",
]

#: Allowed per-frame statuses; the integer codes below index this tuple.
STATUSES = ("ok", "before-contact", "unresolved", "not-found", "at-edge", "after-growth")
OK, BEFORE_CONTACT, UNRESOLVED, NOT_FOUND, AT_EDGE, AFTER_GROWTH = range(len(STATUSES))
#: The statuses of frames that show the drops in contact.
IN_CONTACT = ("ok", "unresolved", "at-edge", "after-growth")


def status_names(codes) -> tuple[str, ...]:
    """The status names of a sequence of integer codes.

    Examples
    --------
    >>> status_names([OK, AT_EDGE])
    ('ok', 'at-edge')
    """
    return tuple(STATUSES[c] for c in codes)


def status_mask(statuses, *names):
    """Boolean array: which of `statuses` (a sequence of str) is one of `names`.

    One pass in C over the statuses (no Python loop a frame), for series of
    millions of frames; numpy is imported here, not with the vocabulary.

    Examples
    --------
    >>> status_mask(["ok", "unresolved", "at-edge"], "ok", "at-edge").tolist()
    [True, False, True]
    """
    import numpy as np

    return np.fromiter(map(frozenset(names).__contains__, statuses), bool, len(statuses))
