"""What the first frames of a recording tell, used for every frame: the
contrast, the backlight, the dark level, the noise, the edge blur and the
drops' geometry.

*Contrast*: dark drops on a backlight, or bright drops on a dark field (front
light, fluorescence). The experiment file may say which
(``[recording] contrast``); by default each frame looked at is read by
:func:`dropkin.vision.frame_contrast` (drops are convex: the side the
outlines curve round). For bright drops the "illumination" is the dark
field's level and the "dark level" the drops' level just inside their
outline (:func:`dropkin.vision.rim_level`): the transmission's span is
negative, and the frames reach every later step as dark drops on a bright
field (:mod:`dropkin.vision._silhouette`).
"""

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
    contrast : str
        ``"dark-drops"`` or ``"bright-drops"`` (see :data:`dropkin.vision.CONTRASTS`).
    contrast_origin : str
        Where the contrast comes from: the experiment file, or the reference
        frame's share of bright pixels.
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
    contrast: str = "dark-drops"
    contrast_origin: str = "experiment file"


def _noise(trans, illumination=None, dark: float = 0.0) -> float:
    """Noise of the transmission on the background, from neighbour differences.

    With the `illumination` and `dark` level, noise below one grey count
    (where the median absolute difference is about 0) is measured too.
    """
    diff = np.diff(trans, axis=1)
    bright = (trans[:, 1:] > 0.8) & (trans[:, :-1] > 0.8)
    values = diff[bright]  # a copy: the medians below may reorder it
    if values.size < 100:
        return 0.01
    values -= np.median(values, overwrite_input=True)
    mad = float(np.median(np.abs(values), overwrite_input=True))
    if illumination is None:
        return max(1.4826 * mad / math.sqrt(2.0), 1e-4)
    # One grey count in transmission (the field's median level to the drops').
    count = 1.0 / max(abs(float(np.median(illumination[::4, ::4])) - dark), 1e-12)
    if mad < 0.5 * count:
        # Noise below a grey count (a dark field on an 8-bit camera): most
        # neighbours are equal and the median absolute difference is about
        # 0. The spread of the differences within five counts of 0 instead.
        near = values[np.abs(values) <= 5.0 * count]
        return max(float(np.std(near)) / math.sqrt(2.0), 1e-4)
    return max(1.4826 * mad / math.sqrt(2.0), 1e-4)


def _lighting(frame, options, contrast: str):
    """(contrast, its origin, illumination, dark) of one frame, or a reason
    (str) why the frame shows no contrast."""
    if contrast == "auto":
        contrast, vote, share = vision.frame_contrast(frame)
        origin = (
            f"told from the frame: outline vote {vote:+.2f} (+1: curving round the dark"
            f" side), {share:.0%} of its pixels bright"
        )
    else:
        origin = "experiment file"
    if options.background is not None:
        illumination = crop(np.asarray(options.background, dtype=np.float64), options.roi)
    else:
        illumination = vision.fit_illumination(frame, contrast=contrast)
    dark = vision.dark_level(frame, contrast=contrast)
    # (The backlight's median on every fourth row and column: a check.)
    step = float(np.median(illumination[::4, ::4])) - dark
    if contrast == "bright-drops":
        step = -step
    if step < 1e-3 * max(abs(dark), 1.0):
        return "the frame has no contrast"
    return contrast, origin, illumination, dark


def prepare(
    recording,
    *,
    geometry: str,
    view: str = "side",
    options: MeasureOptions = DEFAULT_OPTIONS,
    contrast: str = "auto",
):
    """Analyse the first frames: contrast, backlight, dark level, noise and the drops.

    The drops are looked for in the first frame, then in up to ten frames
    spread over the first tenth of the recording. `contrast` is
    ``"dark-drops"``, ``"bright-drops"`` or ``"auto"`` (told from each frame
    looked at).

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
        lighting = _lighting(frame, options, contrast)
        if isinstance(lighting, str):
            reason = lighting
            continue
        lit = dict(zip(("contrast", "contrast_origin"), lighting[:2], strict=True))
        illumination, dark = lighting[2:]
        trans = vision.transmission(frame, illumination, dark)
        if lit["contrast"] == "bright-drops":
            # Bright drops are not evenly bright: their level is the one
            # just inside the outline, not the brightest pixel's.
            rim = vision.rim_level(frame, trans, level=options.level)
            if rim is not None and rim > float(np.median(illumination[::4, ::4])):
                dark = rim
                trans = vision.transmission(frame, illumination, dark)
        try:
            if geometry == "spreading":
                prep = _prepare_spreading(frame, trans, illumination, dark, index, view, options)
            elif geometry == "sessile-coalescence" and view == "side":
                prep = _prepare_sessile(frame, trans, illumination, dark, index, options)
            else:
                prep = _prepare_pair(trans, illumination, dark, index, geometry, options, lit)
        except MeasurementError as exc:
            reason = exc.message
            continue
        return dataclasses.replace(prep, **lit)
    if contrast != "auto":
        reason += f"; looked for as {contrast} (recording.contrast), not told from the frames"
    raise MeasurementError(
        f"the drops were not found in the first frames ({reason})", path=recording.path
    )


def _prepare_pair(trans, illumination, dark, index, geometry, options, lit):
    """The two free drops (or drops on a plate seen from below)."""
    pair = vision.find_drop_pair(trans, level=options.level)
    # Bright drops' level changes around their outline: each edge's own step.
    blur = vision.edge_blur(trans, pair, own_step=lit["contrast"] == "bright-drops")
    free_drops = geometry != "sessile-coalescence"
    return Preparation(
        illumination,
        dark,
        _noise(trans, illumination, dark),
        blur,
        pair,
        index,
        shift_correction=free_drops,
    )


def _prepare_sessile(frame, trans, illumination, dark, index, options):
    """The plate and the two caps; the backlight refitted away from a mirror image."""
    pair = vision.find_sessile_pair(trans, level=options.level)
    if options.background is None:
        mask = vision.sessile_background_mask(frame.shape, pair)
        illumination = vision.fit_illumination(frame, background=mask)
        trans = vision.transmission(frame, illumination, dark)
        pair = vision.find_sessile_pair(trans, level=options.level)
    return Preparation(
        illumination, dark, _noise(trans, illumination, dark), pair.blur, None, index, sessile=pair
    )


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
    return Preparation(
        illumination,
        dark,
        _noise(trans, illumination, dark),
        setup.blur,
        None,
        index,
        spreading=setup,
    )
