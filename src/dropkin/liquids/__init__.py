"""The liquid library: material values as functions of temperature, with sources.

Each built-in liquid has a validity range and refuses temperatures outside
it; every value carries the name of the formula or table it comes from (see
``LiquidProperties.sources``) and its relative standard uncertainty
(``LiquidProperties.uncertainties``), which the fit propagates into the
prefactor's interval. Users add their own liquids in a TOML file
(:func:`load_liquid_library`); an entry there takes precedence over a
built-in liquid of the same name.

Built-in liquids (surface tensions are against air or the liquid's vapour):

- ``water``: IAPWS R1-76(2014) surface tension, Kell (1975) density, IAPWS
  2008 viscosity; 0–100 °C at 0.1 MPa.
- ``glycerol-water`` (needs ``glycerol_mass_fraction``) and ``glycerol``:
  the 2008 viscosity correlation (2 %, checked against the 1951 table), the
  2018 density model (0.1 %), surface tension between water's and the 2010
  handbook fit for glycerol, shaped by a 1963 table quoted from memory
  (±1.5 mN/m); 0–100 °C.
- ``ethanol``: the 2012 recommended surface-tension fit; density and
  viscosity as two-point forms through CoolProp values; 0–60 °C.
- ``silicone-oil-10cSt``, ``-100cSt``, ``-1000cSt``: nominal grades (±5–10 %),
  15–35 °C. Enter measured values when you have them.
- ``air``: Sutherland's law and the ideal gas at 101.325 kPa; -40–150 °C;
  the default surrounding medium.

:func:`resolve_fluids` fills the missing values of an experiment's liquid
and medium from here; values written in the experiment file always win.

This package's public face. The lookup and the values at a
temperature are in :mod:`._lookup`, the built-in liquids in :mod:`._builtin`
(formulas in :mod:`._water` and :mod:`._mixtures`), a user's own file in
:mod:`._user`, and the completion of an experiment's fluids in :mod:`._resolve`.

Examples
--------
>>> water = liquid_properties("water", 293.15)
>>> round(water.surface_tension * 1e3, 2), round(water.density, 1)
(72.74, 998.2)
>>> water.sources["surface_tension"].split(";")[0]
'IAPWS R1-76(2014)'
>>> dict(water.uncertainties)
{'surface_tension': 0.005, 'viscosity': 0.01, 'density': 0.0001}
>>> mix = liquid_properties("glycerol-water", 293.15, glycerol_mass_fraction=0.8)
>>> round(mix.viscosity * 1e3, 2)
60.86
"""

from ._lookup import LiquidInfo as LiquidInfo
from ._lookup import LiquidProperties as LiquidProperties
from ._lookup import celsius_text as celsius_text
from ._lookup import liquid_catalogue as liquid_catalogue
from ._lookup import liquid_info as liquid_info
from ._lookup import liquid_names as liquid_names
from ._lookup import liquid_properties as liquid_properties
from ._resolve import DEFAULT_TEMPERATURE as DEFAULT_TEMPERATURE
from ._resolve import resolve_fluids as resolve_fluids
from ._resolve import stated_uncertainties as stated_uncertainties
from ._user import LiquidLibrary as LiquidLibrary
from ._user import UserLiquid as UserLiquid
from ._user import liquid_library_from_toml as liquid_library_from_toml
from ._user import load_liquid_library as load_liquid_library

__all__ = [
    "DEFAULT_TEMPERATURE",
    "LiquidProperties",
    "LiquidInfo",
    "LiquidLibrary",
    "UserLiquid",
    "liquid_names",
    "liquid_info",
    "liquid_catalogue",
    "liquid_properties",
    "liquid_library_from_toml",
    "load_liquid_library",
    "resolve_fluids",
    "stated_uncertainties",
    "celsius_text",
]
