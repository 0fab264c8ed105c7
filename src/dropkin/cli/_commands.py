"""The ``dropkin`` command line.

Commands are thin: they parse options, call the library and print. Heavy
imports (numpy, OpenCV, scipy, matplotlib) happen inside the commands, so that
``dropkin --help`` is instant. This is the one place where errors become exit
codes: a :class:`~dropkin.errors.DropkinError` is one line on stderr and exit
code 1; click's usage errors are exit code 2.
"""

from __future__ import annotations

import contextlib
import json
import math
import sys

import click

from .._version import __version__
from ..errors import DropkinError
from ..units import QuantityType

EXIT_INPUT_ERROR = 1
EXIT_BATCH_PARTIAL = 3


def _positive(unit: str) -> QuantityType:
    """A quantity option that must lie above zero; the usage error names the option."""
    return QuantityType(unit, positive=True)


class _FiniteFloat(click.FloatRange):
    """click's FloatRange, refusing NaN and infinity (which its bounds let through)."""

    def __init__(self, min=None, max=None, **kwargs):
        super().__init__(min, max, **kwargs)
        if min is None and max is None:
            self.name = "float"  # help shows FLOAT, without a range

    def convert(self, value, param, ctx):
        number = super().convert(value, param, ctx)
        if not math.isfinite(number):
            self.fail(f"{value!r} is not a finite number.", param, ctx)
        return number

    def _describe_range(self) -> str:
        return "" if self.min is None and self.max is None else super()._describe_range()


FINITE_FLOAT = _FiniteFloat()


class _Group(click.Group):
    """A click group that turns dropkin's errors into one line and exit code 1."""

    def invoke(self, ctx):
        try:
            return super().invoke(ctx)
        except DropkinError as exc:
            click.echo(f"dropkin: error: {exc}", err=True)
            ctx.exit(EXIT_INPUT_ERROR)
        except OSError as exc:  # the machine's fault, not the data's: still one line
            where = f"{exc.filename}: " if getattr(exc, "filename", None) else ""
            click.echo(f"dropkin: error: {where}{exc.strerror or exc}", err=True)
            ctx.exit(EXIT_INPUT_ERROR)


@click.group(cls=_Group, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, "--version", prog_name="dropkin")
@click.option("-v", "--verbose", count=True, help="Say more on stderr (repeat for more).")
@click.option("-q", "--quiet", is_flag=True, help="Say nothing on stderr but errors.")
@click.pass_context
def main(ctx: click.Context, verbose: int, quiet: bool) -> None:
    """Neck and contact radius from high-speed recordings of merging or
    spreading drops, and the scaling regime that governs them."""
    ctx.ensure_object(dict)
    ctx.obj["verbosity"] = -1 if quiet else verbose


def _output_option(help_text: str):
    """The -o/--output folder option, required by every command that writes."""
    return click.option(
        "-o",
        "--output",
        "out",
        required=True,
        type=click.Path(file_okay=False, path_type=str),
        help=help_text,
    )


def _experiment_options(command):
    """Options shared by every command that reads a recording."""
    options = [
        click.option(
            "--experiment",
            type=click.Path(dir_okay=False, path_type=str),
            help="Experiment file (default: experiment.toml in the folder, or <stem>.toml).",
        ),
        click.option("--frame-rate", type=_positive("Hz"), help='Frame rate, e.g. "20 kfps".'),
        click.option(
            "--pixel-size", type=_positive("m"), help='Length of one pixel, e.g. "5 um".'
        ),
        click.option(
            "--geometry",
            type=click.Choice(["coalescence", "spreading"]),
            help="What was filmed.",
        ),
        click.option("--view", type=click.Choice(["side", "bottom"]), help="Camera view."),
    ]
    for option in reversed(options):
        command = option(command)
    return command


def _open(source, *, experiment, frame_rate, pixel_size, geometry, view):
    """Experiment (file + options) and the recording it describes."""
    from ..pipeline._steps import open_source

    overrides = _overrides(
        frame_rate=frame_rate, pixel_size=pixel_size, geometry=geometry, view=view
    )
    return open_source(source, experiment=experiment, overrides=overrides)


@main.command("info")
@click.argument("source", type=click.Path(exists=True, path_type=str))
@_experiment_options
@click.option("--json", "as_json", is_flag=True, help="Print the description as JSON.")
def info_command(source, experiment, frame_rate, pixel_size, geometry, view, as_json):
    """Describe the recording SOURCE (a folder of frames, a TIFF stack or a video)."""
    from ..recording._describe import describe, format_description

    exp, rec = _open(
        source,
        experiment=experiment,
        frame_rate=frame_rate,
        pixel_size=pixel_size,
        geometry=geometry,
        view=view,
    )
    from ..liquids._library import resolve_fluids

    description = describe(rec, resolve_fluids(exp))
    if as_json:
        click.echo(json.dumps(description, indent=2))
    else:
        click.echo(format_description(description))


@contextlib.contextmanager
def progress_callback(ctx: click.Context, label: str, total: int):
    """A ``progress(done, total)`` callback drawing a bar on stderr, or None.

    The bar is shown only when stderr is a terminal and ``-q`` was not given,
    so logs and pipes stay clean.
    """
    quiet = (ctx.find_root().obj or {}).get("verbosity", 0) < 0
    if quiet or not sys.stderr.isatty():
        yield None
        return
    from rich.console import Console
    from rich.progress import Progress

    with Progress(console=Console(stderr=True), transient=True) as bar:
        task = bar.add_task(label, total=total)
        yield lambda done, total: bar.update(task, completed=done, total=total)


def _measure_options(command):
    """Options of every command that measures a recording."""
    options = [
        _output_option("Folder for the outputs."),
        _experiment_options,
        click.option("--roi", help="Region of interest ROW0:ROW1,COL0:COL1 (pixels)."),
        click.option(
            "--threshold",
            type=_FiniteFloat(0.05, 0.95),
            default=0.5,
            show_default=True,
            help="Edge level, as a fraction of the way from the drops' dark rim to the "
            "background.",
        ),
        click.option(
            "--background",
            type=click.Path(exists=True, dir_okay=False, path_type=str),
            help="Image of the empty field of view, used as the backlight.",
        ),
        click.option(
            "--jobs",
            type=click.IntRange(1, 64),
            default=1,
            show_default=True,
            help="Worker processes.",
        ),
        click.option(
            "--chunk-size",
            type=click.IntRange(1, 4096),
            default=64,
            show_default=True,
            help="Frames per chunk.",
        ),
        click.option(
            "--overlays",
            "overlay_count",
            type=click.IntRange(0, 50),
            default=6,
            show_default=True,
            help="Annotated frames to write.",
        ),
    ]
    for option in reversed(options):
        command = option(command)
    return command


def _settings(*, background, roi, threshold, jobs, chunk_size, overlay_count, **fit):
    from ..pipeline._steps import AnalysisSettings, parse_roi

    return AnalysisSettings(
        roi=parse_roi(roi),
        threshold=threshold,
        background=background,
        jobs=jobs,
        chunk_size=chunk_size,
        overlays=overlay_count,
        **fit,
    )


def _overrides(*, frame_rate, pixel_size, geometry, view, **_):
    return {
        "recording.frame_rate": frame_rate,
        "recording.pixel_size": pixel_size,
        "setup.geometry": geometry,
        "setup.view": view,
    }


def _measure_summary(series, out) -> str:
    counts = {s: series.status.count(s) for s in dict.fromkeys(series.status)}
    summary = ", ".join(f"{n} {s}" for s, n in counts.items() if n)
    return (
        f"{len(series)} frames: {summary}; contact at {series.contact_time:.6g} s "
        f"± {series.contact_time_err:.2g} s; wrote {out / 'radius.csv'}"
    )


def _run_measure(ctx, source, out, **options):
    """Measure SOURCE into OUT (radius.csv, measure.json, overlays/); the series.

    Exits 1 (after writing the outputs) when no contact is seen.
    """
    from pathlib import Path

    from ..pipeline._steps import measure_into, open_source

    exp, rec = open_source(
        source, experiment=options["experiment"], overrides=_overrides(**options)
    )
    out = Path(out)
    settings = _settings(**{k: v for k, v in options.items() if k not in _EXPERIMENT_KEYS})
    with progress_callback(ctx, "measuring", len(rec)) as progress:
        series, method = measure_into(out, exp, rec, settings, progress=progress)
    if series.contact_time is None:
        click.echo(
            f"dropkin: error: {rec.path}: {method}; radius series written to {out}", err=True
        )
        ctx.exit(EXIT_INPUT_ERROR)
    click.echo(_measure_summary(series, out))
    return series


_EXPERIMENT_KEYS = ("experiment", "frame_rate", "pixel_size", "geometry", "view")


@main.command("measure")
@click.argument("source", type=click.Path(exists=True, path_type=str))
@_measure_options
@click.pass_context
def measure_command(ctx, source, out, **options):
    """Measure the neck or contact radius in every frame of SOURCE."""
    _run_measure(ctx, source, out, **options)


def _fit_options(command):
    options = [
        click.option(
            "--t0",
            type=QuantityType("s"),
            help="Fix the contact instant (time from the first frame) instead of fitting it.",
        ),
        click.option("--seed", type=int, default=0, show_default=True, help="Bootstrap seed."),
        click.option(
            "--bootstrap",
            type=click.IntRange(0, 100000),
            default=200,
            show_default=True,
            help="Bootstrap resamples for the intervals.",
        ),
    ]
    for option in reversed(options):
        command = option(command)
    return command


def _report_verdict(ctx, verdict, radius_csv, path) -> None:
    from ..scaling import format_verdict

    click.echo(format_verdict(verdict))
    if not verdict:
        click.echo(f"dropkin: error: {radius_csv}: {verdict.reason}", err=True)
        ctx.exit(EXIT_INPUT_ERROR)
    click.echo(f"wrote {path}")


def _run_fit(ctx, radius_csv, out, *, experiment, t0, seed, bootstrap):
    from pathlib import Path

    from ..pipeline._steps import fit_into

    verdict, _, _ = fit_into(
        radius_csv, out, experiment=experiment, t0=t0, seed=seed, bootstrap=bootstrap
    )
    _report_verdict(ctx, verdict, radius_csv, Path(out) / "fit.json")
    return verdict


@main.command("fit")
@click.argument("radius_csv", type=click.Path(exists=True, dir_okay=False, path_type=str))
@_output_option("Folder for fit.json.")
@click.option(
    "--experiment",
    type=click.Path(exists=True, dir_okay=False, path_type=str),
    help="Experiment file (default: the one named in measure.json).",
)
@_fit_options
@click.pass_context
def fit_command(ctx, radius_csv, out, experiment, t0, seed, bootstrap):
    """Fit the scaling regimes to RADIUS_CSV (from dropkin measure) and give the verdict."""
    _run_fit(ctx, radius_csv, out, experiment=experiment, t0=t0, seed=seed, bootstrap=bootstrap)


@main.command("analyze")
@click.argument("source", type=click.Path(exists=True, path_type=str))
@_measure_options
@_fit_options
@click.pass_context
def analyze_command(ctx, source, out, t0, seed, bootstrap, **options):
    """Measure SOURCE, then fit the regimes: radius.csv, measure.json, fit.json,
    plots/ and a self-contained report.html."""
    from pathlib import Path

    from ..errors import MeasurementError
    from ..pipeline._steps import analyze_into

    out = Path(out)
    settings = _settings(
        **{k: v for k, v in options.items() if k not in _EXPERIMENT_KEYS},
        t0=t0,
        seed=seed,
        bootstrap=bootstrap,
    )
    # The frame count is known only once the recording is open; the bar then
    # counts frames (the fit and the report take a few seconds more).
    with progress_callback(ctx, "measuring", 0) as progress:
        try:
            result = analyze_into(
                source,
                out,
                settings,
                experiment=options["experiment"],
                overrides=_overrides(**options),
                progress=progress,
            )
        except MeasurementError as exc:
            if (out / "radius.csv").is_file():
                raise MeasurementError(
                    f"{exc.message}; radius series written to {out}", path=exc.path
                ) from None
            raise
    click.echo(_measure_summary(result.series, out))
    _report_verdict(ctx, result.verdict, out / "radius.csv", out / "fit.json")
    click.echo(f"wrote {result.report}")


# --- campaigns --------------------------------------------------------------------

EXIT_INTERRUPTED = 130


def _batch_line(done, total, label, row) -> str:
    width = len(str(total))
    head = f"[{done:>{width}}/{total}] {label}: "
    if row is None:
        return head + "unchanged since its complete row, skipped"
    if row["status"] != "complete":
        return head + f"failed: {row.get('error')}"
    n = row.get("exponent_fit")
    exponent = f", n = {n:.3g}" if n is not None else ""
    return head + f"{row.get('regime')}{exponent} ({row.get('seconds', 0):.1f} s)"


@main.command("batch")
@click.argument("manifest", type=click.Path(exists=True, dir_okay=False, path_type=str))
@_output_option("Folder for the catalogue and one folder per recording.")
@click.option(
    "--jobs",
    type=click.IntRange(1, 256),
    default=1,
    show_default=True,
    help="Recordings analysed at once on this machine.",
)
@click.option(
    "--scheduler",
    metavar="ADDRESS",
    help="Run on a Dask distributed cluster (e.g. tcp://10.0.0.5:8786) instead.",
)
@click.option("--redo", is_flag=True, help="Analyse again even recordings already complete.")
@click.option(
    "--allow-outside-paths",
    is_flag=True,
    help="Let the manifest name recordings outside its own folder.",
)
@click.pass_context
def batch_command(ctx, manifest, out, jobs, scheduler, redo, allow_outside_paths):
    """Analyse every recording a campaign MANIFEST lists; catalogue the results.

    Exits 3 when some recordings failed (the others are complete; the
    failures are listed), 130 when interrupted (run it again to finish).
    """
    from pathlib import Path

    from ..campaign._catalogue import CATALOGUE_NAME
    from ..campaign._runner import run_batch

    quiet = (ctx.find_root().obj or {}).get("verbosity", 0) < 0

    def report(done, total, label, row):
        if not quiet:
            click.echo(_batch_line(done, total, label, row), err=True)

    summary = run_batch(
        manifest,
        out,
        jobs=jobs,
        scheduler=scheduler,
        redo=redo,
        allow_outside=allow_outside_paths,
        report=report,
    )
    finished = len(summary.done) + len(summary.skipped) + len(summary.failed)
    if summary.interrupted:
        click.echo(
            f"dropkin: interrupted: {finished} of {summary.total} recordings finished and "
            "catalogued; run the same command again to do the rest",
            err=True,
        )
        ctx.exit(EXIT_INTERRUPTED)
    click.echo(
        f"{summary.total} recordings: {len(summary.done)} analysed, "
        f"{len(summary.skipped)} unchanged, {len(summary.failed)} failed; "
        f"catalogue {Path(out) / CATALOGUE_NAME}"
    )
    if summary.failed:
        for label, message in summary.failed:
            click.echo(f"dropkin: failed: {label}: {message}", err=True)
        ctx.exit(EXIT_BATCH_PARTIAL)


@main.command("collapse")
@click.argument("out", type=click.Path(exists=True, file_okay=False, path_type=str))
@click.option(
    "--regime",
    help="Put every recording on this regime's scales (default: each on its own regime's).",
)
@click.option(
    "-o",
    "--output",
    "dest",
    type=click.Path(file_okay=False, path_type=str),
    help="Folder for collapse.json and the figures (default: OUT/collapse).",
)
def collapse_command(out, regime, dest):
    """Master curve of a campaign (the OUT of dropkin batch): r/R against t/tau,
    the collective prefactor, and the recordings that do not collapse."""
    from pathlib import Path

    from ..campaign._collapse import master_curves, write_collapse

    curves = master_curves(out, regime=regime)
    dest = Path(dest) if dest else Path(out) / "collapse"
    write_collapse(curves, dest)
    for curve in curves:
        lo, hi = curve.pooled.ci
        published = "" if curve.published is None else f" (published {curve.published:g})"
        click.echo(
            f"{curve.regime}: C = {curve.pooled.value:.4g} [{lo:.4g}, {hi:.4g}] from "
            f"{curve.pooled.k} recording{'' if curve.pooled.k == 1 else 's'}{published}"
        )
        for member in curve.members:
            if not member.collapses:
                click.echo(f"  does not collapse: {member.label}: {member.note}")
    left = {label: why for curve in curves for label, why in curve.left_out}
    for label, why in left.items():
        click.echo(f"  left out: {label}: {why}")
    click.echo(f"wrote {dest / 'collapse.json'}")


# --- physics commands ------------------------------------------------------------
# Owned by the scaling-physics work (issue 5): `dropkin predict` and `dropkin liquids`.
# Everything up to the next line that starts `def run()`.

_PHYSICS_FIELDS = ("temperature", "surface_tension", "viscosity", "density")


def _physics_celsius(kelvin):
    return f"{kelvin - 273.15:.4g} °C"


def _physics_fill_notes(before, after, *, user_library):
    """One note per value the library filled in, naming the liquid and its source."""
    from ..liquids._library import liquid_info

    notes = []
    for section in ("liquid", "medium"):
        old, new = getattr(before, section), getattr(after, section)
        filled = [f for f in _PHYSICS_FIELDS if getattr(old, f) is None and getattr(new, f)]
        if not filled:
            continue
        sources = liquid_info(new.name, user_library=user_library).sources
        for name in filled:
            if name == "temperature":
                given = section == "medium" and before.liquid.temperature is not None
                how = "the liquid's" if given else "assumed"
                celsius = _physics_celsius(new.temperature)
                notes.append(f"{section}.temperature not given: {celsius} ({how})")
            else:
                notes.append(
                    f"{section}.{name} from the library ({new.name}): {sources.get(name, '')}"
                )
    return notes


@main.command("predict")
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
@click.option("--temperature", type=_positive("K"), help='e.g. "21 degC" (default 20 °C).')
@click.option("--glycerol-mass-fraction", type=FINITE_FLOAT, help="For glycerol-water, 0 to 1.")
@click.option("--surface-tension", type=_positive("N/m"), help='e.g. "63 mN/m".')
@click.option("--viscosity", type=_positive("Pa*s"), help='e.g. "110 mPa*s".')
@click.option("--density", type=_positive("kg/m^3"), help='e.g. "1220 kg/m^3".')
@click.option("--drop-radius", type=_positive("m"), help='e.g. "1 mm".')
@click.option("--outer-viscosity", type=_positive("Pa*s"), help="Surrounding fluid.")
@click.option("--outer-density", type=_positive("kg/m^3"), help="Surrounding fluid.")
@click.option(
    "--contact-angle", type=FINITE_FLOAT, help="Contact angle on the substrate (degrees)."
)
@click.option("--frame-rate", type=_positive("Hz"), help="Your camera's, to check it.")
@click.option("--pixel-size", type=_positive("m"), help="Your optics', to check them.")
@click.option(
    "--liquids",
    "liquids_file",
    type=click.Path(exists=True, dir_okay=False, path_type=str),
    help="Your own liquid library (TOML).",
)
@click.option("--json", "as_json", is_flag=True, help="Print JSON (SI values) instead.")
def predict_command(
    source,
    experiment,
    geometry,
    view,
    liquid,
    medium,
    temperature,
    glycerol_mass_fraction,
    surface_tension,
    viscosity,
    density,
    drop_radius,
    outer_viscosity,
    outer_density,
    contact_angle,
    frame_rate,
    pixel_size,
    liquids_file,
    as_json,
):
    """Which regimes a sample should show, when, and how to record them.

    The sample comes from SOURCE's experiment file, --experiment, or the
    options (which override the file).
    """
    import math

    from ..experiment import Experiment, load_experiment
    from ..liquids._library import load_liquid_library, resolve_fluids
    from ..scaling import (
        format_prediction,
        predict,
        prediction_to_dict,
        sample_numbers_from_experiment,
    )

    overrides = {
        "liquid.name": liquid,
        "liquid.temperature": temperature,
        "liquid.glycerol_mass_fraction": glycerol_mass_fraction,
        "liquid.surface_tension": surface_tension,
        "liquid.viscosity": viscosity,
        "liquid.density": density,
        "medium.name": medium,
        "medium.viscosity": outer_viscosity,
        "medium.density": outer_density,
        "drops.radius": drop_radius,
        "recording.frame_rate": frame_rate,
        "recording.pixel_size": pixel_size,
        "setup.view": view,
    }
    if source is not None or experiment is not None:
        exp = load_experiment(source or experiment, experiment=experiment, overrides=overrides)
    else:
        exp = Experiment().with_overrides(overrides)
    library = None if liquids_file is None else load_liquid_library(liquids_file)
    full = resolve_fluids(exp, user_library=library)
    notes = _physics_fill_notes(exp, full, user_library=library)
    if geometry is None:
        geometry = exp.setup.geometry or "coalescence"
        if exp.setup.geometry is None:
            notes.append("geometry not given: coalescence assumed")
    angle = None if contact_angle is None else math.radians(contact_angle)
    numbers = sample_numbers_from_experiment(full, contact_angle=angle)
    prediction = predict(
        numbers,
        geometry,
        full.setup.view,
        frame_rate=full.recording.frame_rate,
        pixel_size=full.recording.pixel_size,
        notes=notes,
    )
    if as_json:
        data = prediction_to_dict(prediction)
        data["sample"] = {
            section: {
                "name": fluid.name,
                "glycerol_mass_fraction": fluid.glycerol_mass_fraction,
                "temperature_k": fluid.temperature,
            }
            for section, fluid in (("liquid", full.liquid), ("medium", full.medium))
        }
        click.echo(json.dumps(data, indent=2, ensure_ascii=False))
    else:
        liquid_text = full.liquid.name or "liquid given by value"
        if full.liquid.glycerol_mass_fraction is not None:
            liquid_text += f" ({100 * full.liquid.glycerol_mass_fraction:.4g} wt % glycerol)"
        if full.liquid.temperature is not None:
            liquid_text += f" at {_physics_celsius(full.liquid.temperature)}"
        click.echo(f"{liquid_text} in {full.medium.name or 'a medium given by value'}")
        click.echo(format_prediction(prediction))


@main.command("liquids")
@click.argument("name", required=False)
@click.option("--temperature", type=_positive("K"), help='e.g. "25 degC" (default 20 °C).')
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
    from ..liquids._library import (
        DEFAULT_TEMPERATURE,
        liquid_catalogue,
        liquid_properties,
        load_liquid_library,
    )

    library = None if liquids_file is None else load_liquid_library(liquids_file)
    if name is None:
        entries = liquid_catalogue(user_library=library)
        if as_json:
            rows = [
                {
                    "name": e.name,
                    "description": e.description,
                    "temperature_min_k": e.temperature_min,
                    "temperature_max_k": e.temperature_max,
                    "needs_glycerol_mass_fraction": e.needs_glycerol_mass_fraction,
                    "sources": dict(e.sources),
                    "origin": e.origin,
                }
                for e in entries
            ]
            click.echo(json.dumps(rows, indent=2, ensure_ascii=False))
            return
        width = max(len(e.name) for e in entries)
        for e in entries:
            if e.temperature_min is None:
                span = "any temperature"
            else:
                low, high = e.temperature_min, e.temperature_max
                span = f"{_physics_celsius(low)} to {_physics_celsius(high)}"
            click.echo(f"{e.name.ljust(width)}  {span:<20}  {e.description}")
        return
    assumed = temperature is None
    kelvin = DEFAULT_TEMPERATURE if assumed else temperature
    props = liquid_properties(
        name, kelvin, glycerol_mass_fraction=glycerol_mass_fraction, user_library=library
    )
    if as_json:
        data = {
            "name": props.name,
            "temperature_k": props.temperature,
            "glycerol_mass_fraction": props.glycerol_mass_fraction,
            "surface_tension_n_per_m": props.surface_tension,
            "viscosity_pa_s": props.viscosity,
            "density_kg_per_m3": props.density,
            "kinematic_viscosity_m2_per_s": props.kinematic_viscosity,
            "sources": dict(props.sources),
        }
        click.echo(json.dumps(data, indent=2, ensure_ascii=False))
        return
    what = props.name
    if props.glycerol_mass_fraction is not None:
        what += f", glycerol mass fraction {props.glycerol_mass_fraction:g}"
    note = " (not given: 20 °C assumed)" if assumed else ""
    click.echo(f"{what} at {_physics_celsius(props.temperature)}{note}")
    sigma = "—" if props.surface_tension is None else f"{props.surface_tension * 1e3:.4g} mN/m"
    rows = (
        ("surface tension", sigma, props.sources.get("surface_tension", "")),
        ("viscosity", f"{props.viscosity * 1e3:.4g} mPa s", props.sources.get("viscosity", "")),
        ("density", f"{props.density:.5g} kg/m^3", props.sources.get("density", "")),
        ("kinematic viscosity", f"{props.kinematic_viscosity * 1e6:.4g} mm^2/s", ""),
    )
    for label, value, source_text in rows:
        click.echo(f"  {label:<20} {value:<16} {source_text}".rstrip())


def run() -> None:  # pragma: no cover - exercised through ``python -m dropkin``
    """Entry point for ``python -m dropkin``."""
    main(prog_name="dropkin")


if __name__ == "__main__":  # pragma: no cover
    sys.exit(run())


# --- synth command ---------------------------------------------------------------
# Owned by the synth work (issue 3); everything up to the end of the file.

_SYNTH_LAWS = (
    "viscous",
    "inertial",
    "viscous-outer",
    "inertial-spreading",
    "viscous-spreading",
    "tanner",
    "gravity-spreading",
    "power",
)


def _synth_size(ctx, param, value):
    """Parse ``ROWSxCOLS`` (e.g. ``256x384``) into (rows, cols)."""
    try:
        rows, cols = (int(part) for part in value.lower().split("x"))
    except ValueError:
        raise click.BadParameter(f"{value!r} is not ROWSxCOLS, e.g. 256x384") from None
    if rows < 8 or cols < 8:
        raise click.BadParameter(f"{value!r}: both sizes must be at least 8 pixels")
    return rows, cols


@main.command("synth")
@click.argument("out", type=click.Path(path_type=str))
@click.option(
    "--geometry",
    type=click.Choice(["coalescence", "spreading"]),
    default="coalescence",
    show_default=True,
    help="Two drops merging, or one drop spreading on a plate.",
)
@click.option("--view", type=click.Choice(["side", "bottom"]), default="side", show_default=True)
@click.option(
    "--law",
    type=click.Choice(_SYNTH_LAWS),
    help="Radius law (default: inertial, or inertial-spreading for spreading).",
)
@click.option("--exponent", type=FINITE_FLOAT, help="Exponent n of --law power.")
@click.option(
    "--prefactor",
    type=FINITE_FLOAT,
    help="--law power: C of r = C t^n in SI units (m s^-n); "
    "inertial, viscous-outer, inertial-spreading, gravity-spreading: the dimensionless C.",
)
@click.option("--surface-tension", type=_positive("N/m"), default="72.74 mN/m", show_default=True)
@click.option("--viscosity", type=_positive("Pa*s"), default="1.0016 mPa*s", show_default=True)
@click.option("--density", type=_positive("kg/m^3"), default="998.2 kg/m^3", show_default=True)
@click.option(
    "--outer-viscosity", type=_positive("Pa*s"), default="0.018 mPa*s", show_default=True
)
@click.option("--outer-density", type=_positive("kg/m^3"), default="1.2 kg/m^3", show_default=True)
@click.option("--liquid-name", default="water", show_default=True, help="Written to [liquid].")
@click.option("--temperature", type=_positive("K"), default="20 degC", show_default=True)
@click.option("--glycerol-mass-fraction", type=_FiniteFloat(0, 1), help="For glycerol-water.")
@click.option("--drop-radius", type=_positive("m"), default="1 mm", show_default=True)
@click.option("--second-radius", type=_positive("m"), help="Radius of drop 2 (default equal).")
@click.option(
    "--angle",
    type=FINITE_FLOAT,
    default=0.0,
    show_default=True,
    help="Line of centres, degrees counter-clockwise from horizontal (-90: drop 2 below).",
)
@click.option("--frames", type=click.IntRange(min=1), default=100, show_default=True)
@click.option("--frame-rate", type=_positive("Hz"), default="100 kHz", show_default=True)
@click.option("--pixel-size", type=_positive("m"), default="10 um", show_default=True)
@click.option(
    "--size", callback=_synth_size, default="320x512", show_default=True, help="ROWSxCOLS."
)
@click.option(
    "--contact-frame",
    type=FINITE_FLOAT,
    default=5.0,
    show_default=True,
    help="Contact instant in frames from the first (fractional: between two frames).",
)
@click.option(
    "--noise",
    type=_FiniteFloat(min=0),
    default=1.0,
    show_default=True,
    help="Noise level: 1 is a 20000-electron sensor with 10 e- read noise; 0 is none.",
)
@click.option(
    "--blur",
    type=_FiniteFloat(min=0),
    default=1.0,
    show_default=True,
    help="Sigma of the Gaussian blur, pixels.",
)
@click.option("--bit-depth", type=click.Choice(["8", "12"]), default="8", show_default=True)
@click.option(
    "--format",
    "fmt",
    type=click.Choice(["png", "tiff"]),
    help="png: a folder of frames; tiff: a multi-page file (default: from OUT's suffix).",
)
@click.option("--seed", type=click.IntRange(min=0), default=0, show_default=True)
@click.option(
    "--reflectivity",
    type=_FiniteFloat(0, 1, max_open=True),
    default=0.0,
    show_default=True,
    help="Spreading, side view: 0 for an opaque plate, else the drop's mirror image shows.",
)
@click.option("--needle-width", type=_positive("m"), help="A needle into the upper drop.")
@click.option(
    "--dust",
    type=click.IntRange(min=0),
    default=0,
    show_default=True,
    help="Number of dust specks.",
)
@click.option(
    "--approach-speed",
    type=_positive("m/s"),
    help="Before contact (default: half a pixel per frame).",
)
@click.option("--overwrite", is_flag=True, help="Replace existing output.")
@click.pass_context
def synth_command(ctx, out, **options):
    """Write a synthetic recording with known truth to OUT (a folder, or a .tif file)."""
    try:
        _synth(ctx, out, options)
    except DropkinError as exc:
        raise _as_option_error(ctx, exc) from None


def _as_option_error(ctx, exc):
    """`exc` naming the command's option (``--contact-frame``) instead of the
    library's keyword (``contact_frame``), when there is such an option."""
    option = "--" + (exc.key or "").replace("_", "-")
    if exc.key is None or not any(option in p.opts for p in ctx.command.params):
        return exc
    fields = {name: getattr(exc, name) for name in ("path", "value", "expected", "frame")}
    return type(exc)(exc.message, key=option, **fields)


def _synth(ctx, out, options):
    import time

    from .. import synth
    from ..errors import ExperimentError

    o = options
    law_name = o["law"] or ("inertial-spreading" if o["geometry"] == "spreading" else "inertial")
    if o["geometry"] == "coalescence":
        setup = synth.Coalescence(
            view=o["view"],
            drop_radius=o["drop_radius"],
            second_radius=o["second_radius"],
            angle_deg=o["angle"],
            approach_speed=o["approach_speed"],
            needle_width=o["needle_width"] or 0.0,
        )
    else:
        if o["second_radius"] is not None:
            raise ExperimentError("applies only to coalescence", key="--second-radius")
        setup = synth.Spreading(
            view=o["view"],
            drop_radius=o["drop_radius"],
            reflectivity=o["reflectivity"],
            approach_speed=o["approach_speed"],
        )
    if law_name == "power":
        if o["exponent"] is None or o["prefactor"] is None:
            raise ExperimentError("needs --exponent and --prefactor", key="--law", value="power")
        law = synth.power_law(prefactor=o["prefactor"], exponent=o["exponent"])
    else:
        if o["exponent"] is not None:
            raise ExperimentError("applies only to --law power", key="--exponent")
        law = synth.regime_law(
            law_name,
            surface_tension=o["surface_tension"],
            viscosity=o["viscosity"],
            density=o["density"],
            outer_viscosity=o["outer_viscosity"],
            drop_radius=setup.effective_radius,
            prefactor=o["prefactor"],
        )
    level = o["noise"]
    sensor = synth.Sensor(
        bit_depth=int(o["bit_depth"]),
        full_well=20000.0 / level**2 if level > 0 else None,
        read_noise=10.0 * level,
    )
    recording = synth.synthesize(
        setup,
        law,
        camera=synth.Camera(o["frame_rate"], o["pixel_size"], o["size"]),
        frames=o["frames"],
        contact_frame=o["contact_frame"],
        optics=synth.Optics(blur_px=o["blur"], dust_count=o["dust"]),
        sensor=sensor,
        liquid=synth.Liquid(
            name=o["liquid_name"] or None,
            surface_tension=o["surface_tension"],
            viscosity=o["viscosity"],
            density=o["density"],
            temperature=o["temperature"],
            glycerol_mass_fraction=o["glycerol_mass_fraction"],
        ),
        medium=synth.Medium(viscosity=o["outer_viscosity"], density=o["outer_density"]),
        seed=o["seed"],
    )
    start = time.perf_counter()
    quiet = (ctx.obj or {}).get("verbosity", 0) < 0
    if sys.stderr.isatty() and not quiet:
        from rich.console import Console
        from rich.progress import Progress

        with Progress(console=Console(stderr=True), transient=True) as bar:
            task = bar.add_task("rendering", total=recording.frames)
            written = synth.write_recording(
                recording,
                out,
                format=o["fmt"],
                overwrite=o["overwrite"],
                progress=lambda done, total: bar.update(task, completed=done),
            )
    else:
        written = synth.write_recording(recording, out, format=o["fmt"], overwrite=o["overwrite"])
    elapsed = time.perf_counter() - start
    truth = recording.truth
    rows, cols = o["size"]
    click.echo(
        f"wrote {recording.frames} frames ({rows} x {cols}, {o['bit_depth']}-bit"
        f" {written.format}) to {written.frames} in {elapsed:.1f} s; {law.name} law,"
        f" contact at frame {truth.contact_frame:g} (t0 = {truth.contact_time:.4g} s),"
        f" radius {truth.radius[-1] / o['pixel_size']:.1f} px at the last frame;"
        f" truth in {written.truth.name}"
    )
