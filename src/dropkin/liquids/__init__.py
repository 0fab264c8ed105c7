"""The liquid library: built-in liquids and user files, with sources, validity ranges
and stated uncertainties, resolved to SI values for an experiment."""

from ._library import DEFAULT_TEMPERATURE as DEFAULT_TEMPERATURE
from ._library import LiquidInfo as LiquidInfo
from ._library import LiquidLibrary as LiquidLibrary
from ._library import LiquidProperties as LiquidProperties
from ._library import UserLiquid as UserLiquid
from ._library import liquid_catalogue as liquid_catalogue
from ._library import liquid_info as liquid_info
from ._library import liquid_library_from_toml as liquid_library_from_toml
from ._library import liquid_names as liquid_names
from ._library import liquid_properties as liquid_properties
from ._library import load_liquid_library as load_liquid_library
from ._library import resolve_fluids as resolve_fluids

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
]
