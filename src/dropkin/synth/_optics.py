"""From an opacity image to camera counts: backlight, spot, dust, blur, noise.

The light model, per pixel, as a fraction of the sensor's full scale:

    light = blur(backlight * dust * (1 - opacity * (1 - drop_transmission)
                                      + spot_brightness * spot))

With ``contrast="bright-drops"`` (front light or fluorescence) the drops glow
on a dark field, the backlit picture turned inside out: where the backlight
had a dark rim the drop is bright, its centre spot darker, and the lamp's
unevenness still shapes both levels:

    emitted = clip(opacity * (1 - drop_transmission) - spot_brightness * spot, 0)
    light = blur(backlight * dust * (field + emission * emitted * (1 + glow * g)))

``g`` is a smooth bump (the opacity blurred over `glow_px` and shifted by half
of it towards the top left): each drop brightest off its centre, where the
front light strikes, and dimmer towards its rim, as a real glowing drop is;
``glow = 0`` gives the plain inversion.

`blur` is a Gaussian point-spread function; then the sensor counts electrons
(Poisson shot noise), adds Gaussian read noise and quantises to 8 bits
(0..255 in uint8) or 12 bits (0..4095 in uint16, never rescaled).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import ndimage

from ..errors import ExperimentError
from ._coverage import disc_coverage

#: How a scene is lit: dark drops on a backlight, or bright drops on a dark field.
CONTRASTS = ("dark-drops", "bright-drops")

__all__ = [
    "CONTRASTS",
    "Optics",
    "Sensor",
    "backlight",
    "dust_transmission",
    "apply_optics",
    "expose",
]


@dataclass(frozen=True)
class Optics:
    """The imaging system and the illumination.

    Attributes
    ----------
    blur_px : float
        Sigma of the Gaussian point-spread function in pixels; 0 for none.
    background : float
        Backlight level at the image centre, as a fraction of full scale.
    gradient : float
        Relative change of the backlight from one side of the image to the
        other, along `gradient_angle_deg` (0 along the columns).
    gradient_angle_deg : float
        Direction of the gradient.
    vignette : float
        Relative loss of backlight at the image corners (quadratic fall-off).
    drop_transmission : float
        Light that passes through the dark silhouette (0 is black).
    spot_brightness : float
        Light added inside a drop's bright central spot (as a fraction of the
        backlight).
    dust_count : int
        Number of dust specks, at fixed places in every frame.
    dust_radius_px : tuple of float
        Smallest and largest speck radius.
    dust_depth : float
        Light a speck takes away at its centre (0..1).
    contrast : str
        ``"dark-drops"`` (backlight) or ``"bright-drops"`` (front light,
        fluorescence: the light model above).
    field : float
        Bright drops: the dark field's level, as a fraction of `background`.
    emission : float
        Bright drops: the rim's brightness above the field, as a fraction of
        `background`.
    glow : float
        Bright drops: how much brighter the glow's peak is than the rim
        (0: evenly bright drops).
    glow_px : float
        Bright drops: the width (sigma, px) of the glow.
    """

    blur_px: float = 1.0
    background: float = 0.8
    gradient: float = 0.1
    gradient_angle_deg: float = 30.0
    vignette: float = 0.15
    drop_transmission: float = 0.06
    spot_brightness: float = 0.5
    dust_count: int = 0
    dust_radius_px: tuple[float, float] = (0.8, 3.0)
    dust_depth: float = 0.35
    contrast: str = "dark-drops"
    field: float = 0.08
    emission: float = 0.7
    glow: float = 0.0
    glow_px: float = 20.0

    def __post_init__(self):
        if self.contrast not in CONTRASTS:
            raise ExperimentError(
                "is not a known contrast",
                key="Optics.contrast",
                value=self.contrast,
                expected=" or ".join(CONTRASTS),
            )
        checks = {
            "blur_px": self.blur_px >= 0,
            "background": self.background > 0,
            "gradient": 0 <= self.gradient < 1,
            "vignette": 0 <= self.vignette < 1,
            "drop_transmission": 0 <= self.drop_transmission < 1,
            "spot_brightness": self.spot_brightness >= 0,
            "dust_count": self.dust_count >= 0,
            "dust_depth": 0 <= self.dust_depth <= 1,
            "field": 0 <= self.field < 1,
            "emission": self.emission > 0,
            "glow": self.glow >= 0,
            "glow_px": self.glow_px > 0,
        }
        for key, ok in checks.items():
            if not ok:
                raise ExperimentError(
                    "is out of range", key=f"Optics.{key}", value=getattr(self, key)
                )


@dataclass(frozen=True)
class Sensor:
    """The camera sensor.

    Attributes
    ----------
    bit_depth : int
        8 (uint8, 0..255) or 12 (uint16 words holding 0..4095).
    full_well : float or None
        Electrons at full scale; shot noise follows from it. None turns all
        noise off (the frame is the rounded light).
    read_noise : float
        Standard deviation of the read noise, in electrons.
    """

    bit_depth: int = 8
    full_well: float | None = 20000.0
    read_noise: float = 10.0

    def __post_init__(self):
        if self.bit_depth not in (8, 12):
            raise ExperimentError("must be 8 or 12", key="Sensor.bit_depth", value=self.bit_depth)
        if self.full_well is not None and not self.full_well > 0:
            raise ExperimentError("must be positive", key="Sensor.full_well", value=self.full_well)
        if not self.read_noise >= 0:
            raise ExperimentError(
                "must be 0 or more", key="Sensor.read_noise", value=self.read_noise
            )

    @property
    def max_count(self) -> int:
        """Largest count: 255 or 4095."""
        return (1 << self.bit_depth) - 1

    @property
    def dtype(self):
        """numpy dtype of the frames: uint8 or uint16."""
        return np.uint8 if self.bit_depth == 8 else np.uint16


def backlight(shape, optics: Optics) -> np.ndarray:
    """The uneven backlight: a linear gradient times a quadratic vignette.

    Parameters
    ----------
    shape : tuple of int
        (M, N).
    optics : Optics

    Returns
    -------
    light : (M, N) ndarray of float
        Fraction of full scale.
    """
    rows, cols = shape
    r = (np.arange(rows) - (rows - 1) / 2) / max(rows - 1, 1)
    c = (np.arange(cols) - (cols - 1) / 2) / max(cols - 1, 1)
    angle = math.radians(optics.gradient_angle_deg)
    along = -r[:, None] * math.sin(angle) + c[None, :] * math.cos(angle)
    radius2 = (r[:, None] ** 2 + c[None, :] ** 2) / 0.5  # 1 at the corners
    return optics.background * (1 + optics.gradient * along) * (1 - optics.vignette * radius2)


def dust_transmission(shape, optics: Optics, rng: np.random.Generator) -> np.ndarray:
    """Fraction of light left by the dust specks (1 where there is none).

    Parameters
    ----------
    shape : tuple of int
        (M, N).
    optics : Optics
        ``dust_count``, ``dust_radius_px`` and ``dust_depth`` are used.
    rng : numpy.random.Generator
        Places and sizes the specks.

    Returns
    -------
    transmission : (M, N) ndarray of float
    """
    out = np.ones(shape)
    lo, hi = optics.dust_radius_px
    for _ in range(optics.dust_count):
        row = rng.uniform(0, shape[0] - 1)
        col = rng.uniform(0, shape[1] - 1)
        radius = rng.uniform(lo, hi)
        depth = optics.dust_depth * rng.uniform(0.5, 1.0)
        out *= 1.0 - depth * disc_coverage(shape, row, col, radius)
    return out


def apply_optics(opacity, spot, *, optics: Optics, light=None, dust=None):
    """Light on the sensor, as a fraction of full scale, before noise.

    Parameters
    ----------
    opacity : (M, N) ndarray
        Fraction of the backlight blocked in each pixel.
    spot : (M, N) ndarray
        Coverage of the bright central spots.
    optics : Optics
    light : (M, N) ndarray, optional
        The backlight (:func:`backlight`), computed if not given.
    dust : (M, N) ndarray, optional
        The dust transmission (:func:`dust_transmission`); none if not given.

    Returns
    -------
    light : (M, N) ndarray of float
    """
    opacity = np.asarray(opacity, dtype=float)
    if light is None:
        light = backlight(opacity.shape, optics)
    if optics.contrast == "bright-drops":
        image = light * _emitted(opacity, spot, optics)
    else:
        transmitted = 1.0 - opacity * (1.0 - optics.drop_transmission)
        transmitted = transmitted + optics.spot_brightness * np.asarray(spot, dtype=float)
        image = light * transmitted
    if dust is not None:
        image = image * dust
    if optics.blur_px > 0:
        image = ndimage.gaussian_filter(image, optics.blur_px, mode="nearest", truncate=4.0)
    return image


def _emitted(opacity, spot, optics: Optics):
    """Bright drops on a dark field, before the lamp's shape (see the module)."""
    emitted = opacity * (1.0 - optics.drop_transmission)
    emitted = np.clip(emitted - optics.spot_brightness * np.asarray(spot, dtype=float), 0.0, None)
    if optics.glow > 0:
        # The bump on a four-times coarser grid (smooth: nothing is lost),
        # shifted towards the top left, then back to full size.
        small = opacity[::4, ::4]
        bump = ndimage.gaussian_filter(small, optics.glow_px / 4.0, mode="constant")
        shift = optics.glow_px / 8.0
        bump = ndimage.shift(bump, (-shift, -shift), order=1, mode="constant")
        zoom = (opacity.shape[0] / small.shape[0], opacity.shape[1] / small.shape[1])
        bump = ndimage.zoom(bump, zoom, order=1, grid_mode=True, mode="nearest")
        bump = bump[: opacity.shape[0], : opacity.shape[1]]
        emitted = emitted * (1.0 + optics.glow * bump / max(float(bump.max()), 1e-12))
    return optics.field + optics.emission * emitted


def expose(light, *, sensor: Sensor, rng: np.random.Generator | None = None):
    """Camera counts for `light` (fraction of full scale): noise, then quantising.

    Parameters
    ----------
    light : (M, N) ndarray
    sensor : Sensor
    rng : numpy.random.Generator, optional
        Required unless ``sensor.full_well`` is None.

    Returns
    -------
    frame : (M, N) ndarray of uint8 or uint16
        Values 0..255 (8-bit) or 0..4095 (12-bit in 16-bit words).

    Examples
    --------
    >>> light = np.array([[0.0, 0.5, 1.2]])
    >>> frame = expose(light, sensor=Sensor(bit_depth=12, full_well=None))
    >>> frame.dtype.name, frame.tolist()
    ('uint16', [[0, 2048, 4095]])
    """
    light = np.clip(np.asarray(light, dtype=float), 0.0, None)
    if sensor.full_well is None:
        counts = light * sensor.max_count
    else:
        if rng is None:
            raise ValueError("a noisy sensor needs an rng")
        electrons = rng.poisson(light * sensor.full_well).astype(float)
        if sensor.read_noise > 0:
            electrons += rng.normal(0.0, sensor.read_noise, size=light.shape)
        counts = electrons * (sensor.max_count / sensor.full_well)
    return np.clip(np.rint(counts), 0, sensor.max_count).astype(sensor.dtype)
