"""What a synthetic recording films: the camera, the setup, and the scene at one instant.

A setup (:class:`Coalescence` or :class:`Spreading`) with a :class:`Camera`
gives, for a neck or contact radius and a gap before contact, the scene record
of one frame (:mod:`._scenes`) that the renderer draws.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..errors import ExperimentError
from ._scenes import CapScene, PairScene, WettedDiscScene, cap_sphere

__all__ = ["VIEWS", "APPROACHES", "Camera", "Coalescence", "Spreading", "check_setup", "scene_at"]

VIEWS = ("side", "bottom")
#: How two drops come into contact: both move towards each other, only the
#: second one moves (driven on its needle), or both grow in place (fed
#: slowly through their needles).
APPROACHES = ("both-move", "second-moves", "growth")


@dataclass(frozen=True)
class Camera:
    """Frame timing and image scale.

    Attributes
    ----------
    frame_rate : float
        Hz.
    pixel_size : float
        Metres per pixel in the object plane.
    shape : tuple of int
        (rows, cols) of a frame.
    """

    frame_rate: float
    pixel_size: float
    shape: tuple[int, int] = (256, 384)

    def __post_init__(self):
        for key in ("frame_rate", "pixel_size"):
            value = getattr(self, key)
            if not (math.isfinite(value) and value > 0):
                raise ExperimentError("must be positive", key=key, value=value)
        if len(self.shape) != 2 or min(self.shape) < 8:
            raise ExperimentError(
                "must be two sizes of at least 8 pixels", key="shape", value=self.shape
            )


@dataclass(frozen=True)
class Coalescence:
    """Two drops that touch and merge (side view of free drops, or sessile drops from below).

    Attributes
    ----------
    view : str
        ``"side"`` (free drops, silhouettes) or ``"bottom"`` (footprints of
        sessile drops seen through the substrate).
    drop_radius : float
        Radius of drop 1, metres.
    second_radius : float or None
        Radius of drop 2; None for equal drops.
    angle_deg : float
        Direction of the line of centres from drop 1 to drop 2, counter-clockwise
        from the +col direction as seen in the image: 0 horizontal, -90 drop 2
        below drop 1, any other value tilted.
    contact_px : tuple of float or None
        (row, col) of the contact point; None for the image centre.
    approach_speed : float or None
        Speed (m/s) at which the gap closes before contact; None for half a
        pixel per frame.
    needle_width : float
        Width (m) of a needle from the top edge into the upper drop; 0 for none.
    spot_fraction : float
        Bright-spot radius over drop radius; 0 for none.
    approach : str
        How the gap closes (one of :data:`APPROACHES`): ``"both-move"``, each
        drop moving at half the approach speed; ``"second-moves"``, drop 2
        alone moving at the approach speed (drop 1 stays where it touches);
        ``"growth"``, the centres fixed and each radius growing at half the
        approach speed until the drops touch with their radii `drop_radius`
        and `second_radius`. The drops do not move after contact.
    """

    view: str = "side"
    drop_radius: float = 1e-3
    second_radius: float | None = None
    angle_deg: float = 0.0
    contact_px: tuple[float, float] | None = None
    approach_speed: float | None = None
    needle_width: float = 0.0
    spot_fraction: float = 0.2
    approach: str = "both-move"

    geometry = "coalescence"

    @property
    def radii(self) -> tuple[float, float]:
        """(R1, R2) in metres."""
        second = self.drop_radius if self.second_radius is None else self.second_radius
        return self.drop_radius, second

    @property
    def effective_radius(self) -> float:
        """2 R1 R2 / (R1 + R2): the radius that sets the gap r^2 / R near the neck."""
        r1, r2 = self.radii
        return 2 * r1 * r2 / (r1 + r2)

    @property
    def volume(self) -> float:
        """Total liquid volume, 4/3 pi (R1^3 + R2^3)."""
        return 4 / 3 * math.pi * sum(r**3 for r in self.radii)


@dataclass(frozen=True)
class Spreading:
    """A drop that touches a plate and spreads as a spherical cap of fixed volume.

    Attributes
    ----------
    view : str
        ``"side"`` (cap on a substrate band) or ``"bottom"`` (wetted disc inside
        the drop's outline).
    drop_radius : float
        Radius of the drop before contact, metres; volume 4/3 pi R^3.
    substrate_row_px : float or None
        Row of the substrate surface (side view); None for 70 % down the frame,
        on a pixel edge.
    centre_px : tuple of float or None
        (row, col) of the drop axis (only the col is used in side view); None
        for the image centre.
    reflectivity : float
        0 for an opaque plate; else the band shows the drop's mirror image.
    approach_speed : float or None
        As in :class:`Coalescence`.
    spot_fraction : float
        Bright-spot radius over sphere radius; 0 for none.
    """

    view: str = "side"
    drop_radius: float = 1e-3
    substrate_row_px: float | None = None
    centre_px: tuple[float, float] | None = None
    reflectivity: float = 0.0
    approach_speed: float | None = None
    spot_fraction: float = 0.2

    geometry = "spreading"

    @property
    def effective_radius(self) -> float:
        """The drop radius R."""
        return self.drop_radius

    @property
    def radii(self) -> tuple[float]:
        """(R,) in metres."""
        return (self.drop_radius,)

    @property
    def volume(self) -> float:
        """4/3 pi R^3."""
        return 4 / 3 * math.pi * self.drop_radius**3


def check_setup(setup, camera: Camera) -> None:
    """Refuse a setup whose view, radii, approach speed or bright spot is out of range."""
    if setup.view not in VIEWS:
        raise ExperimentError(
            "is not a known view", key="view", value=setup.view, expected=" or ".join(VIEWS)
        )
    for index, radius in enumerate(setup.radii):
        if not (math.isfinite(radius) and radius > 0):
            key = "drop_radius" if index == 0 else "second_radius"
            raise ExperimentError("must be positive", key=key, value=radius)
    approach = getattr(setup, "approach", APPROACHES[0])
    if approach not in APPROACHES:
        raise ExperimentError(
            "is not a known approach",
            key="approach",
            value=approach,
            expected=" | ".join(APPROACHES),
        )
    speed = setup.approach_speed
    if speed is not None and not (math.isfinite(speed) and speed > 0):
        raise ExperimentError("must be positive", key="approach_speed", value=speed)
    if not 0 <= setup.spot_fraction < 1:
        raise ExperimentError("must lie in 0..1", key="spot_fraction", value=setup.spot_fraction)


def scene_at(setup: Coalescence | Spreading, camera: Camera, radius: float, gap: float):
    """The scene of one instant: a PairScene, CapScene or WettedDiscScene.

    `radius` is the neck or contact radius (the bridge height for sessile
    drops) and `gap` the distance before contact, both in metres.
    """
    if setup.geometry == "coalescence":
        return _pair_scene(setup, camera, radius, gap)
    if setup.geometry == "sessile-coalescence":
        from ._sessile import sessile_scene_at

        return sessile_scene_at(setup, camera, radius, gap)
    return _spreading_scene(setup, camera, radius, gap)


def _pair_scene(setup: Coalescence, camera: Camera, radius: float, gap: float) -> PairScene:
    px = camera.pixel_size
    rows, cols = camera.shape
    pr, pc = setup.contact_px or ((rows - 1) / 2, (cols - 1) / 2)
    angle = math.radians(setup.angle_deg)
    ar, ac = -math.sin(angle), math.cos(angle)
    r1, r2 = (r / px for r in setup.radii)
    # How far each centre stands back from where it is at contact, and how
    # much smaller each drop is than at contact (px).
    back_1, back_2, smaller = {
        "both-move": (gap / px / 2, gap / px / 2, 0.0),
        "second-moves": (0.0, gap / px, 0.0),
        "growth": (0.0, 0.0, gap / px / 2),
    }[setup.approach]
    return PairScene(
        centre_1_px=(pr - (r1 + back_1) * ar, pc - (r1 + back_1) * ac),
        centre_2_px=(pr + (r2 + back_2) * ar, pc + (r2 + back_2) * ac),
        radius_1_px=r1 - smaller,
        radius_2_px=r2 - smaller,
        neck_px=radius / px,
        needle_width_px=setup.needle_width / px if setup.view == "side" else 0.0,
        spot_fraction=setup.spot_fraction,
    )


def _spreading_geometry(setup: Spreading, camera: Camera, radius: float, gap: float):
    """(sphere radius, centre height) in pixels."""
    px = camera.pixel_size
    if radius > 0:
        sphere, height = cap_sphere(setup.volume, radius)
        return sphere / px, height / px
    return setup.drop_radius / px, (setup.drop_radius + gap) / px


def _spreading_scene(setup: Spreading, camera: Camera, radius: float, gap: float):
    rows, cols = camera.shape
    centre = setup.centre_px or ((rows - 1) / 2, (cols - 1) / 2)
    sphere, height = _spreading_geometry(setup, camera, radius, gap)
    if setup.view == "bottom":
        outline = sphere if (radius == 0 or height > 0) else radius / camera.pixel_size
        return WettedDiscScene(centre, radius / camera.pixel_size, outline)
    substrate = setup.substrate_row_px
    if substrate is None:
        substrate = round(0.7 * rows) - 0.5
    return CapScene(
        substrate_row_px=substrate,
        centre_col_px=centre[1],
        sphere_radius_px=sphere,
        centre_height_px=height,
        band_px=rows - substrate + 1,
        reflectivity=setup.reflectivity,
        spot_fraction=setup.spot_fraction,
    )
