"""One recording from frames to report: the steps ``analyze`` and ``batch`` share.

:func:`analyze_into` is open → check → measure → fit → report, each step
handing its records (the experiment, the :class:`~dropkin.series.RadiusSeries`,
the :class:`~dropkin.scaling.RegimeVerdict`) to the next in memory
(:func:`~dropkin.pipeline._result.analyze_in_memory`), then writing the files
(:func:`~dropkin.pipeline._result.write_result`); the files are outputs only.
:func:`open_source` reads the experiment and opens the recording it describes;
:func:`measure_into` measures it and writes
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
from dataclasses import dataclass
from pathlib import Path

from ..errors import MeasurementError
from ._fit import fit_measurement, load_measurement
from ._package import write_datapackage
from ._result import (
    analyze_in_memory,
    measure_series,
    open_source,
    write_measured,
    write_report,
    write_result,
    write_verdict,
)
from ._settings import AnalysisSettings, parse_roi

_DEFAULTS = AnalysisSettings()  # frozen: one shared default

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


def measure_into(
    out,
    exp,
    rec,
    settings: AnalysisSettings = _DEFAULTS,
    *,
    progress: Callable[[int, int], None] | None = None,
    experiment_file=None,
    sample=None,
    liquids=None,
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
    sample : dict, optional
        The sample values given over the experiment file (dotted keys, values
        as given); the provenance records them as ``sample_overrides``, and
        ``dropkin fit`` applies them again.
    liquids : str or os.PathLike, optional
        The user's liquid library, recorded as ``liquids_file``.
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
    measured, extras = measure_series(exp, rec, settings, progress=progress)
    series = write_measured(
        out,
        measured,
        extras,
        rec,
        settings,
        experiment_file=experiment_file if experiment_file is not None else exp.path,
        sample=sample,
        liquids=liquids,
        published_dir=published_dir,
    )
    if package:
        write_datapackage(out)
    return series, extras["contact"].method


def fit_into(
    radius_csv,
    out,
    *,
    experiment=None,
    overrides=None,
    liquids=None,
    t0=None,
    seed: int = 0,
    bootstrap: int = 200,
    initial_radius: bool = False,
    plot_formats=("png",),
    published_dir=None,
):
    """Fit the regimes to a ``radius.csv``; write ``fit.json``, ``plots/`` and ``report.html``.

    The series is read with the ``measure.json`` (and ``angles.csv``) beside
    it (see :func:`~dropkin.pipeline._fit.load_measurement`); the report
    shows the overlay frames of that folder. The outputs are those of
    :func:`analyze_into` after its measurement. The sample is the
    experiment file and the sample values ``measure.json`` records, with
    `overrides` (dotted keys, e.g. ``{"liquid.name": "ethanol"}``) over them;
    `liquids` is a user's liquid library (default: the one ``measure.json``
    names). `published_dir` is where `out` will be moved once complete (the
    provenance's paths are relative to it; default: `out`).

    Returns
    -------
    verdict : RegimeVerdict
        Falsy (with its reason) when the data cannot support a fit; the
        files are written in both cases, the report saying why.
    numbers : SampleNumbers
    measurement : Measurement
        The series as read and the sample as used.
    """
    measurement = load_measurement(
        radius_csv, experiment=experiment, overrides=overrides, liquids=liquids
    )
    fit = {"t0": t0, "seed": seed, "bootstrap": bootstrap, "initial_radius": initial_radius}
    verdict, numbers = fit_measurement(measurement, **fit)
    write_verdict(verdict, measurement, out, published_dir, None, fit)
    write_report(out, measurement, verdict, plot_formats)
    return verdict, numbers, measurement


def analyze_into(
    source,
    out,
    settings: AnalysisSettings = _DEFAULTS,
    *,
    experiment=None,
    overrides=None,
    origin: str = "command line",
    liquids=None,
    experiment_copy: bool = False,
    published_dir=None,
    progress: Callable[[int, int], None] | None = None,
) -> Analysis:
    """Measure, fit and report one recording into the folder `out`.

    Parameters
    ----------
    overrides : dict, optional
        Dotted experiment keys over the experiment file (see
        :meth:`dropkin.experiment.Experiment.with_overrides`); the sample's
        (``liquid.*``, ``medium.*``, ``drops.*``) are recorded in
        ``measure.json`` as given.
    liquids : str or os.PathLike, optional
        A user's liquid library, searched before the built-in liquids.
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
    out = Path(out)
    result = analyze_in_memory(
        source,
        settings,
        experiment=experiment,
        overrides=overrides,
        origin=origin,
        liquids=liquids,
        progress=progress,
    )
    result = write_result(
        result, out, experiment_copy=experiment_copy, published_dir=published_dir
    )
    if result.verdict is None:  # the series measured is written: the run ends here
        raise MeasurementError(result.contact.method, path=result.recording.path)
    return Analysis(
        series=result.series,
        contact_method=result.contact.method,
        verdict=result.verdict,
        numbers=result.numbers,
        experiment=result.experiment,
        report=out / "report.html",
    )
