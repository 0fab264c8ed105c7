"""Material uncertainty: how uncertain material values widen a regime's published prefactor.

The published prefactor times the group, ``C · Π q_i^p_i``, has the relative
uncertainty ``sqrt(Σ (p_i u_i)²)`` for relative uncertainties u_i of the
material values (first-order propagation; the volume counts as ``R³``).
Defaults: 2 % for every material value, 0 for gravity
(:data:`DEFAULT_MATERIAL_UNCERTAINTY`).

Examples
--------
>>> from dropkin.scaling import regime
>>> round(group_relative_uncertainty(regime("inertial"), resolve_material_uncertainty()), 5)
0.00866
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from types import MappingProxyType

from ...errors import FitError

__all__ = [
    "DEFAULT_MATERIAL_UNCERTAINTY",
    "resolve_material_uncertainty",
    "group_relative_uncertainty",
]

#: Relative standard uncertainties assumed for the material values (2 % each, stated default).
DEFAULT_MATERIAL_UNCERTAINTY = MappingProxyType(
    {
        "surface_tension": 0.02,
        "viscosity": 0.02,
        "density": 0.02,
        "radius": 0.02,
        "outer_viscosity": 0.02,
        "outer_density": 0.02,
        "contact_angle": 0.02,
        "gravity": 0.0,
    }
)


def resolve_material_uncertainty(given: Mapping[str, float] | None = None) -> Mapping[str, float]:
    """The relative uncertainties to use: the defaults, updated with `given`.

    Raises
    ------
    FitError
        For an unknown name or a value that is not a finite number ≥ 0.
    """
    out = dict(DEFAULT_MATERIAL_UNCERTAINTY)
    for name, value in (given or {}).items():
        if name not in out:
            raise FitError(
                "is not a material value",
                key="material_uncertainty",
                value=name,
                expected=", ".join(out),
            )
        ok = isinstance(value, int | float) and not isinstance(value, bool)
        if not (ok and math.isfinite(value) and value >= 0):
            raise FitError(
                "must be a relative uncertainty ≥ 0 (0.02 for 2 %)",
                key=f"material_uncertainty.{name}",
                value=value,
            )
        out[name] = float(value)
    return MappingProxyType(out)


def group_relative_uncertainty(regime, relative: Mapping[str, float]) -> float:
    """Relative uncertainty of a regime's group from those of the material values."""
    total = 0.0
    for name, power in regime.group_powers.items():
        if name == "volume":
            total += (3.0 * float(power) * relative["radius"]) ** 2
        else:
            total += (float(power) * relative.get(name, 0.0)) ** 2
    if regime.angle_power:
        total += (regime.angle_power * relative["contact_angle"]) ** 2
    return math.sqrt(total)
