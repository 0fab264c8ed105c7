"""The liquid library: material values as functions of temperature, with sources.

Each built-in liquid has a validity range and refuses temperatures outside
it; every value carries the name of the formula or table it comes from (see
``LiquidProperties.sources``). Users add their own liquids in a TOML file
(:func:`load_liquid_library`); an entry there takes precedence over a
built-in liquid of the same name.

Built-in liquids (surface tensions are against air or the liquid's vapour):

- ``water``: IAPWS R1-76(2014) surface tension, Kell (1975) density, IAPWS
  2008 viscosity; 0–100 °C at 0.1 MPa.
- ``glycerol-water`` (needs ``glycerol_mass_fraction``) and ``glycerol``:
  Cheng (2008) viscosity, Volk & Kähler (2018) density, surface tension from
  memory of a 1963 table (±1.5 mN/m); 0–100 °C.
- ``ethanol``: two-point forms through handbook and CoolProp values; 0–60 °C.
- ``silicone-oil-10cSt``, ``-100cSt``, ``-1000cSt``: nominal grades (±5–10 %),
  15–35 °C. Enter measured values when you have them.
- ``air``: Sutherland's law and the ideal gas at 101.325 kPa; -40–150 °C;
  the default surrounding medium.

:func:`resolve_fluids` fills the missing values of an experiment's liquid
and medium from here; values written in the experiment file always win.

Examples
--------
>>> water = liquid_properties("water", 293.15)
>>> round(water.surface_tension * 1e3, 2), round(water.density, 1)
(72.74, 998.2)
>>> water.sources["surface_tension"]
'IAPWS R1-76(2014)'
>>> mix = liquid_properties("glycerol-water", 293.15, glycerol_mass_fraction=0.8)
>>> round(mix.viscosity * 1e3, 2)
60.86
"""

from __future__ import annotations

import dataclasses
import math
import os
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

from ..errors import ExperimentError, with_path
from ._builtin import BUILT_IN, ZERO_CELSIUS
from ._user import (
    LiquidLibrary,
    UserLiquid,
    liquid_library_from_toml,
    load_liquid_library,
)

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

#: Temperature assumed when an experiment names a liquid but gives none (20 °C).
DEFAULT_TEMPERATURE = 293.15


@dataclass(frozen=True)
class LiquidProperties:
    """Material values of one liquid at one temperature, in SI units.

    Attributes
    ----------
    name : str
        The library name.
    temperature : float
        Temperature (K).
    surface_tension : float or None
        Surface tension against air or the liquid's vapour (N/m); None for a
        gas, or a user liquid given without one.
    viscosity : float
        Dynamic viscosity (Pa s).
    density : float
        Density (kg/m^3).
    glycerol_mass_fraction : float or None
        For glycerol–water mixtures, the glycerol mass fraction (0–1).
    sources : Mapping[str, str]
        For each of ``surface_tension``, ``viscosity``, ``density``: the
        formula or table the value comes from (read-only).
    """

    name: str
    temperature: float
    surface_tension: float | None
    viscosity: float
    density: float
    glycerol_mass_fraction: float | None = None
    sources: Mapping[str, str] = field(default_factory=lambda: MappingProxyType({}))

    @property
    def kinematic_viscosity(self) -> float:
        """Kinematic viscosity ``viscosity / density`` (m^2/s)."""
        return self.viscosity / self.density


@dataclass(frozen=True)
class LiquidInfo:
    """What the library knows about one liquid, independent of temperature.

    Attributes
    ----------
    name : str
        The library name (lookup ignores case).
    description : str
        What it is, in a few words.
    temperature_min, temperature_max : float or None
        Validity range (K); None for a user liquid without a range.
    needs_glycerol_mass_fraction : bool
        True for ``glycerol-water``: the mass fraction must be given.
    sources : Mapping[str, str]
        The formula or table behind each property (read-only).
    origin : str
        ``"built-in"``, or the path of the user's library file.
    """

    name: str
    description: str
    temperature_min: float | None
    temperature_max: float | None
    needs_glycerol_mass_fraction: bool
    sources: Mapping[str, str]
    origin: str = "built-in"


def _as_library(user_library) -> LiquidLibrary | None:
    if user_library is None or isinstance(user_library, LiquidLibrary):
        return user_library
    if isinstance(user_library, str | os.PathLike):
        return load_liquid_library(user_library)
    raise TypeError(
        f"user_library must be a LiquidLibrary or a path, not {type(user_library).__name__}"
    )


def liquid_names(*, user_library=None) -> tuple[str, ...]:
    """The names the library knows, built-in ones first, each group sorted.

    Parameters
    ----------
    user_library : LiquidLibrary or path, optional
        A user's library whose names are added (and which shadows built-ins).

    Examples
    --------
    >>> "water" in liquid_names() and "silicone-oil-100cSt" in liquid_names()
    True
    """
    library = _as_library(user_library)
    built_in = sorted(BUILT_IN)
    user = [] if library is None else sorted(e.name for e in library.entries.values())
    return (*[n for n in built_in if n.lower() not in _user_keys(library)], *user)


def _user_keys(library) -> set[str]:
    return set() if library is None else set(library.entries)


def _unknown(name, *, library, key) -> ExperimentError:
    return ExperimentError(
        "unknown liquid",
        key=key,
        value=name,
        expected="one of " + ", ".join(liquid_names(user_library=library)),
    )


def _lookup(name: str, library, *, key):
    """((name, built-in entry) or None, UserLiquid or None)."""
    if not isinstance(name, str) or not name.strip():
        raise _unknown(name, library=library, key=key)
    wanted = name.strip().lower()
    if library is not None and wanted in library.entries:
        return None, library.entries[wanted]
    for known, entry in BUILT_IN.items():
        if known.lower() == wanted:
            return (known, entry), None
    raise _unknown(name, library=library, key=key)


def liquid_info(name: str, *, user_library=None) -> LiquidInfo:
    """What the library knows about `name`: description, range, sources.

    Raises
    ------
    ExperimentError
        If the name is unknown; the message lists the names that exist.
    """
    library = _as_library(user_library)
    built_in, user = _lookup(name, library, key="liquid.name")
    if user is not None:
        return LiquidInfo(
            name=user.name,
            description=user.description,
            temperature_min=user.temperature_min,
            temperature_max=user.temperature_max,
            needs_glycerol_mass_fraction=False,
            sources=MappingProxyType(_user_sources(user)),
            origin=library.path or "user library",
        )
    known, entry = built_in
    return LiquidInfo(
        name=known,
        description=entry.description,
        temperature_min=entry.low,
        temperature_max=entry.high,
        needs_glycerol_mass_fraction=entry.needs_fraction,
        sources=MappingProxyType(dict(entry.sources)),
    )


def liquid_catalogue(*, user_library=None) -> tuple[LiquidInfo, ...]:
    """:func:`liquid_info` for every name of :func:`liquid_names`."""
    library = _as_library(user_library)
    return tuple(liquid_info(n, user_library=library) for n in liquid_names(user_library=library))


def _user_sources(user: UserLiquid) -> dict[str, str]:
    text = user.source or "user library"
    return {
        "surface_tension": text if user.surface_tension is not None else "not given",
        "viscosity": text,
        "density": text,
    }


def _celsius(kelvin: float) -> str:
    return f"{kelvin - ZERO_CELSIUS:.4g} °C"


def _check_temperature(name, temperature, low, high, *, key):
    if not (isinstance(temperature, int | float) and math.isfinite(temperature)):
        raise ExperimentError("is not a finite temperature", key=key, value=temperature)
    if temperature <= 0:
        raise ExperimentError(
            "must be above absolute zero", key=key, value=temperature, expected="kelvin > 0"
        )
    if low is not None and not low <= temperature <= high:
        raise ExperimentError(
            f"{name} at {_celsius(temperature)} is outside the range of its values",
            key=key,
            expected=f"a temperature from {_celsius(low)} to {_celsius(high)}",
        )


def _check_fraction(name, fraction, needs, fixed, *, key):
    if fixed is not None or not needs:
        if fraction is not None and (fixed is None or fraction != fixed):
            raise ExperimentError(
                f"does not apply to {name}",
                key=key,
                value=fraction,
                expected="no glycerol mass fraction (use 'glycerol-water' for mixtures)",
            )
        return fixed
    if fraction is None:
        raise ExperimentError(
            f"is needed for {name}", key=key, expected="a glycerol mass fraction from 0 to 1"
        )
    if (
        isinstance(fraction, bool)
        or not isinstance(fraction, int | float)
        or not (math.isfinite(fraction) and 0.0 <= fraction <= 1.0)
    ):
        raise ExperimentError(
            "must lie between 0 and 1",
            key=key,
            value=fraction,
            expected="a glycerol mass fraction from 0 to 1",
        )
    return float(fraction)


def _properties(name, temperature, fraction, library, *, section) -> LiquidProperties:
    built_in, user = _lookup(name, library, key=f"{section}.name")
    t_key, f_key = f"{section}.temperature", f"{section}.glycerol_mass_fraction"
    if user is not None:
        _check_temperature(
            user.name, temperature, user.temperature_min, user.temperature_max, key=t_key
        )
        _check_fraction(user.name, fraction, False, None, key=f_key)
        return LiquidProperties(
            name=user.name,
            temperature=float(temperature),
            surface_tension=user.surface_tension,
            viscosity=user.viscosity,
            density=user.density,
            sources=MappingProxyType(_user_sources(user)),
        )
    known, entry = built_in
    _check_temperature(known, temperature, entry.low, entry.high, key=t_key)
    fraction = _check_fraction(
        known, fraction, entry.needs_fraction, entry.fixed_fraction, key=f_key
    )
    sigma, eta, rho = entry.values(float(temperature), fraction)
    return LiquidProperties(
        name=known,
        temperature=float(temperature),
        surface_tension=sigma,
        viscosity=eta,
        density=rho,
        glycerol_mass_fraction=fraction,
        sources=MappingProxyType(dict(entry.sources)),
    )


def liquid_properties(
    name: str, temperature: float, *, glycerol_mass_fraction=None, user_library=None
) -> LiquidProperties:
    """Surface tension, viscosity and density of a library liquid at a temperature.

    Parameters
    ----------
    name : str
        A name of :func:`liquid_names` (case is ignored).
    temperature : float
        Temperature (K).
    glycerol_mass_fraction : float, optional
        Required for ``glycerol-water`` (0 to 1); refused for other liquids.
    user_library : LiquidLibrary or path, optional
        A user's library, searched before the built-in liquids.

    Returns
    -------
    LiquidProperties

    Raises
    ------
    ExperimentError
        For an unknown name (the message lists the names that exist), a
        temperature outside the liquid's range (named in °C, with the range),
        or a missing or out-of-range mass fraction.

    Examples
    --------
    >>> oil = liquid_properties("silicone-oil-100cSt", 298.15)
    >>> round(oil.kinematic_viscosity * 1e6, 6)
    100.0
    """
    library = _as_library(user_library)
    return _properties(name, temperature, glycerol_mass_fraction, library, section="liquid")


_FILLED = ("surface_tension", "viscosity", "density")


def _fill(fluid, properties, names):
    changes = {n: getattr(properties, n) for n in names if getattr(fluid, n) is None}
    if fluid.temperature is None:
        changes["temperature"] = properties.temperature
    return dataclasses.replace(fluid, **changes)


def resolve_fluids(experiment, *, user_library=None):
    """A copy of `experiment` whose liquid and medium have missing values filled in.

    Values written in the experiment file (or given as overrides) always win;
    only values that are None are taken from the library.

    - The liquid is looked up by its ``name`` when any of surface tension,
      viscosity or density is missing. Without a temperature, **20 °C is
      assumed** and written into the result. A liquid without a name is
      left as it is.
    - The medium is **air** when it has no name and no values at all (or is
      named ``air``); another library name can be given as ``[medium] name``.
      Its temperature defaults to the liquid's, or **20 °C** when neither is
      given. Only its viscosity and density are filled: a surface tension
      belongs to the liquid's interface with it. Library surface tensions
      are against air; for drops in another liquid give the interfacial
      tension explicitly.

    Parameters
    ----------
    experiment : Experiment
        As returned by :func:`dropkin.experiment.load_experiment`.
    user_library : LiquidLibrary or path, optional
        A user's library, searched before the built-in liquids.

    Returns
    -------
    Experiment
        A new record; `experiment` is unchanged.

    Raises
    ------
    ExperimentError
        For an unknown liquid name (the message lists the names that exist),
        a temperature outside a correlation's range, or a missing or
        out-of-range glycerol mass fraction.

    Examples
    --------
    >>> from dropkin.experiment import experiment_from_toml
    >>> exp = experiment_from_toml('[liquid]\\nname = "water"\\nviscosity = "1.1 mPa*s"')
    >>> full = resolve_fluids(exp)
    >>> full.liquid.viscosity, round(full.liquid.density, 1), full.medium.name
    (0.0011, 998.2, 'air')
    """
    library = _as_library(user_library)
    try:
        return _resolve(experiment, library)
    except ExperimentError as exc:  # the values came from the experiment file: name it
        raise with_path(exc, getattr(experiment, "path", None)) from None


def _resolve(experiment, library):
    liquid = experiment.liquid
    if liquid.name is not None and any(getattr(liquid, n) is None for n in _FILLED):
        temperature = DEFAULT_TEMPERATURE if liquid.temperature is None else liquid.temperature
        properties = _properties(
            liquid.name, temperature, liquid.glycerol_mass_fraction, library, section="liquid"
        )
        liquid = _fill(liquid, properties, _FILLED)
    medium = experiment.medium
    untouched = medium.name is None and all(
        getattr(medium, n) is None for n in (*_FILLED, "temperature")
    )
    name = "air" if untouched else medium.name
    if name is not None and (medium.viscosity is None or medium.density is None):
        if medium.temperature is not None:
            temperature = medium.temperature
        elif liquid.temperature is not None:
            temperature = liquid.temperature
        else:
            temperature = DEFAULT_TEMPERATURE
        properties = _properties(
            name, temperature, medium.glycerol_mass_fraction, library, section="medium"
        )
        medium = _fill(
            dataclasses.replace(medium, name=name), properties, ("viscosity", "density")
        )
    return dataclasses.replace(experiment, liquid=liquid, medium=medium)
