"""The built-in liquids of :mod:`dropkin.liquids`: range, sources and the formulas behind each.

Examples
--------
>>> entry = BUILT_IN["water"]
>>> round(entry.low - 273.15, 2), round(entry.high - 273.15, 2)
(0.0, 100.0)
>>> sigma, eta, rho = entry.values(293.15, None)
>>> round(eta * 1e3, 4)
1.0016
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass

from . import _mixtures as _mix
from . import _water as _pure

__all__ = ["BuiltInLiquid", "BUILT_IN", "ZERO_CELSIUS"]

ZERO_CELSIUS = 273.15


@dataclass(frozen=True)
class BuiltInLiquid:
    """One built-in liquid.

    Attributes
    ----------
    description : str
        What it is, in a few words.
    low, high : float
        Validity range (K).
    needs_fraction : bool
        True when a glycerol mass fraction must be given.
    sources : Mapping[str, str]
        The formula or table behind each property.
    values : callable
        ``values(temperature_K, fraction) -> (surface_tension, viscosity, density)`` in SI.
    fixed_fraction : float or None
        The glycerol mass fraction this entry stands for (pure glycerol: 1).
    """

    description: str
    low: float
    high: float
    needs_fraction: bool
    sources: Mapping[str, str]
    values: Callable[[float, float | None], tuple[float | None, float, float]]
    fixed_fraction: float | None = None


def _c(celsius: float) -> float:
    return celsius + ZERO_CELSIUS


def _water(t, _fraction):
    return _pure.water_surface_tension(t), _pure.water_viscosity(t), _pure.water_density(t)


def _glycerol_water(t, fraction):
    return (
        _mix.glycerol_water_surface_tension(t, fraction),
        _mix.glycerol_water_viscosity(t, fraction),
        _mix.glycerol_water_density(t, fraction),
    )


def _ethanol(t, _fraction):
    return _mix.ethanol_surface_tension(t), _mix.ethanol_viscosity(t), _mix.ethanol_density(t)


def _air(t, _fraction):
    return None, _pure.air_viscosity(t), _pure.air_density(t)


_GLYCEROL_SOURCES = {
    "surface_tension": "Glycerine Producers' Association table (1963), from memory, "
    "±1.5 mN/m (M); water end IAPWS R1-76(2014)",
    "viscosity": "Cheng (2008), Ind. Eng. Chem. Res. 47, 3285",
    "density": "Volk & Kähler (2018), Exp. Fluids 59, 75",
}
_SILICONE_SOURCES = {
    "surface_tension": "nominal grade, typical vendor data at 25 °C (M); -0.06 mN/(m K) (M)",
    "viscosity": "nominal grade, ±5–10 % (M); Andrade B = 1739 K from VTC 0.60 (M)",
    "density": "nominal grade at 25 °C (docs/physics.md §5.4); expansion 9.6e-4 /K (M)",
}

BUILT_IN: dict[str, BuiltInLiquid] = {
    "water": BuiltInLiquid(
        "pure water at 0.1 MPa",
        _c(0.0),
        _c(100.0),
        False,
        {
            "surface_tension": "IAPWS R1-76(2014)",
            "viscosity": "IAPWS 2008 (Huber et al. 2009), without critical enhancement",
            "density": "Kell (1975), J. Chem. Eng. Data 20, 97",
        },
        _water,
        None,
    ),
    "glycerol-water": BuiltInLiquid(
        "glycerol–water mixture; give the glycerol mass fraction",
        _c(0.0),
        _c(100.0),
        True,
        _GLYCEROL_SOURCES,
        _glycerol_water,
        None,
    ),
    "glycerol": BuiltInLiquid(
        "anhydrous glycerol (1 wt % water lowers its viscosity by ~20 %)",
        _c(0.0),
        _c(100.0),
        False,
        _GLYCEROL_SOURCES,
        _glycerol_water,
        1.0,
    ),
    "ethanol": BuiltInLiquid(
        "pure ethanol",
        _c(0.0),
        _c(60.0),
        False,
        {
            "surface_tension": "linear through Adamson & Gast's 20 and 30 °C values (V)",
            "viscosity": "Andrade form through CoolProp/Kiselev (2005) at 20 and 25 °C (C)",
            "density": "linear through CoolProp 8.0.0 at 20 and 25 °C (C)",
        },
        _ethanol,
        None,
    ),
    "air": BuiltInLiquid(
        "dry air at 101.325 kPa (the default medium)",
        _c(-40.0),
        _c(150.0),
        False,
        {
            "surface_tension": "not applicable (a gas)",
            "viscosity": "Sutherland's law, mu0 = 1.716e-5 Pa s, S = 110.4 K (White)",
            "density": "ideal gas, M = 28.9647 g/mol, p = 101.325 kPa",
        },
        _air,
        None,
    ),
}
for _grade in _mix.SILICONE_OIL_GRADES:
    BUILT_IN[f"silicone-oil-{_grade}"] = BuiltInLiquid(
        f"linear PDMS, nominal {_grade[:-3]} cSt grade; enter measured values",
        _c(15.0),
        _c(35.0),
        False,
        _SILICONE_SOURCES,
        (lambda grade: lambda t, _f: _mix.silicone_oil_properties(t, grade))(_grade),
        None,
    )
