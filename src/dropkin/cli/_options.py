"""Parameter types and the options several commands share, with what they become.

:func:`experiment_options` are the recording's options that override its
experiment file (:func:`recording_overrides` turns them into dotted keys);
:func:`measure_options` and :func:`fit_options` are the analysis settings
(:func:`analysis_settings` turns them into an
:class:`~dropkin.pipeline.AnalysisSettings`); :func:`sample_options` describe
the sample (:func:`sample_overrides` turns them into dotted keys, with their
values as given, and :func:`options_named` makes an error about one of them
name the option).
"""

from __future__ import annotations

import math
from contextlib import contextmanager

import click

from .._option_keys import RECORDING_OPTION_KEYS, SAMPLE_OPTION_KEYS
from ..units import QuantityType

__all__ = [
    "positive",
    "FiniteFloat",
    "FINITE_FLOAT",
    "LazyChoice",
    "output_option",
    "overwrite_option",
    "experiment_options",
    "measure_options",
    "fit_options",
    "EXPERIMENT_KEYS",
    "recording_overrides",
    "analysis_settings",
    "GivenQuantity",
    "sample_options",
    "SAMPLE_OPTION_KEYS",
    "sample_overrides",
    "options_named",
]


def positive(unit: str) -> QuantityType:
    """A quantity option that must lie above zero; the usage error names the option."""
    return QuantityType(unit, positive=True)


class FiniteFloat(click.FloatRange):
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


FINITE_FLOAT = FiniteFloat()


class GivenQuantity(QuantityType):
    """A quantity option checked as :class:`~dropkin.units.QuantityType` checks it,
    whose value stays the text as given (``"20 degC"``), for the provenance.

    The experiment converts the text again (:meth:`~dropkin.experiment.Experiment.with_overrides`),
    the same way; a bad value is refused here, naming the option.
    """

    def convert(self, value, param, ctx):
        super().convert(value, param, ctx)
        return value if isinstance(value, float) else str(value).strip()


class GivenFraction(click.ParamType):
    """A fraction from 0 to 1 (``0.85`` or ``"85 %"``), kept as given."""

    name = "fraction"

    def convert(self, value, param, ctx):
        from .._experiment_schema import convert
        from ..errors import ExperimentError

        key = "--" + param.name.replace("_", "-") if param is not None else None
        try:
            number = float(value)
        except (TypeError, ValueError):
            number = None
        try:
            convert(value if number is None else number, ("fraction",), key=key, path=None)
        except ExperimentError as exc:
            self.fail(str(exc), param, ctx)
        return value if number is None else number


class LazyChoice(click.Choice):
    """click's Choice whose choices come from `load()` on first use.

    For choices defined in a package that is slow to import: ``dropkin --help``
    never asks for them.
    """

    def __init__(self, load, case_sensitive: bool = True) -> None:
        self._load = load
        self._choices = None
        self.case_sensitive = case_sensitive

    @property
    def choices(self) -> tuple:
        if self._choices is None:
            self._choices = tuple(self._load())
        return self._choices


def _apply(command, options):
    for option in reversed(options):
        command = option(command)
    return command


def output_option(help_text: str):
    """The -o/--output folder option, required by every command that writes."""
    return click.option(
        "-o",
        "--output",
        "out",
        required=True,
        type=click.Path(file_okay=False, path_type=str),
        help=help_text,
    )


def overwrite_option(command):
    """--overwrite: replace an output folder that holds another run's results, whole."""
    return click.option(
        "--overwrite",
        is_flag=True,
        help="Replace the output folder whole when it holds another run's results "
        "(default: refuse such a folder).",
    )(command)


def experiment_options(command):
    """Options shared by every command that reads a recording."""
    options = [
        click.option(
            "--experiment",
            type=click.Path(dir_okay=False, path_type=str),
            help="Experiment file (default: experiment.toml in the folder, or <stem>.toml).",
        ),
        click.option("--frame-rate", type=positive("Hz"), help='Frame rate, e.g. "20 kfps".'),
        click.option("--pixel-size", type=positive("m"), help='Length of one pixel, e.g. "5 um".'),
        click.option(
            "--geometry",
            type=click.Choice(["coalescence", "sessile-coalescence", "spreading"]),
            help="What was filmed.",
        ),
        click.option("--view", type=click.Choice(["side", "bottom"]), help="Camera view."),
        click.option(
            "--contrast",
            type=click.Choice(["auto", "dark-drops", "bright-drops"]),
            help="Dark drops on a backlight or bright drops on a dark field "
            "(default: the experiment file's, else told from the first frames).",
        ),
    ]
    return _apply(command, options)


def measure_options(command):
    """Options of every command that measures a recording."""
    options = [
        output_option("Folder for the outputs."),
        overwrite_option,
        experiment_options,
        click.option("--roi", help="Region of interest ROW0:ROW1,COL0:COL1 (pixels)."),
        click.option(
            "--threshold",
            type=FiniteFloat(0.05, 0.95),
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
            help="Most frames measured at once; large frames go fewer at a time "
            "(a chunk holds at most 96 MiB of frames and work arrays).",
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
    return _apply(command, options)


def fit_options(command):
    """Options of every command that fits the regimes."""
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
        click.option(
            "--initial-radius",
            is_flag=True,
            help="Also try a finite initial radius r0 (r = r0 + A t^n); kept when the AIC "
            "prefers it.",
        ),
    ]
    return _apply(command, options)


def _plot_formats(ctx, param, value):
    from ..report._style import PLOT_FORMATS

    formats = tuple(dict.fromkeys(v.strip().lower() for v in value.split(",") if v.strip()))
    wrong = [v for v in formats if v not in PLOT_FORMATS]
    if wrong or not formats:
        raise click.BadParameter(
            f"{value!r}: formats are {', '.join(PLOT_FORMATS)}, separated by commas, e.g. png,svg"
        )
    return formats


def plot_formats_option(command):
    """``--plot-formats``: the file formats of the figures (PNG unless asked)."""
    option = click.option(
        "--plot-formats",
        default="png",
        show_default=True,
        callback=_plot_formats,
        help="Formats of the figures, comma-separated, of png, svg, pdf (e.g. png,svg); "
        "the report shows the PNG, which an analysis always writes.",
    )
    return option(command)


def sample_options(command):
    """Options that describe the sample (they override the experiment file) and
    ``--liquids``, a user's liquid library."""
    options = [
        click.option(
            "--liquid",
            help="Library name of the drops' liquid (see `dropkin liquids`); replaces the "
            "experiment file's liquid and its values.",
        ),
        click.option(
            "--temperature",
            type=GivenQuantity("K", positive=True),
            help='Liquid temperature, e.g. "21 degC" (default 20 °C).',
        ),
        click.option(
            "--glycerol-mass-fraction",
            type=GivenFraction(),
            help='For glycerol-water: 0 to 1, or "85 %".',
        ),
        click.option("--medium", help="Library name of the surrounding fluid (default air)."),
        click.option(
            "--drop-radius",
            type=GivenQuantity("m", positive=True),
            help='Drop radius, e.g. "1 mm" (default: measured from the frames).',
        ),
        click.option(
            "--liquids",
            "liquids_file",
            type=click.Path(exists=True, dir_okay=False, path_type=str),
            help="Your own liquid library (TOML), searched before the built-in one.",
        ),
    ]
    return _apply(command, options)


def sample_overrides(**options) -> dict:
    """The experiment keys :func:`sample_options` set, to their values as given
    (options not given are left out)."""
    return {
        key: options[name]
        for name, key in SAMPLE_OPTION_KEYS.items()
        if options.get(name) is not None
    }


@contextmanager
def options_named(overrides: dict):
    """Make an :class:`~dropkin.errors.ExperimentError` about a value an option
    gave name the option (not the experiment key, nor the experiment file).

    So does an error about a value of a liquid (or medium) that ``--liquid``
    (``--medium``) named: the glycerol fraction it needs, a temperature
    outside its range.
    """
    from ..errors import ExperimentError

    options = {key: "--" + name.replace("_", "-") for name, key in SAMPLE_OPTION_KEYS.items()}
    try:
        yield
    except ExperimentError as exc:
        given = overrides.get(exc.key)
        renamed = overrides.get(f"{(exc.key or '').partition('.')[0]}.name") is not None
        if exc.key in options and (given is not None or renamed):
            # a value of a fluid an option named is the options' business
            raise ExperimentError(
                exc.message, key=options[exc.key], value=given, expected=exc.expected
            ) from None
        raise


#: The parameters of :func:`experiment_options`.
EXPERIMENT_KEYS = ("experiment", "frame_rate", "pixel_size", "geometry", "view", "contrast")


def recording_overrides(**options) -> dict:
    """The experiment keys that :func:`experiment_options` override (None: not given)."""
    return {key: options.get(name) for name, key in RECORDING_OPTION_KEYS.items()}


def analysis_settings(*, background, roi, threshold, jobs, chunk_size, overlay_count, **others):
    """The :class:`~dropkin.pipeline.AnalysisSettings` of :func:`measure_options` and, when
    given, :func:`fit_options` (other options in `others` are ignored)."""
    from ..pipeline._steps import AnalysisSettings, parse_roi

    keys = ("t0", "seed", "bootstrap", "initial_radius", "plot_formats")
    fit = {key: others[key] for key in keys if key in others}
    return AnalysisSettings(
        roi=parse_roi(roi),
        threshold=threshold,
        background=background,
        jobs=jobs,
        chunk_size=chunk_size,
        overlays=overlay_count,
        **fit,
    )
