"""A synthetic recording: setup + law + camera -> known truth and frames.

The truth (per-frame radius, contact instant) comes from the law alone, before
any image is made; frames are rendered from scenes built from that truth.

Frame k is taken at ``k / frame_rate`` seconds; the contact instant is
``contact_frame / frame_rate`` and may fall between two frames. Before contact
the drops approach at constant speed and the gap closes exactly at contact.
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from dataclasses import dataclass, field

import numpy as np

from ..errors import ExperimentError
from ._coverage import render_opacity
from ._laws import RadiusLaw
from ._materials import Liquid, Medium
from ._optics import Optics, Sensor, apply_optics, backlight, dust_transmission, expose
from ._scenes import CapScene, PairScene, WettedDiscScene, cap_sphere

__all__ = ["Camera", "Coalescence", "Spreading", "Truth", "SyntheticRecording", "synthesize"]

VIEWS = ("side", "bottom")


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
    """

    view: str = "side"
    drop_radius: float = 1e-3
    second_radius: float | None = None
    angle_deg: float = 0.0
    contact_px: tuple[float, float] | None = None
    approach_speed: float | None = None
    needle_width: float = 0.0
    spot_fraction: float = 0.2

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


@dataclass(frozen=True, eq=False)
class Truth:
    """What a synthetic recording shows, computed from the law alone.

    Attributes
    ----------
    frame_times : (K,) ndarray
        Seconds from the first frame.
    time_since_contact : (K,) ndarray
        ``frame_times - contact_time``.
    radius : (K,) ndarray
        True neck radius (coalescence) or contact radius (spreading), metres;
        0 before contact.
    gap : (K,) ndarray
        Distance between the surfaces (or drop and substrate) before contact,
        metres; 0 from contact on.
    contact_time, contact_frame : float
        The contact instant in seconds and in frames (possibly fractional).
    law : RadiusLaw
    """

    frame_times: np.ndarray
    time_since_contact: np.ndarray
    radius: np.ndarray
    gap: np.ndarray
    contact_time: float
    contact_frame: float
    law: RadiusLaw = field(repr=False)


def _check_setup(setup, camera: Camera) -> None:
    if setup.view not in VIEWS:
        raise ExperimentError(
            "is not a known view", key="view", value=setup.view, expected=" or ".join(VIEWS)
        )
    for index, radius in enumerate(setup.radii):
        if not (math.isfinite(radius) and radius > 0):
            key = "drop_radius" if index == 0 else "second_radius"
            raise ExperimentError("must be positive", key=key, value=radius)
    speed = setup.approach_speed
    if speed is not None and not (math.isfinite(speed) and speed > 0):
        raise ExperimentError("must be positive", key="approach_speed", value=speed)
    if not 0 <= setup.spot_fraction < 1:
        raise ExperimentError("must lie in 0..1", key="spot_fraction", value=setup.spot_fraction)


def _truth(setup, law: RadiusLaw, camera: Camera, frames: int, contact_frame: float) -> Truth:
    if isinstance(frames, bool) or not isinstance(frames, int) or frames < 1:
        raise ExperimentError("must be a whole number of at least 1", key="frames", value=frames)
    if not (math.isfinite(contact_frame) and 0 <= contact_frame <= frames - 1):
        raise ExperimentError(
            "must lie within the recording",
            key="contact_frame",
            value=contact_frame,
            expected=f"a frame position from 0 to {frames - 1}",
        )
    times = np.arange(frames) / camera.frame_rate
    contact_time = contact_frame / camera.frame_rate
    since = times - contact_time
    last = float(since[-1])
    if last > law.valid_until:
        raise ExperimentError(
            f"stops describing a growing radius {law.valid_until:.4g} s after contact,"
            f" but the last frame is {last:.4g} s after it",
            key="law",
            value=law.name,
            expected="fewer frames, a higher frame rate or an earlier contact frame",
        )
    radius = law(since)
    if not np.all(np.isfinite(radius)) or np.any(radius < 0):
        raise ExperimentError(
            "gives a radius that is negative or not finite", key="law", value=law.name
        )
    if np.any(np.diff(radius) < 0):
        raise ExperimentError("gives a radius that shrinks", key="law", value=law.name)
    if setup.geometry == "coalescence":
        limit = min(setup.radii)
        bad = np.nonzero(radius >= limit)[0]
        if bad.size:
            raise ExperimentError(
                f"reaches the smaller drop radius {limit:.4g} m",
                key="law",
                value=law.name,
                frame=int(bad[0]),
                expected="fewer frames or a higher frame rate",
            )
    speed = setup.approach_speed or 0.5 * camera.pixel_size * camera.frame_rate
    gap = np.where(since < 0, -since * speed, 0.0)
    return Truth(times, since, radius, gap, contact_time, float(contact_frame), law)


def _pair_scene(setup: Coalescence, camera: Camera, radius: float, gap: float) -> PairScene:
    px = camera.pixel_size
    rows, cols = camera.shape
    pr, pc = setup.contact_px or ((rows - 1) / 2, (cols - 1) / 2)
    angle = math.radians(setup.angle_deg)
    ar, ac = -math.sin(angle), math.cos(angle)
    r1, r2 = (r / px for r in setup.radii)
    half_gap = gap / px / 2
    return PairScene(
        centre_1_px=(pr - (r1 + half_gap) * ar, pc - (r1 + half_gap) * ac),
        centre_2_px=(pr + (r2 + half_gap) * ar, pc + (r2 + half_gap) * ac),
        radius_1_px=r1,
        radius_2_px=r2,
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


@dataclass(frozen=True, eq=False)
class SyntheticRecording:
    """A synthetic recording, described; frames are rendered on demand.

    Attributes
    ----------
    setup : Coalescence or Spreading
    camera : Camera
    optics : Optics
    sensor : Sensor
    liquid : Liquid
    medium : Medium
    seed : int
    truth : Truth
    """

    setup: Coalescence | Spreading
    camera: Camera
    optics: Optics
    sensor: Sensor
    liquid: Liquid
    medium: Medium
    seed: int
    truth: Truth

    @property
    def frames(self) -> int:
        """Number of frames."""
        return len(self.truth.frame_times)

    def scene(self, index: int):
        """The scene of frame `index` (a PairScene, CapScene or WettedDiscScene)."""
        radius, gap = float(self.truth.radius[index]), float(self.truth.gap[index])
        if self.setup.geometry == "coalescence":
            return _pair_scene(self.setup, self.camera, radius, gap)
        return _spreading_scene(self.setup, self.camera, radius, gap)

    def iter_frames(self) -> Iterator[np.ndarray]:
        """Render the frames in order.

        Yields
        ------
        frame : (M, N) ndarray of uint8 or uint16
        """
        shape = self.camera.shape
        light = backlight(shape, self.optics)
        dust = None
        if self.optics.dust_count:
            dust_rng = np.random.default_rng(np.random.SeedSequence(self.seed, spawn_key=(0,)))
            dust = dust_transmission(shape, self.optics, dust_rng)
        for index in range(self.frames):
            opacity, spot = render_opacity(self.scene(index), shape)
            image = apply_optics(opacity, spot, optics=self.optics, light=light, dust=dust)
            rng = np.random.default_rng(np.random.SeedSequence(self.seed, spawn_key=(1, index)))
            yield expose(image, sensor=self.sensor, rng=rng)

    def render(self) -> np.ndarray:
        """All frames as one array.

        Returns
        -------
        frames : (K, M, N) ndarray of uint8 or uint16
        """
        out = np.empty((self.frames, *self.camera.shape), dtype=self.sensor.dtype)
        for index, frame in enumerate(self.iter_frames()):
            out[index] = frame
        return out


def synthesize(
    setup: Coalescence | Spreading,
    law: RadiusLaw,
    *,
    camera: Camera,
    frames: int,
    contact_frame: float,
    optics: Optics | None = None,
    sensor: Sensor | None = None,
    liquid: Liquid | None = None,
    medium: Medium | None = None,
    seed: int = 0,
) -> SyntheticRecording:
    """Describe a synthetic recording and compute its truth (no frames yet).

    Parameters
    ----------
    setup : Coalescence or Spreading
        What is filmed.
    law : RadiusLaw
        Neck or contact radius against time since contact.
    camera : Camera
        Frame rate, pixel size and frame shape.
    frames : int
        Number of frames.
    contact_frame : float
        Contact instant in frames from the first frame; fractional values put
        it between two frames.
    optics, sensor : Optics, Sensor, optional
        Defaults: ``Optics()``, ``Sensor()``.
    liquid, medium : Liquid, Medium, optional
        For the experiment file; defaults water in air.
    seed : int
        Seeds the noise (and dust); the same seed gives identical frames.

    Returns
    -------
    recording : SyntheticRecording

    Raises
    ------
    ExperimentError
        For a setting out of range, or a law that leaves its range (shrinks,
        passes its ``valid_until``, or reaches the drop radius) within the
        recording.

    Examples
    --------
    >>> from dropkin.synth import inertial_law
    >>> law = inertial_law(surface_tension=0.072, density=998.0, drop_radius=1e-3)
    >>> rec = synthesize(Coalescence(), law, camera=Camera(1e5, 10e-6, (64, 96)),
    ...                  frames=4, contact_frame=1.5)
    >>> rec.render().shape
    (4, 64, 96)
    """
    if not isinstance(seed, int) or isinstance(seed, bool) or seed < 0:
        raise ExperimentError("must be a whole number, 0 or more", key="seed", value=seed)
    _check_setup(setup, camera)
    truth = _truth(setup, law, camera, frames, contact_frame)
    return SyntheticRecording(
        setup=setup,
        camera=camera,
        optics=optics or Optics(),
        sensor=sensor or Sensor(),
        liquid=liquid or Liquid(),
        medium=medium or Medium(),
        seed=seed,
        truth=truth,
    )
