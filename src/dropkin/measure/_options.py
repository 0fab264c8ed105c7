"""The settings of a measurement and their checks against the recording."""

from __future__ import annotations

import dataclasses

import numpy as np

from ..errors import ExperimentError

__all__ = ["MeasureOptions", "DEFAULT_OPTIONS", "checked_options"]


@dataclasses.dataclass(frozen=True)
class MeasureOptions:
    """Settings of a measurement (all optional).

    Attributes
    ----------
    roi : tuple of int or None
        Region of interest (row_start, row_stop, col_start, col_stop), in
        pixels of the full frame; only this part of each frame is analysed.
    level : float
        Edge level: the fraction of the way from the drops' dark level to the
        local background at which the outline lies (0.5, the midpoint of a
        blurred edge, unless a recording needs another by hand).
    chunk_size : int
        Frames per chunk (memory holds a few chunks at most).
    jobs : int
        Worker processes for the chunks (1: in this process).
    gap_blurs : float
        The neck counts as resolved once the gap beside it is this many edge
        blurs (sigma, px) wide; see :func:`dropkin.vision.neck_from_band`.
    background : (M, N) ndarray or None
        An image of the empty field of view (full frame), used as the
        backlight instead of the model fitted to each recording's first
        frames.
    level_spread : float
        Every frame is measured in the same pass at two more edge levels,
        ``level - level_spread`` and ``level + level_spread`` (each clipped
        to [0.05, 0.95]; a level equal to `level` after clipping is
        dropped), for the systematic interval of the fit; 0 measures at
        `level` only. See :attr:`other_levels`.
    """

    roi: tuple[int, int, int, int] | None = None
    level: float = 0.5
    chunk_size: int = 64
    jobs: int = 1
    gap_blurs: float = 3.0
    background: np.ndarray | None = dataclasses.field(default=None, repr=False, compare=False)
    level_spread: float = 0.1

    @property
    def other_levels(self) -> tuple[float, ...]:
        """The other edge levels measured besides `level`, in increasing order."""
        if not self.level_spread > 0:
            return ()
        levels = {
            round(min(max(self.level + sign * self.level_spread, 0.05), 0.95), 12)
            for sign in (-1.0, 1.0)
        }
        return tuple(sorted(v for v in levels if v != round(self.level, 12)))


#: The settings used when none are given.
DEFAULT_OPTIONS = MeasureOptions()


def crop(frames, roi):
    """The region of interest of a frame or of frames (the last two axes)."""
    if roi is None:
        return frames
    r0, r1, c0, c1 = roi
    return frames[..., r0:r1, c0:c1]


def _check_roi(roi, shape):
    if roi is None:
        return None
    r0, r1, c0, c1 = (int(v) for v in roi)
    m, n = shape
    if not (0 <= r0 < r1 <= m and 0 <= c0 < c1 <= n) or r1 - r0 < 8 or c1 - c0 < 8:
        raise ExperimentError(
            f"lies outside the {m} x {n} frame or is smaller than 8 x 8 px",
            key="--roi",
            value=f"{r0}:{r1},{c0}:{c1}",
            expected=f"rows within 0:{m} and columns within 0:{n}",
        )
    return (r0, r1, c0, c1)


def checked_options(options: MeasureOptions, shape) -> MeasureOptions:
    """The options with the region of interest as whole pixels inside frames of `shape`.

    Raises
    ------
    ExperimentError
        If the region of interest lies outside the frame or is smaller than
        8 x 8 px, or the background image is not of the frames' size.
    """
    options = dataclasses.replace(options, roi=_check_roi(options.roi, shape))
    if options.background is not None and np.shape(options.background) != shape:
        raise ExperimentError(
            f"is {np.shape(options.background)}, the frames are {shape}",
            key="--background",
            expected="an image of the same size as the frames",
        )
    if not 0.0 <= options.level_spread < 1.0:
        raise ExperimentError(
            "is not between 0 and 1",
            key="level_spread",
            value=options.level_spread,
            expected="a fraction of rim-to-background, e.g. 0.1",
        )
    return options
