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
    options_named,
    recording_overrides,
    sample_options,
    sample_overrides,
)

__all__ = ["info_command", "measure_command", "measure_summary", "MEASURE_SETTINGS"]

#: The settings of an analysis that measuring uses (``-v`` shows them).
MEASURE_SETTINGS = ("roi", "threshold", "background", "jobs", "chunk_size", "overlays")


@click.command("info")
@click.argument("source", type=click.Path(exists=True, path_type=str))
@experiment_options
@sample_options
@click.option("--json", "as_json", is_flag=True, help="Print the description as JSON.")
@click.pass_context
def info_command(ctx, source, as_json, **options):
    """Describe the recording SOURCE (a folder of frames, a TIFF stack, a video, a
    .cine file or a .mraw recording with its .cih/.cihx header).

    Without a frame rate it still describes the frames and says how to give one.
    """
    from ..liquids import resolve_fluids
    from ..recording._describe import describe, format_description

    overrides = {**recording_overrides(**options), **sample_overrides(**options)}
    with options_named(overrides):
        exp, rec, missing = _open_for_info(source, options["experiment"], overrides)
        detail_experiment(ctx, exp.path)
        description = describe(rec, resolve_fluids(exp, user_library=options["liquids_file"]))
    if missing is not None:
        description.update(
            frame_rate_hz=None,
            frame_rate_origin=None,
            frame_interval_s=None,
            duration_s=None,
            frame_rate_missing=missing,
        )
        if "trigger_time_s" in description:
            description["trigger_time_s"] = None  # it was on the placeholder's time axis
    if as_json:
        click.echo(json.dumps(description, indent=2))
    else:
        click.echo(format_description(description))


def _open_for_info(source, experiment, overrides):
    """(experiment, recording, why the frame rate is missing or None).

    A recording with no frame rate (none given, none in the file) is opened
    on a placeholder rate of 1 Hz, only to read what its frames are; the
    caller drops every time from the description.
    """
    from ..errors import RecordingError
    from ..pipeline._steps import open_source

    try:
        exp, rec = open_source(source, experiment=experiment, overrides=overrides)
        return exp, rec, None
    except RecordingError as exc:
        if exc.key != "recording.frame_rate" or overrides.get("recording.frame_rate"):
            raise
        missing = exc.message.removeprefix("no frame rate: ")
    placeholder = {**overrides, "recording.frame_rate": 1.0}
    exp, rec = open_source(source, experiment=experiment, overrides=placeholder)
    return exp, rec, missing


def measure_summary(series, out) -> str:
    """One line: frames per status, the measured contact instant, where the series
    went, and a lossy source's caution."""
    from ..report._origin import time_text

    counts = {s: series.status.count(s) for s in dict.fromkeys(series.status)}
    summary = ", ".join(f"{n} {s}" for s, n in counts.items() if n)
    lossy = series.details.get("lossy_source") or {}
    caution = (
        f"; lossy source ({lossy['compression']}): sub-pixel accuracy is not expected"
        if lossy.get("compression")
        else ""
    )
    disagreement = series.details.get("contact_disagreement")
    return (
        f"{len(series)} frames: {summary}; measured contact t_c = "
        f"{time_text(series.contact_time, 4)} ± {time_text(series.contact_time_err, 2)} "
        f"after the first frame (radius.csv's since_contact_s counts from it); "
        f"wrote {out / 'radius.csv'}{caution}"
        + (f"\nwarning: the contact signals disagree: {disagreement}" if disagreement else "")
    )


@click.command("measure")
@click.argument("source", type=click.Path(exists=True, path_type=str))
@measure_options
@sample_options
@click.pass_context
def measure_command(ctx, source, out, **options):
    """Measure the neck or contact radius in every frame of SOURCE.

    The sample options are checked and recorded in measure.json, for
    `dropkin fit` (measuring itself does not use the liquid).
    """
    from pathlib import Path

    from ..liquids import resolve_fluids
    from ..pipeline._outputs import claim_output_folder, output_folder
    from ..pipeline._steps import measure_into, open_source

    claim_output_folder(out, overwrite=options["overwrite"])  # refused before any reading
    sample = sample_overrides(**options)
    liquids = options["liquids_file"]
    overrides = {**recording_overrides(**options), **sample}
    with options_named(overrides):
        exp, rec = open_source(source, experiment=options["experiment"], overrides=overrides)
        if sample or liquids:  # a bad liquid fails now, not at the fit
            resolve_fluids(exp, user_library=liquids)
    out = Path(out)
    settings = analysis_settings(**options)
    detail_experiment(ctx, exp.path)
    detail_settings(ctx, settings, MEASURE_SETTINGS)
    with (
        output_folder(out, overwrite=options["overwrite"]) as stage,
        progress_bar(ctx, "measuring", len(rec)) as progress,
    ):
        series, method = measure_into(
            stage,
            exp,
            rec,
            settings,
            progress=progress,
            sample=sample,
            liquids=liquids,
            published_dir=out,
        )
    if series.contact_time is None:
        raise MeasurementError(f"{method}; radius series written to {out}", path=rec.path)
    detail(ctx, f"contact: {method}")
    click.echo(measure_summary(series, out))
