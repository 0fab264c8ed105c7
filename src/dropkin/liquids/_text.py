"""The liquid library as text and as JSON: ``dropkin liquids``.

The JSON forms hold SI values with the unit in each key; the text forms are
one line per liquid (the catalogue) or per property (one liquid).
"""

from __future__ import annotations

from ._lookup import celsius_text

__all__ = ["catalogue_to_dicts", "format_catalogue", "properties_to_dict", "format_properties"]


def catalogue_to_dicts(entries) -> list[dict]:
    """The entries of :func:`~dropkin.liquids.liquid_catalogue` as JSON-ready dicts."""
    return [
        {
            "name": e.name,
            "description": e.description,
            "temperature_min_k": e.temperature_min,
            "temperature_max_k": e.temperature_max,
            "needs_glycerol_mass_fraction": e.needs_glycerol_mass_fraction,
            "sources": dict(e.sources),
            "relative_uncertainties": dict(e.uncertainties),
            "origin": e.origin,
        }
        for e in entries
    ]


def format_catalogue(entries) -> str:
    """One line per liquid: name, validity range in °C, description."""
    width = max(len(e.name) for e in entries)
    lines = []
    for e in entries:
        if e.temperature_min is None:
            span = "any temperature"
        else:
            span = f"{celsius_text(e.temperature_min)} to {celsius_text(e.temperature_max)}"
        lines.append(f"{e.name.ljust(width)}  {span:<20}  {e.description}")
    return "\n".join(lines)


def properties_to_dict(props) -> dict:
    """A :class:`~dropkin.liquids.LiquidProperties` as a JSON-ready dict (SI)."""
    return {
        "name": props.name,
        "temperature_k": props.temperature,
        "glycerol_mass_fraction": props.glycerol_mass_fraction,
        "surface_tension_n_per_m": props.surface_tension,
        "viscosity_pa_s": props.viscosity,
        "density_kg_per_m3": props.density,
        "kinematic_viscosity_m2_per_s": props.kinematic_viscosity,
        "sources": dict(props.sources),
        "relative_uncertainties": dict(props.uncertainties),
    }


def format_properties(props, *, assumed_temperature: bool = False) -> str:
    """A heading line, then one line per property with its unit and source.

    Parameters
    ----------
    props : LiquidProperties
    assumed_temperature : bool
        The temperature was not given (the heading says 20 °C was assumed).
    """
    what = props.name
    if props.glycerol_mass_fraction is not None:
        what += f", glycerol mass fraction {props.glycerol_mass_fraction:g}"
    note = " (not given: 20 °C assumed)" if assumed_temperature else ""
    lines = [f"{what} at {celsius_text(props.temperature)}{note}"]
    sigma = "—" if props.surface_tension is None else f"{props.surface_tension * 1e3:.4g} mN/m"
    rows = (
        ("surface tension", sigma, "surface_tension"),
        ("viscosity", f"{props.viscosity * 1e3:.4g} mPa s", "viscosity"),
        ("density", f"{props.density:.5g} kg/m^3", "density"),
        ("kinematic viscosity", f"{props.kinematic_viscosity * 1e6:.4g} mm^2/s", None),
    )
    for label, value, key in rows:
        u = props.uncertainties.get(key) if key else None
        spread = f"±{u * 100:.2g} %" if u is not None and value != "—" else ""
        source_text = props.sources.get(key, "") if key else ""
        lines.append(f"  {label:<20} {value:<16} {spread:<8} {source_text}".rstrip())
    return "\n".join(lines)
