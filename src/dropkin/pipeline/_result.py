"""One recording analysed in memory, and its files written afterwards.

:func:`analyze_in_memory` opens, checks, measures and fits one recording
and returns an :class:`AnalysisResult`, the records of the analysis, without
writing anything; :func:`write_result` writes that result's files
(``radius.csv``, ``measure.json``, ``overlays/``, ``fit.json``, ``plots/``,
``report.html``, ``datapackage.json``). ``dropkin analyze`` and a campaign
do the one after the other (:func:`~dropkin.pipeline._steps.analyze_into`);
the Python API (:mod:`dropkin.api`) keeps the result and writes it when asked,
so the numbers of the two are the same computation. :func:`measure_series`
and :func:`write_measured` are the measuring half, which
:func:`~dropkin.pipeline._steps.measure_into` shares.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace
from pathlib import Path

from .._provenance import relative_path
from ._fit import Measurement, check_sample, fit_measurement, sample_given, sample_of
from ._outputs import write_fit
from ._package import write_datapackage
from ._record import fit_provenance, measure_provenance, write_experiment_copy
from ._settings import AnalysisSettings

__all__ = [
    "AnalysisResult",
    "open_source",
    "measure_series",
    "write_measured",
    "analyze_in_memory",
    "write_result",
]

_DEFAULTS = AnalysisSettings()


@dataclass(frozen=True)
class AnalysisResult:
    """One recording's analysis, in memory.

    Attributes
    ----------
    series : RadiusSeries
        The radius in every frame; its provenance is the measurement's own
        until the result is written (:func:`write_result` adds the paths,
        the input's SHA-256 and the run).
    contact : ContactEstimate
        The contact instant, its uncertainty, bracket and method; falsy when
        no contact was seen.
    verdict : RegimeVerdict or None
        None when no contact was seen (nothing to fit); falsy, with its
        reason, when the data cannot support a fit.
    numbers : SampleNumbers or None
    experiment : Experiment
        The sample as used, with the library's values filled in.
    warnings : tuple of str
        What the report lists under its warnings.
    recording : Recording
        The frames measured (for the overlay frames).
    settings : AnalysisSettings
    measurement : Measurement or None
        The series with its sample, as the fit saw it (None without contact).
    read : Experiment
        The experiment as read (file and overrides), before the library
        filled it in; its path is the experiment file the provenance names.
    given : dict
        The sample values given over the experiment file (dotted keys).
    liquids : str or None
        The user's liquid library.
    extras : dict
        What the measurement kept for the overlay frames.
    source : str
        The recording as named by the caller (for the experiment copy's header).
    invocation : dict or None
        The call as given (``command_line``, ``options_given``), for the
        provenance of the files :meth:`write` writes (see
        :func:`dropkin._provenance.invoked`); None: the one in force then.
    """

    series: object
    contact: object
    verdict: object | None
    numbers: object | None
    experiment: object
    warnings: tuple[str, ...]
    recording: object
    settings: AnalysisSettings
    measurement: Measurement | None
    read: object
    given: dict
    liquids: str | None
    extras: dict
    source: str = ""
    invocation: dict | None = None

    def __repr__(self) -> str:
        name = Path(self.recording.path).name
        head = f"<AnalysisResult {name}: {len(self.series)} frames"
        if self.verdict is None:
            return head + ", no contact seen>"
        dom = self.verdict.dominant if self.verdict else None
        said = dom.key if dom else (self.verdict.reason or "no dominant regime")
        return head + f", {said}>"

    def to_pandas(self):
        """The radius series as a pandas DataFrame (the columns of ``radius.csv``)."""
        return self.series.to_pandas()

    def summary(self) -> str:
        """The verdict as ``dropkin analyze`` prints it."""
        from ..scaling import format_verdict

        if self.verdict is None:
            return self.warnings[0]
        return format_verdict(self.verdict)

    def figures(self) -> dict:
        """The figures of ``plots/`` (all but the overlay montage) as matplotlib
        Figures, by name: ``radius``, and ``local_exponent``, ``residuals``,
        ``contact_angle`` where they apply; {} when nothing was fitted."""
        from ..report import analysis_figures

        if self.verdict is None:
            return {}
        return analysis_figures(self.series, self.verdict)

    def write(self, out, *, overwrite: bool = False) -> Path:
        """Write the files ``dropkin analyze`` writes into the folder `out`; return it
        (see :func:`write_result`).

        As on the command line, the folder is built aside and published whole;
        one holding another run's results is refused unless `overwrite`.
        """
        from .._provenance import invoked
        from ._outputs import output_folder

        with invoked(self.invocation), output_folder(out, overwrite=overwrite) as stage:
            write_result(self, stage, published_dir=Path(out))
        return Path(out)


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


def measure_series(exp, rec, settings: AnalysisSettings = _DEFAULTS, *, progress=None):
    """The radius series of `rec` and what the overlay frames need, nothing written.

    Returns
    -------
    series : RadiusSeries
        With the measurement's own provenance (see :func:`write_measured`).
    extras : dict
        ``preparation``, ``contact`` and ``edges`` (see :func:`dropkin.measure.measure`).
    """
    from ..measure import MeasureOptions, measure
    from ..measure._hash import PinnedInput

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
    # the input is hashed beside the measurement, from files held open for it;
    # a file that changes meanwhile fails the run before anything is written
    with PinnedInput(rec) as pinned:
        series, extras = measure(rec, exp, options=options, progress=progress, keep_edges=True)
        extras["sha256"] = pinned.sha256()
        extras["input_identity"] = pinned.identities
    return series, extras


def write_measured(
    out,
    measured,
    extras,
    rec,
    settings: AnalysisSettings,
    *,
    experiment_file=None,
    sample=None,
    liquids=None,
    published_dir=None,
):
    """Write ``radius.csv``, ``measure.json`` and ``overlays/`` of a measured series.

    The provenance is completed here (see
    :func:`~dropkin.pipeline._steps.measure_into` for the keywords); returns
    the series as written.
    """
    from .._atomic import remove_temporaries
    from ..errors import RecordingError
    from ..measure._hash import check_unchanged
    from ..report._overlays import write_overlays
    from ..series import write_series

    folder = published_dir or out
    provenance = measure_provenance(
        measured.provenance, rec, experiment_file, settings, folder, sha256=extras.get("sha256")
    )
    if sample_given(sample):
        provenance["sample_overrides"] = sample_given(sample)
    if liquids is not None:
        provenance["liquids_file"] = relative_path(liquids, folder)
    series = replace(measured, provenance=provenance)
    out = Path(out)
    remove_temporaries(out, out / "overlays")  # left by a run that was killed
    write_series(series, out)
    if settings.overlays:
        drawn = write_overlays(rec, series, extras, out / "overlays", count=settings.overlays)
        try:  # the overlay frames are read again: from the bytes measured, or not kept
            check_unchanged(rec, extras.get("input_identity"))
        except RecordingError:
            for path in drawn:
                path.unlink(missing_ok=True)
            raise
    return series


def analyze_in_memory(
    source,
    settings: AnalysisSettings = _DEFAULTS,
    *,
    experiment=None,
    overrides=None,
    origin: str = "command line",
    liquids=None,
    progress: Callable[[int, int], None] | None = None,
) -> AnalysisResult:
    """Open, check, measure and fit one recording; write nothing.

    The keywords are those of :func:`~dropkin.pipeline._steps.analyze_into`.
    A recording in which no contact is seen gives a result whose `verdict`
    is None (the contact's method says why).
    """
    from ..liquids import stated_uncertainties
    from ..report._html import report_warnings

    exp, rec = open_source(source, experiment=experiment, overrides=overrides, origin=origin)
    sample = check_sample(exp, user_library=liquids)  # fails before the frames are read
    series, extras = measure_series(exp, rec, settings, progress=progress)
    given = sample_given(overrides)
    common = {
        "recording": rec,
        "settings": settings,
        "read": exp,
        "given": given,
        "liquids": None if liquids is None else str(liquids),
        "extras": extras,
        "source": str(source),
        "series": series,
        "contact": extras["contact"],
    }
    if series.contact_time is None:
        said = f"No contact was seen: {extras['contact'].method}."
        return AnalysisResult(
            verdict=None,
            numbers=None,
            experiment=sample,
            warnings=(said,),
            measurement=None,
            **common,
        )
    measurement = Measurement(
        series,
        sample_of(sample, series),
        Path(rec.path),
        stated_uncertainties(exp, user_library=liquids),
        given=given,
        liquids_file=None if liquids is None else str(Path(liquids).resolve()),
    )
    verdict, numbers = fit_measurement(measurement, **settings.fit_settings())
    return AnalysisResult(
        verdict=verdict,
        numbers=numbers,
        experiment=measurement.experiment,
        warnings=tuple(report_warnings(series=series, verdict=verdict)),
        measurement=measurement,
        **common,
    )


def write_result(
    result: AnalysisResult, out, *, experiment_copy: bool = False, published_dir=None
) -> AnalysisResult:
    """Write a result's files into the folder `out`, as ``dropkin analyze`` does.

    ``radius.csv``, ``measure.json`` and ``overlays/``; then, when there is a
    verdict, ``fit.json``, ``plots/`` and ``report.html`` (also for a failed
    fit: the report says why); ``datapackage.json`` last. `experiment_copy`
    and `published_dir` are those of
    :func:`~dropkin.pipeline._steps.analyze_into` (a campaign's).

    Returns
    -------
    AnalysisResult
        The same result, its series (and measurement) with the provenance
        of the files written.
    """
    out = Path(out)
    copy = None
    if experiment_copy:
        copy = write_experiment_copy(out, result.read, result.source, published_dir)
    series = write_measured(
        out,
        result.series,
        result.extras,
        result.recording,
        result.settings,
        experiment_file=copy if copy is not None else result.read.path,
        sample=result.given,
        liquids=result.liquids,
        published_dir=published_dir,
    )
    if result.measurement is None:
        write_datapackage(out)  # of the series measured: there is nothing to fit
        return replace(result, series=series)
    measurement = replace(result.measurement, series=series, path=out / "radius.csv")
    fit = result.settings.fit_settings()
    write_verdict(result.verdict, measurement, out, published_dir, copy, fit)
    write_report(out, measurement, result.verdict, result.settings.plot_formats)
    return replace(result, series=series, measurement=measurement)


def write_verdict(verdict, measurement, out, published_dir, experiment_file, fit: dict) -> None:
    """``OUT/fit.json`` of a verdict; the provenance's paths are relative to
    `published_dir` (default: `out`) and name `experiment_file` (default: the
    measurement's); `fit` holds the fit's settings as given."""
    from .._atomic import remove_temporaries

    remove_temporaries(out, Path(out) / "plots")  # left by a run that was killed
    provenance = fit_provenance(measurement, out, published_dir, experiment_file, fit)
    sample = measurement.sample_record()
    write_fit(verdict, out, series=measurement.series, sample=sample, provenance=provenance)


def write_report(out, measurement, verdict, plot_formats=("png",)) -> Path:
    """``OUT/plots/`` and ``OUT/report.html`` for a verdict, whether it succeeded or not,
    then the folder's ``datapackage.json``; return the report's path.

    A failed or undecided fit still gets the radius plot and a report that
    says why. The overlay frames are those beside the measurement's ``radius.csv``.
    """
    from ..report import write_analysis_report

    report = write_analysis_report(
        out,
        series=measurement.series,
        verdict=verdict,
        experiment=measurement.experiment,
        overlays_dir=Path(measurement.path).parent / "overlays",
        formats=plot_formats,
    )
    write_datapackage(out)
    return report
