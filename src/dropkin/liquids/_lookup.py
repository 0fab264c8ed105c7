"""Looking a liquid up: its name, what the library knows of it, its values at a temperature.

Built-in liquids (:mod:`._builtin`) and a user's library (:mod:`._user`) are
searched together, the user's first; a temperature outside a liquid's range
and a missing or misplaced glycerol mass fraction are refused with the
range or the rule in the message.

Examples
--------
>>> water = liquid_properties("water", 293.15)
>>> round(water.surface_tension * 1e3, 2), round(water.density, 1)
(72.74, 998.2)
"""

from __future__ import annotations

import math
import os
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

from ..errors import ExperimentError
from ._builtin import BUILT_IN, ZERO_CELSIUS
from ._user import LiquidLibrary, UserLiquid, load_liquid_library

__all__ = [
    "LiquidProperties",
    "LiquidInfo",
    "liquid_names",
    "liquid_info",
    "liquid_catalogue",
    "liquid_properties",
    "as_library",
    "properties_of",
]


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
    uncertainties : Mapping[str, float]
        For the same keys: the relative standard uncertainty (k = 1) the
        source states, or the library judged and says so in the source text;
        a user liquid's as its file states them (absent where it states none).
    """

    name: str
    temperature: float
    surface_tension: float | None
    viscosity: float
    density: float
    glycerol_mass_fraction: float | None = None
    sources: Mapping[str, str] = field(default_factory=lambda: MappingProxyType({}))
    uncertainties: Mapping[str, float] = field(default_factory=lambda: MappingProxyType({}))

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
    uncertainties : Mapping[str, float]
        The relative standard uncertainty of each property (read-only), as
        for :attr:`LiquidProperties.uncertainties`.
    origin : str
        ``"built-in"``, or the path of the user's library file.
    """

    name: str
    description: str
    temperature_min: float | None
    temperature_max: float | None
    needs_glycerol_mass_fraction: bool
    sources: Mapping[str, str]
    uncertainties: Mapping[str, float] = field(default_factory=lambda: MappingProxyType({}))
    origin: str = "built-in"


def as_library(user_library) -> LiquidLibrary | None:
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
    library = as_library(user_library)
    built_in = sorted(BUILT_IN)
    user = [] if library is None else sorted(e.name for e in library.entries.values())
    return (*[n for n in built_in if n.lower() not in _user_keys(library)], *user)


def _user_keys(library) -> set[str]:
    return set() if library is None else set(library.entries)


def _unknown(name, *, library, key) -> ExperimentError:
    """The error for a name the library does not know: the close names first, then all."""
    import difflib

    names = liquid_names(user_library=library)
    by_lower = {n.lower(): n for n in names}
    wanted = name.strip().lower() if isinstance(name, str) else ""
    close = [by_lower[n] for n in difflib.get_close_matches(wanted, by_lower, n=3, cutoff=0.6)]
    message = "unknown liquid" + (f", did you mean {' or '.join(close)}?" if close else "")
    return ExperimentError(message, key=key, value=name, expected="one of " + ", ".join(names))


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
    library = as_library(user_library)
    built_in, user = _lookup(name, library, key="liquid.name")
    if user is not None:
        return LiquidInfo(
            name=user.name,
            description=user.description,
            temperature_min=user.temperature_min,
            temperature_max=user.temperature_max,
            needs_glycerol_mass_fraction=False,
            sources=MappingProxyType(_user_sources(user)),
            uncertainties=MappingProxyType(dict(user.uncertainties)),
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
        uncertainties=MappingProxyType(dict(entry.uncertainties)),
    )


def liquid_catalogue(*, user_library=None) -> tuple[LiquidInfo, ...]:
    """:func:`liquid_info` for every name of :func:`liquid_names`."""
    library = as_library(user_library)
    return tuple(liquid_info(n, user_library=library) for n in liquid_names(user_library=library))


def _user_sources(user: UserLiquid) -> dict[str, str]:
    text = user.source or "user library"
    return {
        "surface_tension": text if user.surface_tension is not None else "not given",
        "viscosity": text,
        "density": text,
    }


def celsius_text(kelvin: float) -> str:
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
            f"{name} at {celsius_text(temperature)} is outside the range of its values",
            key=key,
            expected=f"a temperature from {celsius_text(low)} to {celsius_text(high)}",
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


def properties_of(name, temperature, fraction, library, *, section) -> LiquidProperties:
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
            uncertainties=MappingProxyType(dict(user.uncertainties)),
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
        uncertainties=MappingProxyType(dict(entry.uncertainties)),
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
    library = as_library(user_library)
    return properties_of(name, temperature, glycerol_mass_fraction, library, section="liquid")
