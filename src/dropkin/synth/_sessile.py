"""Two sessile drops merging on a plate: the setup, the side-view scene and its laws.

Each drop is a spherical cap of contact angle theta on a footprint disc of
radius a: its sphere has radius ``R_s = a / sin(theta)`` and its centre lies
``c = R_s cos(theta)`` below the plate (above it when theta > 90 degrees).
Before contact the footprints are a gap apart along the plate; from contact
on they touch at one point and a bridge joins the caps.

*Side view* (the camera looks along the plate, across the line of centres):
the silhouette is the two circular segments joined by a bridge whose lowest
point, midway between the caps, is at the bridge height h above the plate.
The bridge's outline is a fillet circle tangent to both cap circles, centre
``(0, h + rho)`` (x along the plate from the midpoint, y up); tangency,
``a^2 + (h + rho + c)^2 = (R_s + rho)^2``, gives

    rho = h (h + 2 c) / (2 (R_s - c - h)),

which for theta = 90 degrees (c = 0) is the free drops' ``h^2 / (2 (R - h))``
(see :mod:`._scenes`). A real root needs h below the cap's apex, ``R_s - c``.
A reflective plate shows the liquid's mirror image below its surface.

*Bottom view* (through a transparent plate): the footprints are two discs of
radius a joined by a bridge of half-width w (drawn as :class:`PairScene`).
The width follows from the height by a geometric model of ours: at a
distance y from the line of centres the two contact lines are ``y^2 / a``
apart, as if the notch between the caps were lowered by ``y^2 tan(theta) /
(2 a)``; a bridge that fills each cross-section of the notch to the same depth
then wets out to

    w = sqrt(2 a h / tan(theta)),

so w grows as the square root of h (for theta below 90 degrees).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import ExperimentError
from ._coverage import _resample_box, disc_coverage, rectangle_coverage
from ._laws import RadiusLaw, check_positive, power_law
from ._scenes import PairScene

__all__ = [
    "SessileCoalescence",
    "SessileScene",
    "sessile_scene_at",
    "sessile_opacity",
    "sessile_law",
]


@dataclass(frozen=True)
class SessileCoalescence:
    """Two equal sessile drops that touch and merge on a plate.

    Attributes
    ----------
    view : str
        ``"side"`` (along the plate) or ``"bottom"`` (footprints through the plate).
    drop_radius : float
        Radius a of each drop's footprint, metres.
    contact_angle_deg : float
        The caps' contact angle theta, degrees (between 5 and 90).
    substrate_row_px : float or None
        Row of the plate surface (side view), on a pixel edge; None for 70 %
        down the frame.
    centre_px : tuple of float or None
        (row, col) of the point where the drops touch (only the col is used
        in side view); None for the image centre.
    reflectivity : float
        0 for an opaque plate; else the plate shows the liquid's mirror image.
    approach_speed : float or None
        Speed (m/s) at which the footprints' gap closes; None for half a
        pixel per frame.
    spot_fraction : float
        Kept at 0: the caps show no bright spot here.
    """

    view: str = "side"
    drop_radius: float = 1e-3
    contact_angle_deg: float = 60.0
    substrate_row_px: float | None = None
    centre_px: tuple[float, float] | None = None
    reflectivity: float = 0.0
    approach_speed: float | None = None
    spot_fraction: float = 0.0

    geometry = "sessile-coalescence"

    def __post_init__(self):
        angle = self.contact_angle_deg
        # Above 90 degrees the caps' bulges would meet before their footprints.
        if not (math.isfinite(angle) and 5.0 <= angle <= 90.0):
            raise ExperimentError(
                "must lie between 5 and 90 degrees", key="contact_angle_deg", value=angle
            )
        if not 0.0 <= self.reflectivity < 1.0:
            raise ExperimentError("must lie in 0..1", key="reflectivity", value=self.reflectivity)

    @property
    def theta(self) -> float:
        """The contact angle in radians."""
        return math.radians(self.contact_angle_deg)

    @property
    def radii(self) -> tuple[float, float]:
        """The two footprint radii (a, a), metres."""
        return self.drop_radius, self.drop_radius

    @property
    def effective_radius(self) -> float:
        """The footprint radius a."""
        return self.drop_radius

    @property
    def sphere(self) -> tuple[float, float]:
        """(R_s, c): the caps' sphere radius and its centre's depth below the plate (m)."""
        sphere = self.drop_radius / math.sin(self.theta)
        return sphere, sphere * math.cos(self.theta)

    @property
    def apex_height(self) -> float:
        """Height of each cap, R_s - c (m)."""
        sphere, depth = self.sphere
        return sphere - depth

    @property
    def volume(self) -> float:
        """Liquid volume of the two caps, 2 pi h_c (3 a^2 + h_c^2) / 6."""
        h, a = self.apex_height, self.drop_radius
        return 2.0 * math.pi * h * (3 * a**2 + h**2) / 6.0

    def bridge_width(self, height):
        """Bridge half-width w (m) seen from below for bridge heights `height` (m)."""
        h = np.asarray(height, dtype=np.float64)
        return np.sqrt(2.0 * self.drop_radius * h / math.tan(min(self.theta, math.radians(89.0))))

    def observed(self, height):
        """What the view measures: the bridge height (side) or half-width (bottom)."""
        return (
            np.asarray(height, dtype=np.float64)
            if self.view == "side"
            else self.bridge_width(height)
        )

    def check_heights(self, height) -> None:
        """Refuse bridge heights that reach the caps' apex (or, from below,
        widths that reach the footprint radius)."""
        height = np.asarray(height)
        bad = np.nonzero(
            (height >= 0.95 * self.apex_height) | (self.bridge_width(height) >= self.drop_radius)
        )[0]
        if bad.size:
            raise ExperimentError(
                f"reaches the caps' height {self.apex_height:.4g} m (less 5 %) or a bridge"
                f" width of the footprint radius {self.drop_radius:.4g} m",
                key="law",
                frame=int(bad[0]),
                expected="fewer frames or a higher frame rate",
            )


@dataclass(frozen=True)
class SessileScene:
    """Two caps on a plate seen from the side, with their bridge (pixels).

    Attributes
    ----------
    substrate_row_px : float
        Row of the plate surface.
    centre_col_px : float
        Column of the midpoint between the caps.
    sphere_radius_px, depth_px : float
        The caps' circle radius and its centre's depth below the plate.
    footprint_px : float
        Footprint radius a.
    half_gap_px : float
        Half the gap between the footprints (0 from contact on).
    bridge_px : float
        Bridge height h (0 for none).
    band_px : float
        Height of the plate band.
    reflectivity : float
    plate_opacity : float
        Opacity of an opaque plate.
    """

    substrate_row_px: float
    centre_col_px: float
    sphere_radius_px: float
    depth_px: float
    footprint_px: float
    half_gap_px: float
    bridge_px: float
    band_px: float
    reflectivity: float = 0.0
    plate_opacity: float = 0.8

    @property
    def cap_cols(self) -> tuple[float, float]:
        """Columns of the two caps' axes."""
        offset = self.footprint_px + self.half_gap_px
        return self.centre_col_px - offset, self.centre_col_px + offset

    def fillet(self) -> tuple[float, float, float] | None:
        """(rho, x_t, y_t): the fillet radius and its tangent points, or None."""
        h = self.bridge_px
        if h <= 0:
            return None
        sphere, c = self.sphere_radius_px, self.depth_px
        rho = h * (h + 2 * c) / (2 * (sphere - c - h))
        fy = h + rho
        share = rho / (sphere + rho)  # tangent point: from the fillet centre towards a cap's
        return rho, self.footprint_px * share, fy + (-c - fy) * share

    def liquid(self, rows, cols):
        """Whether each point (rows, cols) lies in the liquid, above the plate."""
        y = self.substrate_row_px - rows
        inside = np.zeros(np.broadcast(rows, cols).shape, dtype=bool)
        for col in self.cap_cols:
            inside |= (cols - col) ** 2 + (y + self.depth_px) ** 2 <= self.sphere_radius_px**2
        fillet = self.fillet()
        if fillet is not None:
            rho, x_t, y_t = fillet
            x = cols - self.centre_col_px
            box = (np.abs(x) <= x_t) & (y <= y_t)
            inside |= box & (x**2 + (y - self.bridge_px - rho) ** 2 >= rho**2)
        return inside & (y >= 0)


def sessile_opacity(scene: SessileScene, shape):
    """Opacity and (empty) spot images of a side-view sessile scene."""
    s = scene.substrate_row_px
    liquid = np.zeros(shape)
    centre_row = s + scene.depth_px
    for col in scene.cap_cols:
        liquid += disc_coverage(shape, centre_row, col, scene.sphere_radius_px, below_row=s)
    fillet = scene.fillet()
    if fillet is not None:
        rho, x_t, y_t = fillet
        cc = scene.centre_col_px
        _resample_box(liquid, scene.liquid, shape, s - max(y_t, 0.0), s, cc - x_t, cc + x_t)
    np.clip(liquid, 0.0, 1.0, out=liquid)
    band = rectangle_coverage(shape, s, s + scene.band_px, -math.inf, math.inf)
    if scene.reflectivity > 0:
        # The plate's surface lies on a pixel edge: the mirror flips whole rows.
        edge = round(s + 0.5)
        mirror = np.zeros(shape)
        rows = np.arange(edge, shape[0])
        source = 2 * edge - 1 - rows
        keep = source >= 0
        mirror[rows[keep]] = liquid[source[keep]]
        plate = band * (1.0 - scene.reflectivity) + np.minimum(mirror, band) * scene.reflectivity
    else:
        plate = band * scene.plate_opacity
    return np.clip(liquid + plate, 0.0, 1.0), np.zeros(shape)


def sessile_scene_at(setup: SessileCoalescence, camera, height: float, gap: float):
    """The scene of one instant: a SessileScene (side) or a PairScene (bottom).

    `height` is the bridge height and `gap` the footprints' gap, metres.
    """
    px = camera.pixel_size
    rows, cols = camera.shape
    pr, pc = setup.centre_px or ((rows - 1) / 2, (cols - 1) / 2)
    a = setup.drop_radius / px
    if setup.view == "bottom":
        half = a + gap / px / 2
        return PairScene(
            centre_1_px=(pr, pc - half),
            centre_2_px=(pr, pc + half),
            radius_1_px=a,
            radius_2_px=a,
            neck_px=float(setup.bridge_width(height)) / px,
        )
    substrate = setup.substrate_row_px
    if substrate is None:
        substrate = round(0.7 * rows) - 0.5
    if substrate != math.floor(substrate) + 0.5:
        raise ExperimentError("must lie on a pixel edge (k + 0.5)", key="substrate_row_px")
    sphere, depth = setup.sphere
    return SessileScene(
        substrate_row_px=substrate,
        centre_col_px=pc,
        sphere_radius_px=sphere / px,
        depth_px=depth / px,
        footprint_px=a,
        half_gap_px=gap / px / 2,
        bridge_px=height / px,
        band_px=rows - substrate + 1,
        reflectivity=setup.reflectivity,
    )


def sessile_law(
    kind: str, *, surface_tension: float, viscosity: float, density: float, theta_deg: float
) -> RadiusLaw:
    """A bridge-height law of sessile coalescence, for synthetic recordings.

    ``viscous``: h = (gamma theta^4 / eta) t; ``inertial``: h = (gamma theta^4 /
    rho)^(1/3) t^(2/3) (theta in radians). The exponents are those of Phys.
    Rev. Lett. 109, 184502 (2012) and Phys. Rev. Lett. 111, 144502 (2013); the
    angle dependence theta^4 (theta^(4/3) for the inertial law) is from
    memory, and the prefactor 1 is a placeholder: an invented scenario.
    """
    check_positive(surface_tension=surface_tension, viscosity=viscosity, density=density)
    theta = math.radians(theta_deg)
    if kind == "viscous":
        return power_law(
            prefactor=surface_tension * theta**4 / viscosity, exponent=1.0, name="viscous-sessile"
        )
    if kind == "inertial":
        prefactor = (surface_tension * theta**4 / density) ** (1.0 / 3.0)
        return power_law(prefactor=prefactor, exponent=2.0 / 3.0, name="inertial-sessile")
    raise ExperimentError(
        "is not a sessile law", key="kind", value=kind, expected="viscous or inertial"
    )
