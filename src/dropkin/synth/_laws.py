"""Radius laws r(t) that a synthetic recording follows exactly.

A law maps the time since contact (seconds) to the neck or contact radius
(metres). Every law is a :class:`RadiusLaw` record: the function, a name, the
parameters written to ``truth.json``, and the time after contact up to which
the formula is meaningful (``valid_until``).

The regime laws implement the formulas of the project's physics notes
(``docs/physics.md``, section 2); each docstring gives the formula, its
source and the status label of the notes (V checked, C computed, D derived,
M from memory).

Examples
--------
>>> law = inertial_law(surface_tension=0.0727, density=998.0, drop_radius=1e-3)
>>> round(float(law(1e-4)) * 1e6, 1)   # micrometres, 100 us after contact
164.3
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

import numpy as np

from ..errors import ExperimentError

__all__ = [
    "RadiusLaw",
    "custom_law",
    "power_law",
    "harmonic_blend",
    "smooth_blend",
    "viscous_law",
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


@dataclass(frozen=True)
class RadiusLaw:
    """A radius law r(t): time since contact in seconds to radius in metres.

    Attributes
    ----------
    name : str
        A short name, written to ``truth.json`` (e.g. ``"inertial"``).
    function : callable
        ``function(t)`` for a float array ``t > 0`` returns ``r(t)`` in metres.
        It is only ever called with positive times; :meth:`__call__` handles
        ``t <= 0`` (radius 0, before contact).
    parameters : dict of str to float
        The law's parameters in SI units, for the record.
    valid_until : float
        Time since contact (s) beyond which the formula stops describing a
        growing radius; ``inf`` when it never does.
    """

    name: str
    function: Callable[[np.ndarray], np.ndarray] = field(compare=False)
    parameters: Mapping[str, float] = field(default_factory=dict, hash=False)
    valid_until: float = math.inf

    def __call__(self, time_since_contact):
        """Radius in metres at `time_since_contact` (s); 0 where it is <= 0.

        Parameters
        ----------
        time_since_contact : float or (K,) array_like

        Returns
        -------
        radius : float or (K,) ndarray
        """
        t = np.asarray(time_since_contact, dtype=float)
        out = np.zeros_like(t)
        after = t > 0
        if np.any(after):
            out[after] = np.asarray(self.function(t[after]), dtype=float)
        return float(out) if out.ndim == 0 else out


def _positive(**values: float) -> None:
    for key, value in values.items():
        if not (isinstance(value, int | float) and math.isfinite(value) and value > 0):
            raise ExperimentError("must be a positive finite number", key=key, value=value)


def custom_law(function, *, name: str = "custom", parameters=None, valid_until=math.inf):
    """Wrap any callable ``function(t) -> r`` (SI) as a :class:`RadiusLaw`."""
    if not callable(function):
        raise ExperimentError("must be callable", key="function", value=function)
    return RadiusLaw(name, function, dict(parameters or {}), float(valid_until))


def power_law(*, prefactor: float, exponent: float, name: str = "power") -> RadiusLaw:
    """r = prefactor * t**exponent (SI: prefactor in m s^-exponent).

    Examples
    --------
    >>> float(power_law(prefactor=2.0, exponent=0.5)(4.0))
    4.0
    """
    _positive(prefactor=prefactor, exponent=exponent)

    def function(t):
        return prefactor * t**exponent

    return RadiusLaw(name, function, {"prefactor": prefactor, "exponent": exponent})


def harmonic_blend(first: RadiusLaw, second: RadiusLaw) -> RadiusLaw:
    """Crossover by the harmonic blend 1/r = 1/r1 + 1/r2 (docs/physics.md section 3).

    The smaller of the two laws dominates at each time, so a fast early law
    hands over to a slow late one (e.g. inertial spreading to Tanner), and a
    linear viscous law to the t^1/2 inertial law as in PRL 106, 114501 (2011).
    """

    def function(t):
        return 1.0 / (1.0 / first.function(t) + 1.0 / second.function(t))

    parameters = {f"first.{k}": v for k, v in first.parameters.items()}
    parameters |= {f"second.{k}": v for k, v in second.parameters.items()}
    return RadiusLaw(
        f"harmonic-blend({first.name},{second.name})",
        function,
        parameters,
        min(first.valid_until, second.valid_until),
    )


def smooth_blend(
    first: RadiusLaw, second: RadiusLaw, *, crossover_time: float, sharpness: float = 2.0
) -> RadiusLaw:
    """A smooth hand-over from `first` to `second` around `crossover_time`.

    ln r = (1 - w) ln r1 + w ln r2 with the weight
    w = 1 / (1 + (t_c / t)**sharpness): r follows `first` for t << t_c and
    `second` for t >> t_c (a logistic step in ln t, of our own choosing).
    """
    _positive(crossover_time=crossover_time, sharpness=sharpness)

    def function(t):
        w = 1.0 / (1.0 + (crossover_time / t) ** sharpness)
        return np.exp((1 - w) * np.log(first.function(t)) + w * np.log(second.function(t)))

    parameters = {f"first.{k}": v for k, v in first.parameters.items()}
    parameters |= {f"second.{k}": v for k, v in second.parameters.items()}
    parameters |= {"crossover_time": crossover_time, "sharpness": sharpness}
    return RadiusLaw(
        f"smooth-blend({first.name},{second.name})",
        function,
        parameters,
        min(first.valid_until, second.valid_until),
    )


def _log_law(name, *, surface_tension, viscosity, drop_radius, radius_key):
    _positive(surface_tension=surface_tension, viscosity=viscosity, **{radius_key: drop_radius})
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


def inertial_law(
    *, surface_tension: float, density: float, drop_radius: float, prefactor: float = 1.0
) -> RadiusLaw:
    """Inertial coalescence, docs/physics.md A3: r = D0 (gamma R / rho)^(1/4) t^(1/2).

    The scaling is from the capillary-inertial balance at the neck (D; also in
    Eggers, Lister & Stone 1999, M). The prefactor D0 defaults to 1.0, an
    assumed value: published fits lie roughly in 1.0-1.7 (M).
    """
    _positive(surface_tension=surface_tension, density=density, drop_radius=drop_radius)
    _positive(prefactor=prefactor)
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
    _positive(
        surface_tension=surface_tension, outer_viscosity=outer_viscosity, drop_radius=drop_radius
    )
    _positive(prefactor=prefactor)
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
    _positive(
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
    _positive(
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
        The dimensionless prefactor of ``inertial``, ``viscous-outer``,
        ``inertial-spreading`` and ``gravity-spreading``; refused for the
        others, whose prefactor is fixed by theory.
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
