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
from ._setups import Camera, Coalescence, Spreading, check_setup, scene_at

__all__ = ["Truth", "SyntheticRecording", "synthesize"]


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
    bridge : dict
        Sessile coalescence: ``height`` and ``width`` (K,) of the bridge,
        metres (``radius`` is the one the view shows); empty otherwise.
    """

    frame_times: np.ndarray
    time_since_contact: np.ndarray
    radius: np.ndarray
    gap: np.ndarray
    contact_time: float
    contact_frame: float
    law: RadiusLaw = field(repr=False)
    bridge: dict = field(default_factory=dict, repr=False)


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
    # A ringing tail may shrink after the growth phase (see ringing_tail).
    growing = since <= law.parameters.get("growth_end_time", math.inf)
    if np.any(np.diff(radius[growing]) < 0):
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
    bridge = {}
    if setup.geometry == "sessile-coalescence":
        # The law gives the bridge height; the view shows the height or the width.
        setup.check_heights(radius)
        bridge = {"height": radius, "width": setup.bridge_width(radius)}
        radius = setup.observed(radius)
    speed = setup.approach_speed or 0.5 * camera.pixel_size * camera.frame_rate
    gap = np.where(since < 0, -since * speed, 0.0)
    if getattr(setup, "approach", "") == "growth" and gap[0] / 2 >= 0.9 * min(setup.radii):
        raise ExperimentError(
            f"makes the drops grow by {gap[0] / 2:.4g} m before contact, about their"
            f" radius {min(setup.radii):.4g} m",
            key="approach_speed",
            value=speed,
            expected="a slower approach or a later contact frame",
        )
    return Truth(times, since, radius, gap, contact_time, float(contact_frame), law, bridge)


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
        """The scene of frame `index` (a PairScene, CapScene, WettedDiscScene or SessileScene)."""
        radius, gap = float(self.truth.radius[index]), float(self.truth.gap[index])
        if self.truth.bridge:
            radius = float(self.truth.bridge["height"][index])
        return scene_at(self.setup, self.camera, radius, gap)

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
    check_setup(setup, camera)
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
