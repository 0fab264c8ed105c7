"""One recording from frames to report: the steps ``analyze`` and ``batch`` share.

:func:`analyze_into` is open → check → measure → fit → report, each step
handing its records (the experiment, the :class:`~dropkin.series.RadiusSeries`,
the :class:`~dropkin.scaling.RegimeVerdict`) to the next in memory; the files
are outputs only. :func:`open_source` reads the experiment and opens the
recording it describes; :func:`measure_into` measures it and writes
``radius.csv``, ``measure.json`` and ``overlays/``; :func:`fit_into` fits a
``radius.csv`` read from disk and writes ``fit.json``, ``plots/`` and
``report.html`` as ``analyze`` does (``dropkin fit``). Every step that writes
leaves a ``datapackage.json`` describing the folder's files
(:mod:`dropkin.pipeline._package`); the provenance is :mod:`dropkin.pipeline._record`.
Nothing here prints: the command line and the batch runner report progress
their own way.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace
from pathlib import Path

from ..errors import MeasurementError
from ._fit import Measurement, check_sample, fit_measurement, load_measurement, sample_of
from ._outputs import write_fit
from ._package import write_datapackage
from ._record import fit_provenance, measure_provenance, write_experiment_copy

__all__ = [
    "parse_roi",
    "AnalysisSettings",
    "Analysis",
    "open_source",
    "measure_into",
    "fit_into",
    "analyze_into",
]


@dataclass(frozen=True)
class AnalysisSettings:
    """Everything but the sample that decides an analysis' result.

    Attributes
    ----------
    roi : tuple of int or None
        Region of interest (row_start, row_stop, col_start, col_stop), pixels.
    threshold : float
        Edge level (see :class:`dropkin.measure.MeasureOptions`, ``level``).
    background : str or None
        Path of an image of the empty field of view.
    jobs, chunk_size : int
        Worker processes and frames per chunk of the measurement (they do not
        change the result).
    overlays : int
        Annotated frames to write.
    t0 : float or None
        Contact instant fixed by hand (s from the first frame).
    seed, bootstrap : int
        Bootstrap seed and resamples of the fit's intervals.
    initial_radius : bool
        Also try a finite initial radius r0 in the fits (kept when the AIC
        prefers it).
    """

    roi: tuple[int, int, int, int] | None = None
    threshold: float = 0.5
    background: str | None = None
    jobs: int = 1
    chunk_size: int = 64
    overlays: int = 6
    t0: float | None = None
    seed: int = 0
    bootstrap: int = 200
    initial_radius: bool = False

    def fit_settings(self) -> dict:
        """The keywords of the fit (:func:`~dropkin.pipeline._fit.fit_measurement`)."""
        return {
            "t0": self.t0,
            "seed": self.seed,
            "bootstrap": self.bootstrap,
            "initial_radius": self.initial_radius,
        }

    def result_settings(self) -> dict:
        """The settings that can change the outputs (for a settings hash)."""
        return {
            "roi": None if self.roi is None else list(self.roi),
            "threshold": self.threshold,
            "background": self.background,
            "overlays": self.overlays,
            "t0": self.t0,
            "seed": self.seed,
            "bootstrap": self.bootstrap,
            "initial_radius": self.initial_radius,
        }


@dataclass(frozen=True)
class Analysis:
    """What one analysis wrote and found.

    Attributes
    ----------
    series : RadiusSeries
    contact_method : str
        How the contact instant was found (or why it was not).
    verdict : RegimeVerdict or None
        None when there was no contact to fit from.
    numbers : SampleNumbers or None
    experiment : Experiment
        As used, with the library's values filled in.
    report : pathlib.Path or None
        ``report.html``, written whether the fit succeeded or not.
    """

    series: object
    contact_method: str
    verdict: object | None
    numbers: object | None
    experiment: object
    report: Path | None


def parse_roi(text, *, key: str = "--roi", path=None):
    """``'ROW0:ROW1,COL0:COL1'`` -> (row0, row1, col0, col1); None stays None.

    Raises
    ------
    ExperimentError
        Naming `key` (and `path`) when the text is not four whole numbers in
        that form. Whether the region fits the frame is checked on measuring.

    Examples
    --------
    >>> parse_roi("100:300,50:450")
    (100, 300, 50, 450)
    """
    from ..errors import ExperimentError

    if text is None:
        return None
    try:
        rows, cols = text.split(",")
        r0, r1 = (int(v) for v in rows.split(":"))
        c0, c1 = (int(v) for v in cols.split(":"))
    except (ValueError, AttributeError):
        raise ExperimentError(
            "is not a region",
            key=key,
            value=text,
            path=path,
            expected="ROW0:ROW1,COL0:COL1 in pixels, e.g. 100:300,50:450",
        ) from None
    return (r0, r1, c0, c1)


def open_source(source, *, experiment=None, overrides=None, origin: str = "command line"):
    """The experiment (file + overrides) and the recording it describes.

    Parameters
    ----------
    source : str or os.PathLike
        A recording: folder of frames, multi-page TIFF or video.
    experiment : str or os.PathLike, optional
        Experiment file named explicitly.
    overrides : dict, optional
        Dotted keys and values that take precedence (see
        :meth:`dropkin.experiment.Experiment.with_overrides`).
    origin : str
        Where an overriding frame rate came from, for the recording's record.
    """
    from ..experiment import load_experiment
    from ..recording import open_recording

    overrides = dict(overrides or {})
    exp = load_experiment(source, experiment=experiment, overrides=overrides)
    if overrides.get("recording.frame_rate") is not None:
        rate_origin = origin
    elif exp.recording.frame_rate is not None:
        rate_origin = "experiment file"
    else:
        rate_origin = "given"
    rec = open_recording(
        source,
        frame_rate=exp.recording.frame_rate,
        frame_rate_origin=rate_origin,
        pixel_size=exp.recording.pixel_size,
        first_frame=exp.recording.first_frame,
        last_frame=exp.recording.last_frame,
    )
    return exp, rec


def measure_into(
    out,
    exp,
    rec,
    settings: AnalysisSettings = AnalysisSettings(),
    *,
    progress: Callable[[int, int], None] | None = None,
    experiment_file=None,
    published_dir=None,
    package: bool = True,
):
    """Measure `rec` and write ``radius.csv``, ``measure.json``, ``overlays/`` and
    (unless `package` is false: a step follows) ``datapackage.json``.

    Parameters
    ----------
    experiment_file : str or os.PathLike, optional
        The experiment file to name in the provenance (default: the one `exp`
        was read from).
    published_dir : str or os.PathLike, optional
        Where `out` will be moved once complete: the provenance's paths are
        relative to it (default: `out`).

    Returns
    -------
    series : RadiusSeries
        With ``contact_time`` None when no contact was seen (the outputs are
        written all the same); its provenance names the recording's SHA-256
        and the experiment file.
    contact_method : str
    """
    from .._atomic import remove_temporaries
    from ..measure import MeasureOptions, measure
    from ..report._overlays import write_overlays
    from ..series import write_series

    background = None
    if settings.background is not None:
        from ..recording import read_image

        background = read_image(settings.background)
    options = MeasureOptions(
        roi=settings.roi,
        level=settings.threshold,
        chunk_size=settings.chunk_size,
        jobs=settings.jobs,
        background=background,
    )
    measured, extras = measure(rec, exp, options=options, progress=progress, keep_edges=True)
    named = experiment_file if experiment_file is not None else exp.path
    provenance = measure_provenance(
        measured.provenance, rec, named, settings, published_dir or out
    )
    series = replace(measured, provenance=provenance)
    out = Path(out)
    remove_temporaries(out, out / "overlays")  # left by a run that was killed
    write_series(series, out)
    if settings.overlays:
        write_overlays(rec, series, extras, out / "overlays", count=settings.overlays)
    if package:
        write_datapackage(out)
    return series, extras["contact"].method


def _fit_and_write(measurement, out, published_dir=None, experiment_file=None, **fit):
    """The verdict of a measurement, written to ``OUT/fit.json``; the verdict and the numbers.

    `fit` holds the keywords of :func:`~dropkin.pipeline._fit.fit_measurement`;
    the provenance's paths are relative to `published_dir` (default: `out`)
    and name `experiment_file` (default: the measurement's experiment file).
    """
    from .._atomic import remove_temporaries

    verdict, numbers = fit_measurement(measurement, **fit)
    remove_temporaries(out, Path(out) / "plots")  # left by a run that was killed
    provenance = fit_provenance(measurement, out, published_dir, experiment_file, fit)
    write_fit(verdict, out, series=measurement.series, provenance=provenance)
    return verdict, numbers


def _write_report(out, measurement, verdict) -> Path:
    """``OUT/plots/`` and ``OUT/report.html`` for a verdict, whether it succeeded or not.

    A failed or undecided fit still gets the radius plot and a report that
    says why. The overlay frames are those beside the ``radius.csv``. The
    folder's ``datapackage.json`` then describes all its files.
    """
    from ..report import write_analysis_report

    report = write_analysis_report(
        out,
        series=measurement.series,
        verdict=verdict,
        experiment=measurement.experiment,
        overlays_dir=Path(measurement.path).parent / "overlays",
    )
    write_datapackage(out)
    return report


def fit_into(
    radius_csv,
    out,
    *,
    experiment=None,
    t0=None,
    seed: int = 0,
    bootstrap: int = 200,
    initial_radius: bool = False,
):
    """Fit the regimes to a ``radius.csv``; write ``fit.json``, ``plots/`` and ``report.html``.

    The series is read with the ``measure.json`` (and ``angles.csv``) beside
    it (see :func:`~dropkin.pipeline._fit.load_measurement`); the report
    shows the overlay frames of that folder. The outputs are those of
    :func:`analyze_into` after its measurement.

    Returns
    -------
    verdict : RegimeVerdict
        Falsy (with its reason) when the data cannot support a fit; the
        files are written in both cases, the report saying why.
    numbers : SampleNumbers
    experiment : Experiment
        The sample as used.
    """
    measurement = load_measurement(radius_csv, experiment=experiment)
    fit = {"t0": t0, "seed": seed, "bootstrap": bootstrap, "initial_radius": initial_radius}
    verdict, numbers = _fit_and_write(measurement, out, **fit)
    _write_report(out, measurement, verdict)
    return verdict, numbers, measurement.experiment


def analyze_into(
    source,
    out,
    settings: AnalysisSettings = AnalysisSettings(),
    *,
    experiment=None,
    overrides=None,
    origin: str = "command line",
    experiment_copy: bool = False,
    published_dir=None,
    progress: Callable[[int, int], None] | None = None,
) -> Analysis:
    """Measure, fit and report one recording into the folder `out`.

    Parameters
    ----------
    experiment_copy : bool
        Also write the experiment as used to ``OUT/experiment.toml`` and name
        that file in the provenance (for a campaign, whose values come from a
        manifest rather than one file).
    published_dir : str or os.PathLike, optional
        Where `out` will be moved once complete (the provenance names the
        experiment copy there).

    Raises
    ------
    MeasurementError
        When no contact is seen (``radius.csv`` and ``measure.json`` are
        written first, so the frames that were measured are kept).
    DropkinError
        For any other input that cannot be read or measured.
    """
    from ..liquids import stated_uncertainties

    out = Path(out)
    exp, rec = open_source(source, experiment=experiment, overrides=overrides, origin=origin)
    sample = check_sample(exp)  # a bad sample description fails before the frames are measured
    copy = write_experiment_copy(out, exp, source, published_dir) if experiment_copy else None
    series, method = measure_into(
        out,
        exp,
        rec,
        settings,
        progress=progress,
        experiment_file=copy,
        published_dir=published_dir,
        package=False,
    )
    if series.contact_time is None:
        write_datapackage(out)  # of the series measured: the run ends here
        raise MeasurementError(method, path=rec.path)
    measurement = Measurement(
        series, sample_of(sample, series), out / "radius.csv", stated_uncertainties(exp)
    )
    verdict, numbers = _fit_and_write(
        measurement,
        out,
        published_dir=published_dir,
        experiment_file=copy,
        **settings.fit_settings(),
    )
    used = measurement.experiment
    report = _write_report(out, measurement, verdict)  # also when the fit failed
    return Analysis(
        series=series,
        contact_method=method,
        verdict=verdict,
        numbers=numbers,
        experiment=used,
        report=report,
    )
