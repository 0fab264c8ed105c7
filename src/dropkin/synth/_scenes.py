"""What one frame shows: geometric scene records, in pixels, and their shapes.

Image coordinates are (row, col) with pixel centres at whole numbers: pixel
``(i, j)`` covers rows ``i - 0.5 .. i + 0.5`` and cols ``j - 0.5 .. j + 0.5``.
Every length in this module is in pixels (fields end in ``_px``).

Two geometric results are derived here.

*Bridge of two touching drops (toroidal-meniscus model).* Drop circles of
radii R1, R2 touch at a point, centres d = R1 + R2 apart on the u axis. On each
side of the axis a fillet circle of radius rho is tangent externally to both
and comes closest to the axis at height r (the neck radius). Its centre is
(u_f, r + rho). Tangency, |c_f - c_i| = R_i + rho, subtracted for i = 1, 2,
gives u_f = R1 + k rho with k = (R1 - R2) / d; put back into the first, with
H = 2 R1 R2 / d:

    k^2 rho^2 - 2 (H - r) rho + r^2 = 0,
    rho = r^2 / ((H - r) + sqrt((H - r)^2 - k^2 r^2))      (the small root)

which for equal drops is rho = r^2 / (2 (R - r)). A real root needs
r <= H / (1 + |k|) = min(R1, R2).

*Spherical cap of fixed volume.* V = pi h (3 a^2 + h^2) / 6 is a cubic
h^3 + 3 a^2 h - 6 V / pi = 0 with one real root, taken in the hyperbolic form
h = 2 a sinh(asinh(3 V / (pi a^3)) / 3) (no cancellation for flat caps); the
sphere of the cap has radius (a^2 + h^2) / (2 h).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = [
    "PairScene",
    "CapScene",
    "WettedDiscScene",
    "Bridge",
    "bridge_fillet",
    "cap_height",
    "cap_sphere",
]


@dataclass(frozen=True)
class Bridge:
    """The fillet of a bridge between two touching circles, in the pair's frame.

    The frame has its origin at the centre of circle 1 and the u axis along the
    line of centres; the upper fillet is given (the lower one is its mirror).

    Attributes
    ----------
    fillet_radius : float
        rho.
    centre_u, centre_v : float
        Centre of the upper fillet circle (centre_v = r + rho).
    tangent_u1, tangent_v1 : float
        Where the fillet touches circle 1.
    tangent_u2, tangent_v2 : float
        Where the fillet touches circle 2.
    """

    fillet_radius: float
    centre_u: float
    centre_v: float
    tangent_u1: float
    tangent_v1: float
    tangent_u2: float
    tangent_v2: float


def bridge_fillet(radius_1: float, radius_2: float, neck: float) -> Bridge:
    """The fillet circle of a neck of half-width `neck` between touching circles.

    Parameters
    ----------
    radius_1, radius_2 : float
        Radii of the two circles, which touch at one point.
    neck : float
        Closest approach of the fillet to the line of centres, ``0 < neck <
        min(radius_1, radius_2)``.

    Returns
    -------
    bridge : Bridge

    Examples
    --------
    >>> round(bridge_fillet(50.0, 50.0, 10.0).fillet_radius, 6)   # r^2 / (2 (R - r))
    1.25
    """
    if not (radius_1 > 0 and radius_2 > 0):
        raise ValueError(f"radii must be positive, got {radius_1}, {radius_2}")
    if not (0 < neck < min(radius_1, radius_2)):
        raise ValueError(
            f"neck must lie between 0 and the smaller radius {min(radius_1, radius_2)}, got {neck}"
        )
    d = radius_1 + radius_2
    k = (radius_1 - radius_2) / d
    harmonic = 2.0 * radius_1 * radius_2 / d
    slack = harmonic - neck
    rho = neck**2 / (slack + math.sqrt(max(slack**2 - (k * neck) ** 2, 0.0)))
    cu, cv = radius_1 + k * rho, neck + rho
    # Tangent points lie on the segments from the fillet centre to each centre.
    s1 = radius_1 / (radius_1 + rho)
    s2 = radius_2 / (radius_2 + rho)
    return Bridge(
        fillet_radius=rho,
        centre_u=cu,
        centre_v=cv,
        tangent_u1=cu * s1,
        tangent_v1=cv * s1,
        tangent_u2=d + (cu - d) * s2,
        tangent_v2=cv * s2,
    )


@dataclass(frozen=True)
class PairScene:
    """Two drops in one frame: side view of free drops, or sessile footprints from below.

    Attributes
    ----------
    centre_1_px, centre_2_px : tuple of float
        (row, col) of the drop centres.
    radius_1_px, radius_2_px : float
        Drop radii.
    neck_px : float
        Half-width of the bridge; 0 for no bridge (the drops then do not
        overlap). With a bridge the drops touch: their centre distance is the
        sum of the radii.
    needle_width_px : float
        Width of a vertical needle from the top edge into the upper drop (the one
        with the smaller centre row); 0 for none.
    spot_fraction : float
        Radius of the bright central spot as a fraction of each drop radius;
        0 for none.
    """

    centre_1_px: tuple[float, float]
    centre_2_px: tuple[float, float]
    radius_1_px: float
    radius_2_px: float
    neck_px: float = 0.0
    needle_width_px: float = 0.0
    spot_fraction: float = 0.0

    @property
    def needle_drop(self) -> int:
        """1 or 2: the drop the needle holds (the upper one; drop 1 on a tie)."""
        return 2 if self.centre_2_px[0] < self.centre_1_px[0] else 1

    def bridge(self) -> Bridge | None:
        """The bridge fillet in the pair's own frame, or None without a neck."""
        if self.neck_px <= 0:
            return None
        return bridge_fillet(self.radius_1_px, self.radius_2_px, self.neck_px)

    def axis(self) -> tuple[float, float]:
        """Unit vector (row, col) from centre 1 to centre 2."""
        dr = self.centre_2_px[0] - self.centre_1_px[0]
        dc = self.centre_2_px[1] - self.centre_1_px[1]
        length = math.hypot(dr, dc)
        return dr / length, dc / length

    def inside(self, rows: np.ndarray, cols: np.ndarray) -> np.ndarray:
        """Whether each point (rows, cols) lies in the dark silhouette.

        Parameters
        ----------
        rows, cols : (...) ndarray
            Point coordinates, broadcast together.

        Returns
        -------
        inside : (...) ndarray of bool
        """
        (r1, c1), (r2, c2) = self.centre_1_px, self.centre_2_px
        inside = (rows - r1) ** 2 + (cols - c1) ** 2 <= self.radius_1_px**2
        inside |= (rows - r2) ** 2 + (cols - c2) ** 2 <= self.radius_2_px**2
        bridge = self.bridge()
        if bridge is not None:
            ar, ac = self.axis()
            u = (rows - r1) * ar + (cols - c1) * ac
            v = np.abs(-(rows - r1) * ac + (cols - c1) * ar)
            # The trapezoid between the four tangent points, less the fillet discs.
            du = bridge.tangent_u2 - bridge.tangent_u1
            top = bridge.tangent_v1 + (u - bridge.tangent_u1) * (
                (bridge.tangent_v2 - bridge.tangent_v1) / du
            )
            in_trapezoid = (u >= bridge.tangent_u1) & (u <= bridge.tangent_u2) & (v <= top)
            outside_fillet = (u - bridge.centre_u) ** 2 + (
                v - bridge.centre_v
            ) ** 2 >= bridge.fillet_radius**2
            inside |= in_trapezoid & outside_fillet
        if self.needle_width_px > 0:
            nr, nc = self.centre_1_px if self.needle_drop == 1 else self.centre_2_px
            inside |= (np.abs(cols - nc) <= self.needle_width_px / 2) & (rows <= nr)
        return inside


def cap_height(volume: float, contact_radius: float) -> float:
    """Height h of a spherical cap of `volume` on a contact disc of radius a.

    Solves V = pi h (3 a^2 + h^2) / 6 (the volume of a spherical cap); a = 0
    gives the full sphere, h = (6 V / pi)^(1/3).

    Examples
    --------
    >>> round(cap_height(4 / 3 * math.pi, 0.0), 12)     # unit sphere: h = 2 R
    2.0
    """
    if not (volume > 0 and contact_radius >= 0):
        raise ValueError(
            f"need volume > 0 and contact radius >= 0, got {volume}, {contact_radius}"
        )
    if contact_radius == 0:
        return (6.0 * volume / math.pi) ** (1.0 / 3.0)
    a = contact_radius
    return 2.0 * a * math.sinh(math.asinh(3.0 * volume / (math.pi * a**3)) / 3.0)


def cap_sphere(volume: float, contact_radius: float) -> tuple[float, float]:
    """Radius of the cap's sphere and its centre height above the substrate.

    Returns
    -------
    sphere_radius, centre_height : float
        The centre height is h - R_s; negative for a cap flatter than a
        hemisphere.
    """
    h = cap_height(volume, contact_radius)
    sphere_radius = (contact_radius**2 + h**2) / (2.0 * h)
    return sphere_radius, h - sphere_radius


@dataclass(frozen=True)
class CapScene:
    """A drop on (or just above) a substrate, seen from the side.

    The drop is the part above the substrate of a disc of radius
    `sphere_radius_px` whose centre is `centre_height_px` above the substrate
    surface; the substrate fills the rows below `substrate_row_px` over a band of
    `band_px` rows.

    Attributes
    ----------
    substrate_row_px : float
        Row coordinate of the substrate surface (it may fall inside a pixel).
    centre_col_px : float
        Column of the drop axis.
    sphere_radius_px, centre_height_px : float
        The drop's circle; before contact ``centre_height_px > sphere_radius_px``.
    band_px : float
        Height of the substrate band below its surface.
    reflectivity : float
        0 for an opaque plate; otherwise the band shows the drop's mirror image
        with this fraction of the backlight.
    plate_opacity : float
        Opacity of a non-reflective band (1 is black).
    spot_fraction : float
        Radius of the bright spot at the circle's centre, as a fraction of the
        sphere radius, when that centre is above the substrate; 0 for none.
    """

    substrate_row_px: float
    centre_col_px: float
    sphere_radius_px: float
    centre_height_px: float
    band_px: float
    reflectivity: float = 0.0
    plate_opacity: float = 0.8
    spot_fraction: float = 0.0

    @property
    def contact_radius_px(self) -> float:
        """Half the width of the drop at the substrate surface (0 before contact)."""
        z = self.centre_height_px
        return math.sqrt(max(self.sphere_radius_px**2 - z**2, 0.0))

    @property
    def centre_row_px(self) -> float:
        """Row of the circle's centre."""
        return self.substrate_row_px - self.centre_height_px


@dataclass(frozen=True)
class WettedDiscScene:
    """A spreading drop seen from below: the wetted disc inside the drop's outline.

    Attributes
    ----------
    centre_px : tuple of float
        (row, col) of the drop axis.
    contact_radius_px : float
        Radius of the wetted disc (0 before contact).
    outline_radius_px : float
        Radius of the drop's outline seen from below (>= the contact radius).
    outline_opacity : float
        Opacity of the drop outside the wetted disc (the wetted disc is opaque).
    """

    centre_px: tuple[float, float]
    contact_radius_px: float
    outline_radius_px: float
    outline_opacity: float = 0.5
