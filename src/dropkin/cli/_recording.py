"""``dropkin info`` and ``dropkin measure``: what a recording holds, its radius in every frame."""

from __future__ import annotations

import json

import click

from ..errors import MeasurementError
from ._console import detail, detail_experiment, detail_settings, progress_bar
from ._options import (
    analysis_settings,
    experiment_options,
    measure_options,
    recording_overrides,
)

__all__ = ["info_command", "measure_command", "measure_summary", "MEASURE_SETTINGS"]

#: The settings of an analysis that measuring uses (``-v`` shows them).
MEASURE_SETTINGS = ("roi", "threshold", "background", "jobs", "chunk_size", "overlays")


@click.command("info")
@click.argument("source", type=click.Path(exists=True, path_type=str))
@experiment_options
@click.option("--json", "as_json", is_flag=True, help="Print the description as JSON.")
@click.pass_context
def info_command(ctx, source, as_json, **options):
    """Describe the recording SOURCE (a folder of frames, a TIFF stack, a video, a
    .cine file or a .mraw recording with its .cih/.cihx header)."""
    from ..liquids import resolve_fluids
    from ..pipeline._steps import open_source
    from ..recording._describe import describe, format_description

    exp, rec = open_source(
        source, experiment=options["experiment"], overrides=recording_overrides(**options)
    )
    detail_experiment(ctx, exp.path)
    description = describe(rec, resolve_fluids(exp))
    if as_json:
        click.echo(json.dumps(description, indent=2))
    else:
        click.echo(format_description(description))


def measure_summary(series, out) -> str:
    """One line: frames per status, the measured contact instant, where the series went."""
    from ..report._origin import time_text

    counts = {s: series.status.count(s) for s in dict.fromkeys(series.status)}
    summary = ", ".join(f"{n} {s}" for s, n in counts.items() if n)
    return (
        f"{len(series)} frames: {summary}; measured contact t_c = "
        f"{time_text(series.contact_time, 4)} ± {time_text(series.contact_time_err, 2)} "
        f"after the first frame (radius.csv's since_contact_s counts from it); "
        f"wrote {out / 'radius.csv'}"
    )


@click.command("measure")
@click.argument("source", type=click.Path(exists=True, path_type=str))
@measure_options
@click.pass_context
def measure_command(ctx, source, out, **options):
    """Measure the neck or contact radius in every frame of SOURCE."""
    from pathlib import Path

    from ..pipeline._steps import measure_into, open_source

    exp, rec = open_source(
        source, experiment=options["experiment"], overrides=recording_overrides(**options)
    )
    out = Path(out)
    settings = analysis_settings(**options)
    detail_experiment(ctx, exp.path)
    detail_settings(ctx, settings, MEASURE_SETTINGS)
    with progress_bar(ctx, "measuring", len(rec)) as progress:
        series, method = measure_into(out, exp, rec, settings, progress=progress)
    if series.contact_time is None:
        raise MeasurementError(f"{method}; radius series written to {out}", path=rec.path)
    detail(ctx, f"contact: {method}")
    click.echo(measure_summary(series, out))
