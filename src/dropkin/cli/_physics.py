"""``dropkin predict`` and ``dropkin liquids``: what a sample should show; the liquids."""

from __future__ import annotations

import json

import click

from ._options import FINITE_FLOAT, positive

__all__ = ["predict_command", "liquids_command"]

#: The options of ``predict`` that describe the sample, and the experiment key each sets.
_SAMPLE_KEYS = {
    "liquid": "liquid.name",
    "temperature": "liquid.temperature",
    "glycerol_mass_fraction": "liquid.glycerol_mass_fraction",
    "surface_tension": "liquid.surface_tension",
    "viscosity": "liquid.viscosity",
    "density": "liquid.density",
    "medium": "medium.name",
    "outer_viscosity": "medium.viscosity",
    "outer_density": "medium.density",
    "drop_radius": "drops.radius",
    "frame_rate": "recording.frame_rate",
    "pixel_size": "recording.pixel_size",
    "view": "setup.view",
}


@click.command("predict")
@click.argument("source", required=False, type=click.Path(exists=True, path_type=str))
@click.option(
    "--experiment",
    type=click.Path(dir_okay=False, path_type=str),
    help="Experiment file (default: the one found beside SOURCE).",
)
@click.option(
    "--geometry",
    type=click.Choice(["coalescence", "sessile-coalescence", "spreading"]),
    help="What is filmed (default: the experiment file's, else coalescence).",
)
@click.option("--view", type=click.Choice(["side", "bottom"]), help="Camera view.")
@click.option("--liquid", help="Library name of the drops' liquid (see `dropkin liquids`).")
@click.option("--medium", help="Library name of the surrounding fluid (default air).")
@click.option("--temperature", type=positive("K"), help='e.g. "21 degC" (default 20 °C).')
@click.option("--glycerol-mass-fraction", type=FINITE_FLOAT, help="For glycerol-water, 0 to 1.")
@click.option("--surface-tension", type=positive("N/m"), help='e.g. "63 mN/m".')
@click.option("--viscosity", type=positive("Pa*s"), help='e.g. "110 mPa*s".')
@click.option("--density", type=positive("kg/m^3"), help='e.g. "1220 kg/m^3".')
@click.option("--drop-radius", type=positive("m"), help='e.g. "1 mm".')
@click.option("--outer-viscosity", type=positive("Pa*s"), help="Surrounding fluid.")
@click.option("--outer-density", type=positive("kg/m^3"), help="Surrounding fluid.")
@click.option(
    "--contact-angle", type=FINITE_FLOAT, help="Contact angle on the substrate (degrees)."
)
@click.option("--frame-rate", type=positive("Hz"), help="Your camera's, to check it.")
@click.option("--pixel-size", type=positive("m"), help="Your optics', to check them.")
@click.option(
    "--liquids",
    "liquids_file",
    type=click.Path(exists=True, dir_okay=False, path_type=str),
    help="Your own liquid library (TOML).",
)
@click.option("--json", "as_json", is_flag=True, help="Print JSON (SI values) instead.")
def predict_command(source, experiment, geometry, contact_angle, liquids_file, as_json, **sample):
    """Which regimes a sample should show, when, and how to record them.

    The sample comes from SOURCE's experiment file, --experiment, or the
    options (which override the file).
    """
    from ..scaling import format_prediction
    from ..scaling.predict._sample import predict_sample, sample_experiment

    overrides = {key: sample[name] for name, key in _SAMPLE_KEYS.items()}
    exp = sample_experiment(source, experiment=experiment, overrides=overrides)
    result = predict_sample(
        exp, geometry=geometry, contact_angle=contact_angle, user_library=liquids_file
    )
    if as_json:
        click.echo(json.dumps(result.to_dict(), indent=2, ensure_ascii=False))
    else:
        click.echo(result.heading())
        click.echo(format_prediction(result.prediction))


@click.command("liquids")
@click.argument("name", required=False)
@click.option("--temperature", type=positive("K"), help='e.g. "25 degC" (default 20 °C).')
@click.option("--glycerol-mass-fraction", type=FINITE_FLOAT, help="For glycerol-water, 0 to 1.")
@click.option(
    "--liquids",
    "liquids_file",
    type=click.Path(exists=True, dir_okay=False, path_type=str),
    help="Your own liquid library (TOML), searched first.",
)
@click.option("--json", "as_json", is_flag=True, help="Print JSON (SI values) instead.")
def liquids_command(name, temperature, glycerol_mass_fraction, liquids_file, as_json):
    """List the liquid library, or show liquid NAME's properties at a temperature."""
    from ..liquids import (
        DEFAULT_TEMPERATURE,
        liquid_catalogue,
        liquid_properties,
        load_liquid_library,
    )
    from ..liquids._text import (
        catalogue_to_dicts,
        format_catalogue,
        format_properties,
        properties_to_dict,
    )

    library = None if liquids_file is None else load_liquid_library(liquids_file)
    if name is None:
        entries = liquid_catalogue(user_library=library)
        text = (
            json.dumps(catalogue_to_dicts(entries), indent=2, ensure_ascii=False)
            if as_json
            else format_catalogue(entries)
        )
        click.echo(text)
        return
    kelvin = DEFAULT_TEMPERATURE if temperature is None else temperature
    props = liquid_properties(
        name, kelvin, glycerol_mass_fraction=glycerol_mass_fraction, user_library=library
    )
    if as_json:
        click.echo(json.dumps(properties_to_dict(props), indent=2, ensure_ascii=False))
    else:
        click.echo(format_properties(props, assumed_temperature=temperature is None))
