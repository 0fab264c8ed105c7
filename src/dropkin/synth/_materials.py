"""The fluids of a synthetic experiment, as written to its experiment file."""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..errors import ExperimentError

__all__ = ["Liquid", "Medium"]


def _check_positive(owner: str, **values) -> None:
    for key, value in values.items():
        if value is not None and not (math.isfinite(value) and value > 0):
            raise ExperimentError("must be positive and finite", key=f"{owner}.{key}", value=value)


@dataclass(frozen=True)
class Liquid:
    """The drop liquid (SI units).

    The defaults are water at 20 degC from the project's physics notes
    (section 5.1: IAPWS R1-76 surface tension, IAPWS 2008 viscosity, IAPWS-95
    density, all computed there, C).

    Attributes
    ----------
    name : str or None
        A library name such as ``"water"`` or ``"glycerol-water"``; optional.
    surface_tension : float
        N/m.
    viscosity : float
        Pa s.
    density : float
        kg/m^3.
    temperature : float or None
        Kelvin; written only when given.
    glycerol_mass_fraction : float or None
        0..1, for glycerol-water mixtures; written only when given.
    """

    name: str | None = "water"
    surface_tension: float = 72.74e-3
    viscosity: float = 1.0016e-3
    density: float = 998.2
    temperature: float | None = 293.15
    glycerol_mass_fraction: float | None = None

    def __post_init__(self):
        _check_positive(
            "Liquid",
            surface_tension=self.surface_tension,
            viscosity=self.viscosity,
            density=self.density,
            temperature=self.temperature,
        )
        fraction = self.glycerol_mass_fraction
        if fraction is not None and not 0 <= fraction <= 1:
            raise ExperimentError(
                "must lie in 0..1", key="Liquid.glycerol_mass_fraction", value=fraction
            )


@dataclass(frozen=True)
class Medium:
    """The surrounding fluid (SI units); air by default.

    The default values, 0.018 mPa s and 1.2 kg/m^3, are those of the design's
    example experiment file (air near room temperature; from memory, M).
    """

    viscosity: float = 1.8e-5
    density: float = 1.2

    def __post_init__(self):
        _check_positive("Medium", viscosity=self.viscosity, density=self.density)
