"""The ``dropkin`` command line.

Commands are thin: they parse options, call the library and print. Heavy
imports (numpy, OpenCV, scipy, matplotlib) happen inside the commands, so that
``dropkin --help`` is instant. This is the one place where errors become exit
codes: a :class:`~dropkin.errors.DropkinError` is one line on stderr and exit
code 1; click's usage errors are exit code 2.
"""

from __future__ import annotations

import json
import sys

import click

from ._version import __version__
from .errors import DropkinError
from .units import QuantityType

EXIT_INPUT_ERROR = 1
EXIT_BATCH_PARTIAL = 3


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


def _experiment_options(command):
    """Options shared by every command that reads a recording."""
    options = [
        click.option(
            "--experiment",
            type=click.Path(dir_okay=False, path_type=str),
            help="Experiment file (default: experiment.toml in the folder, or <stem>.toml).",
        ),
        click.option(
            "--frame-rate", type=QuantityType("Hz"), help='Frame rate, e.g. "20 kfps".'
        ),
        click.option(
            "--pixel-size", type=QuantityType("m"), help='Length of one pixel, e.g. "5 um".'
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
    from .experiment import load_experiment
    from .recording import open_recording

    overrides = {
        "recording.frame_rate": frame_rate,
        "recording.pixel_size": pixel_size,
        "setup.geometry": geometry,
        "setup.view": view,
    }
    exp = load_experiment(source, experiment=experiment, overrides=overrides)
    if frame_rate is not None:
        origin = "command line"
    elif exp.recording.frame_rate is not None:
        origin = "experiment file"
    else:
        origin = None
    rec = open_recording(
        source,
        frame_rate=exp.recording.frame_rate,
        frame_rate_origin=origin or "given",
        pixel_size=exp.recording.pixel_size,
        first_frame=exp.recording.first_frame,
        last_frame=exp.recording.last_frame,
    )
    return exp, rec


@main.command("info")
@click.argument("source", type=click.Path(exists=True, path_type=str))
@_experiment_options
@click.option("--json", "as_json", is_flag=True, help="Print the description as JSON.")
def info_command(source, experiment, frame_rate, pixel_size, geometry, view, as_json):
    """Describe the recording SOURCE (a folder of frames, a TIFF stack or a video)."""
    from .describe import describe, format_description

    exp, rec = _open(
        source,
        experiment=experiment,
        frame_rate=frame_rate,
        pixel_size=pixel_size,
        geometry=geometry,
        view=view,
    )
    description = describe(rec, exp)
    if as_json:
        click.echo(json.dumps(description, indent=2))
    else:
        click.echo(format_description(description))


def run() -> None:  # pragma: no cover - exercised through ``python -m dropkin``
    """Entry point for ``python -m dropkin``."""
    main(prog_name="dropkin")


if __name__ == "__main__":  # pragma: no cover
    sys.exit(run())
