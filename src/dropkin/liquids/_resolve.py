"""An experiment's liquid and medium completed from the library (values in the file win).

Examples
--------
>>> from dropkin.experiment import experiment_from_toml
>>> full = resolve_fluids(experiment_from_toml('[liquid]\\nname = "glycerol"'))
>>> full.liquid.temperature, full.medium.name
(293.15, 'air')
"""

from __future__ import annotations

import dataclasses

from ..errors import ExperimentError, with_path
from ._lookup import as_library, properties_of

__all__ = ["DEFAULT_TEMPERATURE", "resolve_fluids", "stated_uncertainties"]

#: Temperature assumed when an experiment names a liquid but gives none (20 °C).
DEFAULT_TEMPERATURE = 293.15


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
    library = as_library(user_library)
    try:
        return _resolve(experiment, library)
    except ExperimentError as exc:  # the values came from the experiment file: name it
        raise with_path(exc, getattr(experiment, "path", None)) from None


def _library_values(experiment, library):
    """(liquid's, medium's) LiquidProperties where the library fills a value, else None."""
    liquid, medium = experiment.liquid, experiment.medium
    liquid_props = medium_props = None
    if liquid.name is not None and any(getattr(liquid, n) is None for n in _FILLED):
        temperature = DEFAULT_TEMPERATURE if liquid.temperature is None else liquid.temperature
        liquid_props = properties_of(
            liquid.name, temperature, liquid.glycerol_mass_fraction, library, section="liquid"
        )
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
        medium_props = properties_of(
            name, temperature, medium.glycerol_mass_fraction, library, section="medium"
        )
    return liquid_props, medium_props


def _resolve(experiment, library):
    liquid_props, medium_props = _library_values(experiment, library)
    liquid, medium = experiment.liquid, experiment.medium
    if liquid_props is not None:
        liquid = _fill(liquid, liquid_props, _FILLED)
    if medium_props is not None:
        medium = _fill(
            dataclasses.replace(medium, name=medium.name or "air"), medium_props, _MEDIUM_FILLED
        )
    return dataclasses.replace(experiment, liquid=liquid, medium=medium)


_MEDIUM_FILLED = ("viscosity", "density")
# (name in the analysis, experiment section, value, key of the [uncertainty] section)
_UNCERTAIN = (
    ("surface_tension", "liquid", "surface_tension", "surface_tension"),
    ("viscosity", "liquid", "viscosity", "viscosity"),
    ("density", "liquid", "density", "density"),
    ("outer_viscosity", "medium", "viscosity", "medium_viscosity"),
    ("outer_density", "medium", "density", "medium_density"),
)


def stated_uncertainties(experiment, *, user_library=None) -> dict[str, tuple[float, str]]:
    """The relative standard uncertainties stated for an experiment's values, and by whom.

    For each of the liquid's surface tension, viscosity and density, the
    medium's viscosity and density (``outer_viscosity``, ``outer_density``,
    the names :func:`dropkin.scaling.analyze_series` uses) and the drop
    ``radius``: the experiment file's ``[uncertainty]`` value when it gives
    one; else, for a value the library fills in, the library's stated
    uncertainty. A value given in the file without an uncertainty has none
    here: the analysis then uses its stated default.

    Parameters
    ----------
    experiment : Experiment
        As read from the file, before :func:`resolve_fluids`.
    user_library : LiquidLibrary or path, optional

    Returns
    -------
    dict
        name -> (relative uncertainty, where it comes from).

    Examples
    --------
    >>> from dropkin.experiment import experiment_from_toml
    >>> exp = experiment_from_toml('[liquid]\\nname = "water"\\n[uncertainty]\\nradius = "1 %"')
    >>> stated = stated_uncertainties(exp)
    >>> stated["viscosity"][0], stated["radius"]
    (0.01, (0.01, 'experiment file, uncertainty.radius'))
    """
    library = as_library(user_library)
    try:
        props = dict(zip(("liquid", "medium"), _library_values(experiment, library), strict=True))
    except ExperimentError as exc:
        raise with_path(exc, getattr(experiment, "path", None)) from None
    out = {}
    for name, section, value, key in _UNCERTAIN:
        given = getattr(experiment.uncertainty, key)
        library_props = props[section]
        if given is not None:
            out[name] = (given, f"experiment file, uncertainty.{key}")
        elif getattr(getattr(experiment, section), value) is None and library_props is not None:
            u = library_props.uncertainties.get(value)
            if u is not None:
                source = library_props.sources.get(value, "")
                out[name] = (u, f"liquid library ({library_props.name}): {source}")
    if experiment.uncertainty.radius is not None:
        out["radius"] = (experiment.uncertainty.radius, "experiment file, uncertainty.radius")
    return out
