"""The two drops found again just before they touch, wherever that is in the recording.

:func:`dropkin.measure._prepare.prepare` finds the drops in the first frames.
In a long recording the drops may have moved (one driven on its needle
towards the other) or grown (fed slowly through their needles) by the time
they touch, hundreds of frames later; the circles of the first frames then
put the neck's chord across a drop's body. :func:`relocate_near_contact`
finds the last frame that still shows two separate silhouettes by bisection
(the drops are apart before contact and one silhouette after it, so about
log2(F) frames of F are looked at), and fits the circles there. They replace
the first frames' circles when a centre or a radius has moved by more than
half a pixel (and the radii are within a factor 2 of the first ones, the
circles not overlapping by more than a pixel).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from .. import vision
from ..errors import MeasurementError
from ._options import crop

__all__ = ["relocate_near_contact", "MOVED_PX"]

#: A circle's centre or radius that changed by more than this (px) between
#: the first frames and the last frame apart makes the later circles the ones used.
MOVED_PX = 0.5


def _pair_apart(recording, prep, options, index):
    """The drop pair of frame `index` if it shows two separate drops, else None."""
    frame = crop(recording[index], options.roi)
    trans = vision.transmission(frame, prep.illumination, prep.dark)
    try:
        pair = vision.find_drop_pair(trans, level=options.level)
    except MeasurementError:
        return None
    return None if pair.in_contact else pair


def _moved(old, new) -> float:
    """The largest change (px) of a centre or a radius between two pairs."""
    return max(
        max(float(np.hypot(*(a.centre - b.centre))), abs(a.radius - b.radius))
        for a, b in zip(old.circles, new.circles, strict=True)
    )


def last_frame_apart(recording, prep, options):
    """(index, pair) of the last frame showing two separate drops before they
    touch, by bisection from the preparation's reference frame; None when the
    reference frame already shows them touching or the last frame still
    shows them apart."""
    if prep.pair is None or prep.pair.in_contact:
        return None
    lo, hi = int(prep.reference_frame), len(recording) - 1
    if hi <= lo or _pair_apart(recording, prep, options, hi) is not None:
        return None
    pair = prep.pair
    while hi - lo > 1:
        middle = (lo + hi) // 2
        found = _pair_apart(recording, prep, options, middle)
        if found is None:
            hi = middle
        else:
            lo, pair = middle, found
    return lo, pair


def relocate_near_contact(recording, prep, options):
    """The preparation with the drops' circles from the last frame before contact.

    Only for two drops (``prep.pair``); the preparation is returned as it
    is when the frames do not show the drops coming into contact, or when
    the drops have not moved or grown by more than :data:`MOVED_PX`.
    """
    found = last_frame_apart(recording, prep, options)
    if found is None:
        return prep
    index, pair = found
    if index == prep.reference_frame or _moved(prep.pair, pair) <= MOVED_PX:
        return prep
    ratio = pair.radii / prep.pair.radii
    if not (np.all((ratio > 0.5) & (ratio < 2.0)) and pair.gap > -1.0):
        # Not the same two drops about to touch (a speck taken for a drop,
        # circles that overlap): the first frames' circles stay.
        return prep
    return dataclasses.replace(prep, pair=pair, reference_frame=index)
