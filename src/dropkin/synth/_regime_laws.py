"""The radius laws of the regimes, as a synthetic recording follows them.

The regime laws implement the formulas of the project's physics notes
(``docs/physics.md``, section 2); each docstring gives the formula, its
source and the status label of the notes (V checked, C computed, D derived,
M from memory). They are written here from the notes, independently of
``dropkin.scaling``: the truth must not be computed by the code it checks.

Examples
--------
>>> law = inertial_law(surface_tension=0.0727, density=998.0, drop_radius=1e-3)
>>> round(float(law(1e-4)) * 1e6, 1)   # micrometres, 100 us after contact
164.3
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import ExperimentError
from ._laws import RadiusLaw, check_positive, power_law

__all__ = [
    "STANDARD_GRAVITY",
    "viscous_law",
    "ilv_law",
    "inertial_law",
    "viscous_outer_law",
    "inertial_spreading_law",
    "viscous_spreading_law",
    "tanner_law",
    "gravity_spreading_law",
    "REGIME_NAMES",
    "regime_law",
]

#: Standard gravity, m/s^2 (the conventional value, CGPM 1901).
STANDARD_GRAVITY = 9.80665


def _log_law(name, *, surface_tension, viscosity, drop_radius, radius_key):
    check_positive(
        surface_tension=surface_tension, viscosity=viscosity, **{radius_key: drop_radius}
    )
    speed = surface_tension / viscosity
    viscous_time = drop_radius / speed

    def function(t):
        return -(speed * t / math.pi) * np.log(t / viscous_time)

    # The formula peaks at t = tau_v / e and falls to 0 at t = tau_v.
    return RadiusLaw(
        name,
        function,
        {"surface_tension": surface_tension, "viscosity": viscosity, radius_key: drop_radius},
        viscous_time / math.e,
    )


def viscous_law(*, surface_tension: float, viscosity: float, drop_radius: float) -> RadiusLaw:
    """Viscous (Stokes) coalescence, docs/physics.md A1 (the ELS law).

    r = -(gamma t / (pi eta)) ln(gamma t / (eta R)), from Eggers, Lister & Stone,
    J. Fluid Mech. 401, 293 (1999) (V for the magnitude form; the minus sign is
    D). Valid for r << R; the formula peaks at t = eta R / (e gamma), which is
    ``valid_until``.
    """
    return _log_law(
        "viscous",
        surface_tension=surface_tension,
        viscosity=viscosity,
        drop_radius=drop_radius,
        radius_key="drop_radius",
    )


def viscous_spreading_law(
    *, surface_tension: float, viscosity: float, drop_radius: float
) -> RadiusLaw:
    """Early viscous spreading, docs/physics.md C2: the A1 log law with a in place of r.

    a = -(gamma t / (pi eta)) ln(gamma t / (eta R)); Eddi, Winkels & Snoeijer,
    Phys. Fluids 25, 013102 (2013) report that early viscous spreading follows
    the same logarithmic form as viscous coalescence (V, abstract).
    """
    return _log_law(
        "viscous-spreading",
        surface_tension=surface_tension,
        viscosity=viscosity,
        drop_radius=drop_radius,
        radius_key="drop_radius",
    )


def ilv_law(*, surface_tension: float, viscosity: float, prefactor: float = 1.0) -> RadiusLaw:
    """Inertially limited viscous coalescence, docs/physics.md A2: r = C (gamma/eta) t.

    The neck opens at a constant speed set by the capillary velocity gamma/eta
    (PNAS 109, 6857 (2012), V for the claim). C is of order one; it defaults to
    1.0, an assumed value (M).

    Examples
    --------
    >>> law = ilv_law(surface_tension=0.0658, viscosity=0.1002)
    >>> round(float(law(1e-3)) * 1e6, 1)   # micrometres, 1 ms after contact
    656.7
    """
    check_positive(surface_tension=surface_tension, viscosity=viscosity, prefactor=prefactor)
    speed = prefactor * surface_tension / viscosity

    def function(t):
        return speed * t

    return RadiusLaw(
        "inertially-limited-viscous",
        function,
        {"surface_tension": surface_tension, "viscosity": viscosity, "prefactor": prefactor},
    )


def inertial_law(
    *, surface_tension: float, density: float, drop_radius: float, prefactor: float = 1.0
) -> RadiusLaw:
    """Inertial coalescence, docs/physics.md A3: r = D0 (gamma R / rho)^(1/4) t^(1/2).

    The scaling is from the capillary-inertial balance at the neck (D; also in
    Eggers, Lister & Stone 1999, M). The prefactor D0 defaults to 1.0, an
    assumed value: published fits lie roughly in 1.0-1.7 (M).
    """
    check_positive(surface_tension=surface_tension, density=density, drop_radius=drop_radius)
    check_positive(prefactor=prefactor)
    group = (surface_tension * drop_radius / density) ** 0.25
    law = power_law(prefactor=prefactor * group, exponent=0.5, name="inertial")
    return RadiusLaw(
        "inertial",
        law.function,
        {
            "surface_tension": surface_tension,
            "density": density,
            "drop_radius": drop_radius,
            "prefactor": prefactor,
        },
    )


def viscous_outer_law(
    *,
    surface_tension: float,
    outer_viscosity: float,
    drop_radius: float,
    prefactor: float = 1.2,
) -> RadiusLaw:
    """Coalescence in a viscous outer fluid, docs/physics.md A4v.

    r = C1 (gamma A t / eta_o)^(1/2) with C1 = 1.2 (Nature Commun. 5, 3182
    (2014), V for C1; the explicit form is reconstructed from the fitted time
    ratios, D).
    """
    check_positive(
        surface_tension=surface_tension, outer_viscosity=outer_viscosity, drop_radius=drop_radius
    )
    check_positive(prefactor=prefactor)
    amplitude = prefactor * math.sqrt(surface_tension * drop_radius / outer_viscosity)

    def function(t):
        return amplitude * np.sqrt(t)

    return RadiusLaw(
        "viscous-outer",
        function,
        {
            "surface_tension": surface_tension,
            "outer_viscosity": outer_viscosity,
            "drop_radius": drop_radius,
            "prefactor": prefactor,
        },
    )


def inertial_spreading_law(
    *, surface_tension: float, density: float, drop_radius: float, prefactor: float = 1.2
) -> RadiusLaw:
    """Inertial spreading, docs/physics.md C1: a = C (gamma R / rho)^(1/4) t^(1/2).

    Biance, Clanet & Quere, PRE 69, 016301 (2004) (V for the inertial regime;
    the standard form is M). C defaults to 1.2, an assumed value (M).
    """
    law = inertial_law(
        surface_tension=surface_tension,
        density=density,
        drop_radius=drop_radius,
        prefactor=prefactor,
    )
    return RadiusLaw("inertial-spreading", law.function, dict(law.parameters))


def tanner_law(
    *, surface_tension: float, viscosity: float, drop_volume: float, log_ratio: float = 15.0
) -> RadiusLaw:
    """Tanner's law, docs/physics.md C4: a = [(10/(9 L)) (4V/pi)^3 gamma t / eta]^(1/10).

    Tanner, J. Phys. D 12, 1473 (1979) (V, citation); the explicit form is
    derived in the notes from the Cox-Voinov relation and a thin cap (D). L is
    ln(macro/micro cut-off), 10-20 (M); 15 by default.
    """
    check_positive(
        surface_tension=surface_tension,
        viscosity=viscosity,
        drop_volume=drop_volume,
        log_ratio=log_ratio,
    )
    factor = (10.0 / (9.0 * log_ratio)) * (4.0 * drop_volume / math.pi) ** 3
    factor *= surface_tension / viscosity

    def function(t):
        return (factor * t) ** 0.1

    return RadiusLaw(
        "tanner",
        function,
        {
            "surface_tension": surface_tension,
            "viscosity": viscosity,
            "drop_volume": drop_volume,
            "log_ratio": log_ratio,
        },
    )


def gravity_spreading_law(
    *,
    density: float,
    viscosity: float,
    drop_volume: float,
    gravity: float = STANDARD_GRAVITY,
    prefactor: float = 0.894,
) -> RadiusLaw:
    """Gravity-viscous spreading, docs/physics.md C5: a = 0.894 (rho g V^3 t / (3 eta))^(1/8).

    Huppert, J. Fluid Mech. 121, 43 (1982) (V for the similarity solution);
    0.894 = (1024 / (81 pi^3))^(1/8) is derived in the notes (D). For an outer
    liquid rho would be the density difference.
    """
    check_positive(
        density=density,
        viscosity=viscosity,
        drop_volume=drop_volume,
        gravity=gravity,
        prefactor=prefactor,
    )
    factor = density * gravity * drop_volume**3 / (3.0 * viscosity)

    def function(t):
        return prefactor * (factor * t) ** 0.125

    return RadiusLaw(
        "gravity-spreading",
        function,
        {
            "density": density,
            "viscosity": viscosity,
            "drop_volume": drop_volume,
            "gravity": gravity,
            "prefactor": prefactor,
        },
    )


#: The regime names :func:`regime_law` knows, as in the design's regime keys.
REGIME_NAMES = (
    "viscous",
    "inertially-limited-viscous",
    "inertial",
    "viscous-outer",
    "inertial-spreading",
    "viscous-spreading",
    "tanner",
    "gravity-spreading",
)


def regime_law(
    name: str,
    *,
    surface_tension: float,
    viscosity: float,
    density: float,
    outer_viscosity: float,
    drop_radius: float,
    prefactor: float | None = None,
) -> RadiusLaw:
    """The law of regime `name` for the given material values (SI).

    Parameters
    ----------
    name : str
        One of :data:`REGIME_NAMES`.
    surface_tension, viscosity, density : float
        Of the drop liquid: N/m, Pa s, kg/m^3.
    outer_viscosity : float
        Of the surrounding fluid, Pa s (used by ``viscous-outer``).
    drop_radius : float
        R in metres; the drop volume of the spreading laws is 4/3 pi R^3.
    prefactor : float, optional
        The dimensionless prefactor of ``inertially-limited-viscous``,
        ``inertial``, ``viscous-outer``, ``inertial-spreading`` and
        ``gravity-spreading``; refused for the others, whose prefactor is
        fixed by theory.
    """
    volume = 4.0 / 3.0 * math.pi * drop_radius**3
    extra = {} if prefactor is None else {"prefactor": prefactor}
    builders = {
        "viscous": lambda: viscous_law(
            surface_tension=surface_tension, viscosity=viscosity, drop_radius=drop_radius
        ),
        "viscous-spreading": lambda: viscous_spreading_law(
            surface_tension=surface_tension, viscosity=viscosity, drop_radius=drop_radius
        ),
        "inertially-limited-viscous": lambda: ilv_law(
            surface_tension=surface_tension, viscosity=viscosity, **extra
        ),
        "tanner": lambda: tanner_law(
            surface_tension=surface_tension, viscosity=viscosity, drop_volume=volume
        ),
        "inertial": lambda: inertial_law(
            surface_tension=surface_tension, density=density, drop_radius=drop_radius, **extra
        ),
        "viscous-outer": lambda: viscous_outer_law(
            surface_tension=surface_tension,
            outer_viscosity=outer_viscosity,
            drop_radius=drop_radius,
            **extra,
        ),
        "inertial-spreading": lambda: inertial_spreading_law(
            surface_tension=surface_tension, density=density, drop_radius=drop_radius, **extra
        ),
        "gravity-spreading": lambda: gravity_spreading_law(
            density=density, viscosity=viscosity, drop_volume=volume, **extra
        ),
    }
    if name not in builders:
        raise ExperimentError(
            "is not a known regime", key="law", value=name, expected=", ".join(REGIME_NAMES)
        )
    if prefactor is not None and name in ("viscous", "viscous-spreading", "tanner"):
        raise ExperimentError(
            f"does not apply to the {name!r} law, whose prefactor is fixed by theory",
            key="prefactor",
            value=prefactor,
        )
    return builders[name]()
