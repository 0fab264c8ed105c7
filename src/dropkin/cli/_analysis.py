"""``dropkin fit`` and ``dropkin analyze``: the regime verdict, and the whole job."""

from __future__ import annotations

import click

from ..errors import DropkinError, MeasurementError
from ._console import detail, detail_experiment, detail_settings, progress_bar
from ._options import (
    analysis_settings,
    fit_options,
    measure_options,
    options_named,
    output_option,
    overwrite_option,
    plot_formats_option,
    recording_overrides,
    sample_options,
    sample_overrides,
)
from ._recording import MEASURE_SETTINGS, measure_summary

__all__ = ["fit_command", "analyze_command"]

#: The settings of an analysis that fitting uses (``-v`` shows them).
FIT_SETTINGS = ("t0", "seed", "bootstrap", "initial_radius")


def _report_verdict(verdict, series, radius_csv, out) -> None:
    """Print the verdict, the time origin and the files written; without a
    verdict, the files and then the reason, as the error line (exit code 1)."""
    from ..report import origin_sentence, time_origin
    from ..scaling import format_verdict

    written = [out / "fit.json", out / "plots", out / "report.html"]
    if not verdict:  # said once, as the error line (format_verdict would repeat it)
        click.echo("wrote " + ", ".join(map(str, written)) + " (the report says why)")
        raise DropkinError(verdict.reason, path=radius_csv)
    click.echo(format_verdict(verdict))
    click.echo(origin_sentence(time_origin(series, verdict)))
    click.echo("wrote " + ", ".join(map(str, written)))


@click.command("fit")
@click.argument("radius_csv", type=click.Path(exists=True, dir_okay=False, path_type=str))
@output_option("Folder for fit.json, plots/ and report.html.")
@overwrite_option
@click.option(
    "--experiment",
    type=click.Path(exists=True, dir_okay=False, path_type=str),
    help="Experiment file (default: the one named in measure.json).",
)
@sample_options
@fit_options
@plot_formats_option
@click.pass_context
def fit_command(
    ctx,
    radius_csv,
    out,
    overwrite,
    experiment,
    t0,
    seed,
    bootstrap,
    initial_radius,
    plot_formats,
    **sample,
):
    """Fit the scaling regimes to RADIUS_CSV (from dropkin measure) and give the
    verdict: fit.json, plots/ and a self-contained report.html, as analyze.

    The sample is the experiment file measure.json names, with the sample
    options the measurement was given; options given here override both.
    Into the folder of RADIUS_CSV, the measurement's files are kept and an
    earlier fit's replaced whole.
    """
    import os
    from pathlib import Path

    from ..pipeline._outputs import FIT_OUTPUTS, MEASURE_OUTPUTS, output_folder
    from ..pipeline._steps import fit_into

    fit = {"t0": t0, "seed": seed, "bootstrap": bootstrap, "initial_radius": initial_radius}
    detail(ctx, "settings: " + ", ".join(f"{k} = {v!r}" for k, v in fit.items()))
    overrides = sample_overrides(**sample)
    own = Path(os.path.abspath(out)).resolve() == Path(radius_csv).resolve().parent
    # into its own folder: the measurement is kept, an earlier fit of it replaced
    keep = (*MEASURE_OUTPUTS, Path(radius_csv).name) if own else ()
    folder = {"overwrite": overwrite, "keep": keep, "replaced": FIT_OUTPUTS if own else ()}
    with options_named(overrides), output_folder(out, **folder) as stage:
        verdict, _, measurement = fit_into(
            radius_csv,
            stage,
            experiment=experiment,
            overrides=overrides,
            liquids=sample["liquids_file"],
            plot_formats=plot_formats,
            published_dir=Path(out),
            **fit,
        )
    detail_experiment(ctx, measurement.experiment.path)
    _report_verdict(verdict, measurement.series, radius_csv, Path(out))


@click.command("analyze")
@click.argument("source", type=click.Path(exists=True, path_type=str))
@measure_options
@sample_options
@fit_options
@plot_formats_option
@click.pass_context
def analyze_command(ctx, source, out, **options):
    """Measure SOURCE, then fit the regimes: radius.csv, measure.json, fit.json,
    plots/ and a self-contained report.html."""
    from pathlib import Path

    from ..pipeline._outputs import claim_output_folder, output_folder
    from ..pipeline._steps import analyze_into

    out = Path(out)
    claim_output_folder(out, overwrite=options["overwrite"])  # refused before any reading
    settings = analysis_settings(**options)
    detail_settings(ctx, settings, MEASURE_SETTINGS + FIT_SETTINGS)
    # The frame count is known only once the recording is open; the bar then
    # counts frames (the fit and the report take a few seconds more).
    overrides = {**recording_overrides(**options), **sample_overrides(**options)}
    # the frames measured are published even when no contact is seen
    publish = {"overwrite": options["overwrite"], "publish_on": (MeasurementError,)}
    with (
        progress_bar(ctx, "measuring", 0) as progress,
        options_named(overrides),
        output_folder(out, **publish) as stage,
    ):
        try:
            result = analyze_into(
                source,
                stage,
                settings,
                experiment=options["experiment"],
                overrides=overrides,
                liquids=options["liquids_file"],
                progress=progress,
                published_dir=out,
            )
        except MeasurementError as exc:
            if (stage / "radius.csv").is_file():
                raise MeasurementError(
                    f"{exc.message}; radius series written to {out}", path=exc.path
                ) from None
            raise
    detail_experiment(ctx, result.series.provenance.get("experiment_file"))
    detail(ctx, f"contact: {result.contact_method}")
    click.echo(measure_summary(result.series, out))
    _report_verdict(result.verdict, result.series, out / "radius.csv", out)
