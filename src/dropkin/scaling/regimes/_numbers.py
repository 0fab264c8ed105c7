"""Dimensionless numbers and characteristic scales of a drop sample (docs/physics.md §1, §3).

Plain functions on SI floats, keyword-only so that no two viscosities can be
swapped by accident, and a frozen :class:`SampleNumbers` record that holds a
sample's material values together with every number derived from them.

Examples
--------
>>> oh = ohnesorge(viscosity=1.0e-3, density=998.2, surface_tension=0.0727, radius=1e-3)
>>> round(oh, 4)
0.0037
>>> round(capillary_length(surface_tension=0.0727, density=998.2) * 1e3, 2)   # mm
2.73
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from ...errors import ExperimentError

__all__ = [
    "STANDARD_GRAVITY",
    "ohnesorge",
    "ohnesorge_outer",
    "bond",
    "viscosity_ratio",
    "capillary_length",
    "capillary_speed",
    "viscous_time",
    "inertial_time",
    "viscous_length",
    "diffusion_length",
    "SampleNumbers",
    "sample_numbers",
    "sample_numbers_from_experiment",
]

#: Standard acceleration of gravity (m/s^2), exact by definition (CGPM 1901).
STANDARD_GRAVITY = 9.80665

_UNITS = {
    "surface_tension": "N/m",
    "viscosity": "Pa s",
    "outer_viscosity": "Pa s",
    "density": "kg/m^3",
    "outer_density": "kg/m^3",
    "radius": "m",
    "gravity": "m/s^2",
    "kinematic_viscosity": "m^2/s",
    "time": "s",
}


def _positive(name: str, value) -> float:
    """The value as a float, or an ExperimentError naming it when not finite and > 0."""
    unit = _UNITS.get(name, "SI units")
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise ExperimentError(
            f"must be a number in {unit}", key=name, value=value, expected="a positive float"
        )
    if not (math.isfinite(value) and value > 0):
        raise ExperimentError(
            "must be positive", key=name, value=value, expected=f"a finite value above 0 {unit}"
        )
    return float(value)


def _non_negative(name: str, value) -> float:
    if value == 0:
        return 0.0
    return _positive(name, value)


def ohnesorge(*, viscosity, density, surface_tension, radius) -> float:
    """Ohnesorge number ``Oh = eta / sqrt(rho gamma R)`` of the drop liquid.

    Built on the drop radius R (authors who use the diameter get Oh/sqrt(2)).
    ``Oh = tau_v / tau_i`` and ``Oh**2 = l_nu / R``.
    """
    eta = _positive("viscosity", viscosity)
    rho = _positive("density", density)
    gamma = _positive("surface_tension", surface_tension)
    r = _positive("radius", radius)
    return eta / math.sqrt(rho * gamma * r)


def ohnesorge_outer(*, outer_viscosity, outer_density, surface_tension, radius) -> float:
    """Outer Ohnesorge number ``Oh_out = eta_o / sqrt(rho_o gamma R)``.

    Nat. Commun. 5, 3182 (2014): the outer fluid's viscosity governs the
    late neck growth above Oh_out ≈ 0.77, its inertia below (docs/physics.md §3).
    """
    eta = _positive("outer_viscosity", outer_viscosity)
    rho = _positive("outer_density", outer_density)
    gamma = _positive("surface_tension", surface_tension)
    r = _positive("radius", radius)
    return eta / math.sqrt(rho * gamma * r)


def bond(*, density, surface_tension, radius, outer_density=0.0, gravity=STANDARD_GRAVITY):
    """Bond number ``Bo = |rho - rho_o| g R**2 / gamma = (R / l_c)**2``."""
    rho = _positive("density", density)
    rho_o = _non_negative("outer_density", outer_density)
    gamma = _positive("surface_tension", surface_tension)
    r = _positive("radius", radius)
    g = _positive("gravity", gravity)
    return abs(rho - rho_o) * g * r**2 / gamma


def viscosity_ratio(*, viscosity, outer_viscosity) -> float:
    """Viscosity ratio ``lambda = eta / eta_o``, drop liquid over surrounding fluid.

    About 55 for water in air; well below 1 for gas bubbles in a liquid.
    """
    return _positive("viscosity", viscosity) / _positive("outer_viscosity", outer_viscosity)


def capillary_length(*, surface_tension, density, outer_density=0.0, gravity=STANDARD_GRAVITY):
    """Capillary length ``l_c = sqrt(gamma / (|rho - rho_o| g))`` (m)."""
    gamma = _positive("surface_tension", surface_tension)
    rho = _positive("density", density)
    rho_o = _non_negative("outer_density", outer_density)
    g = _positive("gravity", gravity)
    if rho == rho_o:
        return math.inf
    return math.sqrt(gamma / (abs(rho - rho_o) * g))


def capillary_speed(*, surface_tension, viscosity) -> float:
    """Visco-capillary speed ``u_v = gamma / eta`` (m/s)."""
    return _positive("surface_tension", surface_tension) / _positive("viscosity", viscosity)


def viscous_time(*, viscosity, radius, surface_tension) -> float:
    """Viscous (visco-capillary) time ``tau_v = eta R / gamma`` (s)."""
    eta = _positive("viscosity", viscosity)
    return eta * _positive("radius", radius) / _positive("surface_tension", surface_tension)


def inertial_time(*, density, radius, surface_tension) -> float:
    """Inertial–capillary time ``tau_i = sqrt(rho R**3 / gamma)`` (s)."""
    rho = _positive("density", density)
    r = _positive("radius", radius)
    return math.sqrt(rho * r**3 / _positive("surface_tension", surface_tension))


def viscous_length(*, viscosity, density, surface_tension) -> float:
    """Viscous length ``l_nu = eta**2 / (rho gamma) = Oh**2 R`` (m)."""
    eta = _positive("viscosity", viscosity)
    rho = _positive("density", density)
    return eta**2 / (rho * _positive("surface_tension", surface_tension))


def diffusion_length(*, kinematic_viscosity, time) -> float:
    """Viscous diffusion length ``delta = sqrt(nu t)`` (m).

    Examples
    --------
    >>> round(diffusion_length(kinematic_viscosity=1.0e-6, time=100e-6) * 1e6, 1)   # µm
    10.0
    """
    nu = _positive("kinematic_viscosity", kinematic_viscosity)
    return math.sqrt(nu * _positive("time", time))


@dataclass(frozen=True)
class SampleNumbers:
    """A sample's material values and the numbers derived from them, in SI units.

    Build it with :func:`sample_numbers` or :func:`sample_numbers_from_experiment`;
    the derived fields are computed on construction.

    Attributes
    ----------
    surface_tension : float
        Surface tension of the drops' interface (N/m).
    viscosity : float
        Viscosity of the drop liquid (Pa s).
    density : float
        Density of the drop liquid (kg/m^3).
    radius : float
        Drop radius R (m).
    outer_viscosity, outer_density : float or None
        The surrounding fluid (Pa s, kg/m^3); None when unknown.
    gravity : float
        Acceleration of gravity (m/s^2).
    contact_angle : float or None
        Contact angle on the substrate (rad), for sessile drops; None when unknown.
    volume : float
        Drop volume ``4 pi R**3 / 3`` (m^3), for the spreading laws.
    kinematic_viscosity : float
        ``eta / rho`` (m^2/s).
    capillary_speed : float
        ``gamma / eta`` (m/s).
    viscous_time : float
        ``tau_v = eta R / gamma`` (s).
    inertial_time : float
        ``tau_i = sqrt(rho R**3 / gamma)`` (s).
    viscous_length : float
        ``l_nu = eta**2 / (rho gamma)`` (m).
    ohnesorge : float
        ``Oh = eta / sqrt(rho gamma R)``.
    capillary_length : float
        ``l_c = sqrt(gamma / (|rho - rho_o| g))`` (m).
    bond : float
        ``Bo = |rho - rho_o| g R**2 / gamma``.
    ohnesorge_outer : float or None
        ``Oh_out = eta_o / sqrt(rho_o gamma R)``.
    viscosity_ratio : float or None
        ``lambda = eta / eta_o``.
    density_ratio : float or None
        ``rho_o / rho``, outer over drop.
    outer_viscous_time : float or None
        ``eta_o R / gamma`` (s).
    outer_inertial_time : float or None
        ``sqrt(rho_o R**3 / gamma)`` (s).
    """

    surface_tension: float
    viscosity: float
    density: float
    radius: float
    outer_viscosity: float | None = None
    outer_density: float | None = None
    gravity: float = STANDARD_GRAVITY
    contact_angle: float | None = None
    volume: float = field(init=False)
    kinematic_viscosity: float = field(init=False)
    capillary_speed: float = field(init=False)
    viscous_time: float = field(init=False)
    inertial_time: float = field(init=False)
    viscous_length: float = field(init=False)
    ohnesorge: float = field(init=False)
    capillary_length: float = field(init=False)
    bond: float = field(init=False)
    ohnesorge_outer: float | None = field(init=False)
    viscosity_ratio: float | None = field(init=False)
    density_ratio: float | None = field(init=False)
    outer_viscous_time: float | None = field(init=False)
    outer_inertial_time: float | None = field(init=False)

    def __post_init__(self) -> None:
        gamma = _positive("surface_tension", self.surface_tension)
        eta = _positive("viscosity", self.viscosity)
        rho = _positive("density", self.density)
        r = _positive("radius", self.radius)
        g = _positive("gravity", self.gravity)
        eta_o = (
            None
            if self.outer_viscosity is None
            else _positive("outer_viscosity", self.outer_viscosity)
        )
        rho_o = (
            None if self.outer_density is None else _positive("outer_density", self.outer_density)
        )
        if self.contact_angle is not None:
            theta = _positive("contact_angle", self.contact_angle)
            if theta > math.pi:
                raise ExperimentError(
                    "must lie between 0 and 180 degrees",
                    key="contact_angle",
                    value=self.contact_angle,
                    expected="an angle in radians from 0 to pi",
                )
        common = {"surface_tension": gamma, "radius": r}
        derived = {
            "volume": 4.0 * math.pi * r**3 / 3.0,
            "kinematic_viscosity": eta / rho,
            "capillary_speed": capillary_speed(surface_tension=gamma, viscosity=eta),
            "viscous_time": viscous_time(viscosity=eta, **common),
            "inertial_time": inertial_time(density=rho, **common),
            "viscous_length": viscous_length(viscosity=eta, density=rho, surface_tension=gamma),
            "ohnesorge": ohnesorge(viscosity=eta, density=rho, **common),
            "capillary_length": capillary_length(
                surface_tension=gamma, density=rho, outer_density=rho_o or 0.0, gravity=g
            ),
            "bond": bond(density=rho, outer_density=rho_o or 0.0, gravity=g, **common),
            "ohnesorge_outer": None,
            "viscosity_ratio": None,
            "density_ratio": None,
            "outer_viscous_time": None,
            "outer_inertial_time": None,
        }
        if eta_o is not None:
            derived["viscosity_ratio"] = viscosity_ratio(viscosity=eta, outer_viscosity=eta_o)
            derived["outer_viscous_time"] = viscous_time(viscosity=eta_o, **common)
        if rho_o is not None:
            derived["density_ratio"] = rho_o / rho
            derived["outer_inertial_time"] = inertial_time(density=rho_o, **common)
        if eta_o is not None and rho_o is not None:
            derived["ohnesorge_outer"] = ohnesorge_outer(
                outer_viscosity=eta_o, outer_density=rho_o, **common
            )
        for name, value in derived.items():
            object.__setattr__(self, name, value)

    def value(self, name: str) -> float | None:
        """The SI value of a field by name (e.g. ``"surface_tension"``, ``"volume"``)."""
        return getattr(self, name)


def sample_numbers(
    *,
    surface_tension,
    viscosity,
    density,
    radius,
    outer_viscosity=None,
    outer_density=None,
    gravity=STANDARD_GRAVITY,
    contact_angle=None,
) -> SampleNumbers:
    """Build a :class:`SampleNumbers` from SI values (checked: finite and positive).

    Examples
    --------
    >>> n = sample_numbers(surface_tension=0.0634, viscosity=1.414, density=1261.0,
    ...                    radius=1e-3, outer_viscosity=1.8e-5, outer_density=1.2)
    >>> round(n.ohnesorge, 1), round(n.viscous_time * 1e3, 1)   # Oh, tau_v in ms
    (5.0, 22.3)
    """
    return SampleNumbers(
        surface_tension=surface_tension,
        viscosity=viscosity,
        density=density,
        radius=radius,
        outer_viscosity=outer_viscosity,
        outer_density=outer_density,
        gravity=gravity,
        contact_angle=contact_angle,
    )


_NEEDED = (
    ("liquid", "surface_tension"),
    ("liquid", "viscosity"),
    ("liquid", "density"),
    ("drops", "radius"),
)


def sample_numbers_from_experiment(experiment, *, contact_angle=None) -> SampleNumbers:
    """The numbers of an experiment whose fluids are known (see ``resolve_fluids``).

    Parameters
    ----------
    experiment : Experiment
        Any object with ``liquid``, ``medium`` and ``drops`` records in SI units,
        usually :func:`dropkin.liquids.resolve_fluids` applied to an experiment.
    contact_angle : float, optional
        Contact angle on the substrate (rad), for sessile drops.

    Raises
    ------
    ExperimentError
        Naming the first value that is missing (e.g. ``liquid.viscosity``).
    """
    for section, name in _NEEDED:
        if getattr(getattr(experiment, section), name) is None:
            hint = (
                "give drops.radius in the experiment file or --drop-radius"
                if section == "drops"
                else "give it in the experiment file, or name a library liquid"
            )
            raise ExperimentError(
                f"is not known: {hint}",
                key=f"{section}.{name}",
                path=getattr(experiment, "path", None),
            )
    liquid, medium = experiment.liquid, experiment.medium
    return SampleNumbers(
        surface_tension=liquid.surface_tension,
        viscosity=liquid.viscosity,
        density=liquid.density,
        radius=experiment.drops.radius,
        outer_viscosity=medium.viscosity,
        outer_density=medium.density,
        contact_angle=contact_angle,
    )
