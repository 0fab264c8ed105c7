"""Which way a frame is lit, and the level of drops that are not evenly bright.

*Which way.* Drops are convex: away from a neck, their outlines curve round
the drop. Under a backlight the drops are the dark side of every outline,
under front light or in fluorescence the bright side. In a smoothed frame
the isophotes follow the outlines, and their curvature
``div(grad I / |grad I|)`` is positive where they curve round the dark side,
negative round the bright side. :func:`frame_contrast` lets the strong edges
of a frame vote with that sign, each weighted by its gradient: a vote near
+1 is dark drops, near -1 bright drops. A drop's centre spot (the other way
round) is a short outline and is outvoted; straight edges (a plate) vote
both ways and cancel. When the vote is not clear (within +-0.2: outlines
nearly straight, or a frame filled with a neck's concave outline), the frame's
four sides and its histogram decide, the field of view being the side of
Otsu's threshold that most of the sides lie on, or else the larger share of
the pixels.

*Bright drops' level.* A glowing drop is brighter inside than at its rim;
its outline lies half-way between the field and its level just inside the
outline (:func:`rim_level`), not its brightest pixel's.
"""

from __future__ import annotations

import numpy as np
from scipy import ndimage

from ._silhouette import _check_frame, silhouette_mask, threshold_midpoint

__all__ = ["frame_contrast", "rim_level", "outline_vote"]

#: Votes closer to 0 than this leave the decision to the sides and the histogram.
CLEAR_VOTE = 0.2


def outline_vote(frame, *, sigma: float = 2.0) -> float:
    """Which side the outlines of a frame curve round: +1 dark, -1 bright.

    The gradient-weighted mean sign of the isophotes' curvature over the
    strong edges (gradient above 0.3 of its 99.5th percentile) of the frame
    smoothed by a Gaussian of `sigma` px, a margin of ``3 sigma + 2`` px
    from the border left out.

    Examples
    --------
    >>> rows, cols = np.mgrid[0:80, 0:80]
    >>> disc = np.where((rows - 40) ** 2 + (cols - 40) ** 2 < 400, 20.0, 200.0)
    >>> round(outline_vote(disc), 2), round(outline_vote(220.0 - disc), 2)
    (1.0, -1.0)
    """
    f = ndimage.gaussian_filter(np.asarray(_check_frame(frame), dtype=np.float64), sigma)
    iy, ix = np.gradient(f)
    iyy, iyx = np.gradient(iy)
    ixx = np.gradient(ix, axis=1)
    grad = np.hypot(ix, iy)
    margin = int(3 * sigma) + 2
    inner = np.zeros(f.shape, dtype=bool)
    inner[margin:-margin, margin:-margin] = True
    if not inner.any():
        return 0.0
    edge = inner & (grad > 0.3 * np.percentile(grad[inner], 99.5))
    if not edge.any():
        return 0.0
    # The curvature's numerator (its denominator |grad I|**3 is positive).
    bend = ixx * iy**2 - 2.0 * ix * iy * iyx + iyy * ix**2
    weight = grad[edge]
    return float(np.sum(np.sign(bend[edge]) * weight) / np.sum(weight))


def frame_contrast(frame) -> tuple[str, float, float]:
    """Which way a frame is lit: ``(contrast, vote, bright_share)``.

    `contrast` is ``"dark-drops"`` or ``"bright-drops"``; `vote` is
    :func:`outline_vote` (+1: the outlines curve round the dark side);
    `bright_share` the fraction of the pixels above Otsu's threshold
    (:func:`threshold_midpoint`). See the module for the rule.

    Examples
    --------
    >>> f = np.full((60, 60), 200, np.uint8); f[20:40, 15:45] = 20
    >>> frame_contrast(f)[0], frame_contrast(255 - f)[0]
    ('dark-drops', 'bright-drops')
    """
    frame = _check_frame(frame)
    vote = outline_vote(frame)
    threshold = threshold_midpoint(frame)
    share = float(np.count_nonzero(frame > threshold)) / frame.size
    if abs(vote) >= CLEAR_VOTE:
        bright_drops = vote < 0
    else:
        sides = (frame[0], frame[-1], frame[:, 0], frame[:, -1])
        bright_sides = sum(int(np.median(side) > threshold) for side in sides)
        bright_drops = share < 0.5 if bright_sides == 2 else bright_sides < 2
    return ("bright-drops" if bright_drops else "dark-drops"), vote, share


def rim_level(frame, trans, *, level: float = 0.5, depth=(4.0, 8.0)):
    """Grey level of the drops just inside their outline, or None.

    The median raw grey level over the pixels of the silhouette
    (:func:`silhouette_mask` of `trans` at `level`) that lie between
    ``depth[0]`` and ``depth[1]`` px from its border: beyond the blur of the
    edge, short of the drop's inside. None if fewer than 50 pixels qualify.

    Examples
    --------
    >>> from dropkin.vision import transmission
    >>> f = np.full((40, 40), 10.0); f[5:35, 5:35] = 100.0; f[15:25, 15:25] = 180.0
    >>> rim_level(f, transmission(f, np.full(f.shape, 10.0), 180.0))
    100.0
    """
    import cv2

    frame = _check_frame(frame)
    mask = silhouette_mask(trans, level=level).astype(np.uint8)
    dist = cv2.distanceTransform(mask, cv2.DIST_L2, 5)
    ring = (dist > depth[0]) & (dist <= depth[1])
    if np.count_nonzero(ring) < 50:
        return None
    return float(np.median(frame[ring]))
