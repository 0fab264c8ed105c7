"""A user's own liquids, from a TOML file in the form of ``experiment.toml``.

Examples
--------
>>> library = liquid_library_from_toml('''
... [liquid."my-oil"]
... description = "oil as measured on the bench"
... surface_tension = "20 mN/m"
... viscosity = "50 mPa*s"
... density = "960 kg/m^3"
... temperature_min = "15 degC"
... temperature_max = "30 degC"
... uncertainty = { viscosity = "3 %", density = 0.001 }
... ''')
>>> oil = library.entries["my-oil"]
>>> oil.viscosity, round(oil.temperature_max - 273.15, 2)
(0.05, 30.0)
>>> dict(oil.uncertainties)
{'viscosity': 0.03, 'density': 0.001}
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType

from .._toml import load_toml
from ..errors import ExperimentError
from ..units import parse_relative, parse_si

__all__ = ["UserLiquid", "LiquidLibrary", "liquid_library_from_toml", "load_liquid_library"]


@dataclass(frozen=True)
class UserLiquid:
    """One liquid of a user's library; its values hold at every temperature of its range.

    Attributes
    ----------
    name : str
        The name as written in the file (lookup ignores case).
    description : str
        What it is, in the user's words (may be empty).
    surface_tension : float or None
        Surface tension (N/m); None for a fluid used only as a medium.
    viscosity : float
        Dynamic viscosity (Pa s).
    density : float
        Density (kg/m^3).
    temperature_min, temperature_max : float or None
        Range (K) in which the values may be used; None when the file gives
        none, and then any temperature is accepted.
    source : str
        Where the values come from, in the user's words (may be empty).
    uncertainties : Mapping[str, float]
        Relative standard uncertainties the file states (``uncertainty``
        table: ``surface_tension``, ``viscosity``, ``density``); a value
        without one gets the analysis' stated default.
    """

    name: str
    description: str
    surface_tension: float | None
    viscosity: float
    density: float
    temperature_min: float | None = None
    temperature_max: float | None = None
    source: str = ""
    uncertainties: Mapping[str, float] = field(default_factory=lambda: MappingProxyType({}))


@dataclass(frozen=True)
class LiquidLibrary:
    """A user's liquid library, as read from a file.

    Attributes
    ----------
    entries : Mapping[str, UserLiquid]
        The liquids by lower-case name (read-only).
    path : str or None
        The file it came from.
    """

    entries: Mapping[str, UserLiquid] = field(default_factory=lambda: MappingProxyType({}))
    path: str | None = None


_QUANTITY_KEYS = {
    "surface_tension": "N/m",
    "viscosity": "Pa*s",
    "density": "kg/m^3",
    "temperature_min": "K",
    "temperature_max": "K",
}
_TEXT_KEYS = ("description", "source")
_UNCERTAIN = ("surface_tension", "viscosity", "density")
_REQUIRED = ("viscosity", "density")


def _positive(text, unit, *, key, path) -> float:
    value = parse_si(text, unit, key=key, path=path)
    if not (math.isfinite(value) and value > 0):
        raise ExperimentError(
            "must be positive",
            key=key,
            value=text,
            path=path,
            expected=f"a value above 0 {unit}" if unit != "K" else "a temperature above 0 K",
        )
    return value


def _entry(name: str, table, *, path) -> UserLiquid:
    where = f'liquid."{name}"'
    if not isinstance(table, dict):
        raise ExperimentError("must be a table", key=where, path=path)
    known = (*_QUANTITY_KEYS, *_TEXT_KEYS, "uncertainty")
    for key in table:
        if key not in known:
            raise ExperimentError(
                "unknown key",
                key=f"{where}.{key}",
                path=path,
                expected=f"one of {', '.join(sorted(known))}",
            )
    for key in _REQUIRED:
        if key not in table:
            raise ExperimentError(
                "is missing",
                key=f"{where}.{key}",
                path=path,
                expected=f"a value with a unit of {_QUANTITY_KEYS[key]}",
            )
    values: dict[str, object] = {}
    for key, unit in _QUANTITY_KEYS.items():
        if key in table:
            values[key] = _positive(table[key], unit, key=f"{where}.{key}", path=path)
    for key in _TEXT_KEYS:
        text = table.get(key, "")
        if not isinstance(text, str):
            raise ExperimentError("must be a text", key=f"{where}.{key}", value=text, path=path)
        values[key] = text.strip()
    low, high = values.get("temperature_min"), values.get("temperature_max")
    if (low is None) != (high is None):
        raise ExperimentError(
            "needs both temperature_min and temperature_max, or neither", key=where, path=path
        )
    if low is not None and not low < high:
        raise ExperimentError(
            "temperature_min must lie below temperature_max",
            key=f"{where}.temperature_min",
            value=table["temperature_min"],
            path=path,
        )
    values.setdefault("surface_tension", None)
    values["uncertainties"] = _uncertainties(table.get("uncertainty", {}), where, path)
    return UserLiquid(name=name, **values)


def _uncertainties(table, where, path):
    """The entry's ``uncertainty`` table: property -> relative standard uncertainty."""
    key = f"{where}.uncertainty"
    if not isinstance(table, dict):
        raise ExperimentError(
            "must be a table", key=key, path=path, expected="e.g. { viscosity = '3 %' }"
        )
    out = {}
    for name, value in table.items():
        if name not in _UNCERTAIN:
            raise ExperimentError(
                "unknown key",
                key=f"{key}.{name}",
                path=path,
                expected=f"one of {', '.join(_UNCERTAIN)}",
            )
        out[name] = parse_relative(value, key=f"{key}.{name}", path=path)
    return MappingProxyType(out)


def liquid_library_from_toml(text: str, *, path=None) -> LiquidLibrary:
    """Parse a user's liquid library.

    The file holds one table per liquid, ``[liquid."NAME"]``, with
    ``viscosity`` and ``density`` (required), ``surface_tension``
    (optional, e.g. for a medium), an optional range ``temperature_min`` /
    ``temperature_max``, optional ``description`` and ``source`` texts, and
    an optional ``uncertainty`` table of relative standard uncertainties
    (``{ viscosity = "3 %" }``; numbers such as 0.03 too).
    Values with a unit are strings, as in ``experiment.toml``. A user entry
    takes precedence over a built-in liquid of the same name (so measured
    values can replace a nominal silicone-oil grade).

    Parameters
    ----------
    text : str
        The TOML text.
    path : str or os.PathLike, optional
        Where it came from, for error messages.

    Raises
    ------
    ExperimentError
        For malformed TOML, unknown keys, missing values, bare numbers, wrong
        dimensions or a reversed temperature range.
    """
    document = load_toml(text, path=path)
    extra = sorted(set(document) - {"liquid"})
    if extra:
        raise ExperimentError(
            "unknown section", key=extra[0], path=path, expected='tables [liquid."NAME"]'
        )
    tables = document.get("liquid", {})
    if not isinstance(tables, dict):
        raise ExperimentError("must be a table of liquids", key="liquid", path=path)
    entries: dict[str, UserLiquid] = {}
    for name, table in tables.items():
        if name.strip().lower() in entries:
            raise ExperimentError("appears twice (names ignore case)", key=name, path=path)
        entries[name.strip().lower()] = _entry(name.strip(), table, path=path)
    return LiquidLibrary(
        entries=MappingProxyType(entries), path=None if path is None else str(path)
    )


def load_liquid_library(path) -> LiquidLibrary:
    """Read a user's liquid library from a file (see :func:`liquid_library_from_toml`).

    Raises
    ------
    ExperimentError
        If the file cannot be read or is not a valid library.
    """
    path = Path(path)
    try:
        text = path.read_bytes().decode("utf-8")
    except UnicodeDecodeError:
        raise ExperimentError("is not UTF-8 text", path=path) from None
    except OSError as exc:
        raise ExperimentError(f"cannot be read ({exc.strerror or exc})", path=path) from None
    return liquid_library_from_toml(text, path=path)
