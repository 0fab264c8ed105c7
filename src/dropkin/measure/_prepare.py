"""What the first frames of a recording tell, used for every frame: the
backlight, the dark level, the noise, the edge blur and the drops' geometry."""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from .. import vision
from ..errors import MeasurementError
from ._options import DEFAULT_OPTIONS, MeasureOptions, crop

__all__ = ["Preparation", "prepare"]


@dataclasses.dataclass(frozen=True)
class Preparation:
    """What the first frames tell, used for every frame.

    Attributes
    ----------
    illumination : (M, N) ndarray
        Backlight model over the analysed region.
    dark : float
        Grey level of the drops' dark rim.
    noise : float
        Standard deviation of the transmission on the background.
    blur : float
        Edge blur sigma (px).
    pair : DropPair or None
        The drops (coalescence).
    spreading : SpreadingSetup or None
        The drop and the substrate (spreading).
    sessile : SessilePair or None
        The two drops on the plate (sessile coalescence, side view).
    reference_frame : int
        Index (in the recording) of the frame they were found in.
    shift_correction : bool
        Whether the neck is corrected for blur's shift of its concave outline
        (free drops; not the footprints of sessile drops seen from below).
    """

    illumination: np.ndarray
    dark: float
    noise: float
    blur: float
    pair: object | None
    reference_frame: int
    spreading: object | None = None
    sessile: object | None = None
    shift_correction: bool = True


def _noise(trans) -> float:
    """Noise of the transmission on the background, from neighbour differences."""
    diff = np.diff(trans, axis=1)
    bright = (trans[:, 1:] > 0.8) & (trans[:, :-1] > 0.8)
    values = diff[bright]  # a copy: the medians below may reorder it
    if values.size < 100:
        return 0.01
    values -= np.median(values, overwrite_input=True)
    mad = float(np.median(np.abs(values, out=values), overwrite_input=True))
    return max(1.4826 * mad / math.sqrt(2.0), 1e-4)


def prepare(
    recording, *, geometry: str, view: str = "side", options: MeasureOptions = DEFAULT_OPTIONS
):
    """Analyse the first frames: backlight, dark level, noise and the drops.

    The drops are looked for in the first frame, then in up to ten frames
    spread over the first tenth of the recording.

    Raises
    ------
    MeasurementError
        If no frame among those shows the drops.
    """
    n = len(recording)
    candidates = sorted({0, *np.linspace(0, max(n // 10, 1), 10, dtype=int).tolist()})
    reason = "no frames"
    for index in candidates:
        if index >= n:
            break
        frame = crop(recording[index], options.roi)
        if options.background is not None:
            illumination = crop(np.asarray(options.background, dtype=np.float64), options.roi)
        else:
            illumination = vision.fit_illumination(frame)
        dark = vision.dark_level(frame)
        # (The backlight's median on every fourth row and column: a check.)
        if float(np.median(illumination[::4, ::4])) - dark < 1e-3 * max(abs(dark), 1.0):
            reason = "the frame has no contrast"
            continue
        trans = vision.transmission(frame, illumination, dark)
        try:
            if geometry == "spreading":
                return _prepare_spreading(frame, trans, illumination, dark, index, view, options)
            if geometry == "sessile-coalescence" and view == "side":
                return _prepare_sessile(frame, trans, illumination, dark, index, options)
            pair = vision.find_drop_pair(trans, level=options.level)
        except MeasurementError as exc:
            reason = exc.message
            continue
        blur = vision.edge_blur(trans, pair)
        free_drops = geometry != "sessile-coalescence"
        return Preparation(
            illumination, dark, _noise(trans), blur, pair, index, shift_correction=free_drops
        )
    raise MeasurementError(
        f"the drops were not found in the first frames ({reason})", path=recording.path
    )


def _prepare_sessile(frame, trans, illumination, dark, index, options):
    """The plate and the two caps; the backlight refitted away from a mirror image."""
    pair = vision.find_sessile_pair(trans, level=options.level)
    if options.background is None:
        mask = vision.sessile_background_mask(frame.shape, pair)
        illumination = vision.fit_illumination(frame, background=mask)
        trans = vision.transmission(frame, illumination, dark)
        pair = vision.find_sessile_pair(trans, level=options.level)
    return Preparation(illumination, dark, _noise(trans), pair.blur, None, index, sessile=pair)


def _prepare_spreading(frame, trans, illumination, dark, index, view, options):
    """The drop and substrate; the backlight refitted away from a mirror image."""
    setup = vision.find_spreading_drop(trans, view=view, level=options.level)
    if options.background is None:
        # A reflective substrate shows the drop's mirror image, which the
        # default backlight fit would take for background.
        mask = vision.spreading_background_mask(frame.shape, setup)
        illumination = vision.fit_illumination(frame, background=mask)
        trans = vision.transmission(frame, illumination, dark)
        setup = vision.find_spreading_drop(trans, view=view, level=options.level)
    return Preparation(illumination, dark, _noise(trans), setup.blur, None, index, spreading=setup)
