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
    uncertainties : Mapping[str, float]
        Relative standard uncertainty (k = 1) of each property, as its
        source states it or as the source string says it was judged.
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
    uncertainties: Mapping[str, float]
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


# Sources give the journal, volume, page and year; each says where its stated
# uncertainty comes from. "(from memory)" marks what could not be checked here.
_WATER_SOURCES = {
    "surface_tension": "IAPWS R1-76(2014); stated uncertainty about 0.5 % near room "
    "temperature (from memory)",
    "viscosity": "IAPWS 2008, J. Phys. Chem. Ref. Data 38, 101 (2009), without critical "
    "enhancement; 1 % for the liquid at 0.1 MPa (from memory)",
    "density": "J. Chem. Eng. Data 20, 97 (1975); within 2e-5 of IAPWS-95 (CoolProp "
    "8.0.0), 1e-4 stated",
}
_WATER_U = {"surface_tension": 0.005, "viscosity": 0.01, "density": 1e-4}
_GLYCEROL_SOURCES = {
    "surface_tension": "ends published: water IAPWS R1-76(2014), glycerol the PPDS fit of the "
    "VDI Heat Atlas, 2nd ed. (2010); the shape in between from memory of a 1963 table at "
    "20 °C, ±1.5 mN/m (2.5 % stated, not checked against a published table)",
    "viscosity": "Ind. Eng. Chem. Res. 47, 3285 (2008) correlation; 2 % = its rms deviation "
    "from the table of Ind. Eng. Chem. 43, 2117 (1951) at 0–40 °C (largest 3.5 %)",
    "density": "Exp. Fluids 59, 75 (2018); within 0.05 % of the glycerine tables, 0.1 % stated",
}
_GLYCEROL_U = {"surface_tension": 0.025, "viscosity": 0.02, "density": 0.001}
_ETHANOL_SOURCES = {
    "surface_tension": "J. Phys. Chem. Ref. Data 41, 043105 (2012) fit, coefficients as "
    "in CoolProp 8.0.0; 2 % stated (the paper's per-fluid deviation not checked)",
    "viscosity": "Andrade form through CoolProp 8.0.0's values (its 2005 correlation, "
    "Ind. Eng. Chem. Res.) at 20 and 25 °C; within 1 % of it to 60 °C, 2 % stated",
    "density": "linear through CoolProp 8.0.0 at 20 and 25 °C; within 0.2 % of it to 60 °C",
}
_ETHANOL_U = {"surface_tension": 0.02, "viscosity": 0.02, "density": 0.002}
_AIR_SOURCES = {
    "surface_tension": "not applicable (a gas)",
    "viscosity": "Sutherland's law, mu0 = 1.716e-5 Pa s, S = 110.4 K; within 0.5 % of "
    "CoolProp 8.0.0",
    "density": "ideal gas, M = 28.9647 g/mol, p = 101.325 kPa; within 0.1 % of CoolProp 8.0.0",
}
_AIR_U = {"viscosity": 0.005, "density": 0.001}
_SILICONE_SOURCES = {
    "surface_tension": "nominal grade, typical data-sheet value at 25 °C, -0.06 mN/(m K), "
    "from memory, 3 % stated",
    "viscosity": "nominal grade, sold ±5–10 %; Andrade B = 1739 K from a viscosity-temperature "
    "coefficient of 0.60, from memory; 10 % stated",
    "density": "nominal grade at 25 °C (docs/physics.md §5.4), expansion 9.6e-4 /K from "
    "memory; 1 % stated",
}
_SILICONE_U = {"surface_tension": 0.03, "viscosity": 0.10, "density": 0.01}

BUILT_IN: dict[str, BuiltInLiquid] = {
    "water": BuiltInLiquid(
        "pure water at 0.1 MPa",
        _c(0.0),
        _c(100.0),
        False,
        _WATER_SOURCES,
        _WATER_U,
        _water,
        None,
    ),
    "glycerol-water": BuiltInLiquid(
        "glycerol–water mixture; give the glycerol mass fraction",
        _c(0.0),
        _c(100.0),
        True,
        _GLYCEROL_SOURCES,
        _GLYCEROL_U,
        _glycerol_water,
        None,
    ),
    "glycerol": BuiltInLiquid(
        "anhydrous glycerol (1 wt % water lowers its viscosity by ~20 %)",
        _c(0.0),
        _c(100.0),
        False,
        _GLYCEROL_SOURCES,
        _GLYCEROL_U,
        _glycerol_water,
        1.0,
    ),
    "ethanol": BuiltInLiquid(
        "pure ethanol",
        _c(0.0),
        _c(60.0),
        False,
        _ETHANOL_SOURCES,
        _ETHANOL_U,
        _ethanol,
        None,
    ),
    "air": BuiltInLiquid(
        "dry air at 101.325 kPa (the default medium)",
        _c(-40.0),
        _c(150.0),
        False,
        _AIR_SOURCES,
        _AIR_U,
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
        _SILICONE_U,
        (lambda grade: lambda t, _f: _mix.silicone_oil_properties(t, grade))(_grade),
        None,
    )
