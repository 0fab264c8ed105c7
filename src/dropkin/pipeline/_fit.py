"""From a radius series and its sample to a regime verdict.

A :class:`Measurement` is a :class:`~dropkin.series.RadiusSeries` with the
experiment that describes its sample: :func:`check_sample` and
:func:`sample_of` make that experiment for a series measured in the same run,
:func:`load_measurement` reads one from ``radius.csv`` (with the
``measure.json`` beside it) for ``dropkin fit``. :func:`fit_measurement` turns
it into the sample's dimensionless numbers and the verdict of
:func:`dropkin.scaling.analyze_series`.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from pathlib import Path
from types import MappingProxyType

from .._provenance import resolve_named
from ..contact import frames_bracket
from ..errors import DropkinError, ExperimentError
from ..experiment import Experiment, load_experiment, read_experiment
from ..series import RadiusSeries, read_series

__all__ = [
    "Measurement",
    "SAMPLE_SECTIONS",
    "sample_given",
    "check_sample",
    "sample_of",
    "load_measurement",
    "fit_measurement",
]


@dataclass(frozen=True)
class Measurement:
    """A radius series with its sample.

    Attributes
    ----------
    series : RadiusSeries
        With what ``measure.json`` holds (the contact instant, its
        uncertainty and bracket, the drop radius, the provenance).
    experiment : Experiment
        The sample, with the library's values filled in for named liquids and
        the drop radius from the series when the experiment has none.
    path : pathlib.Path
        The ``radius.csv`` (read, or written by the same run).
    uncertainties : Mapping[str, (float, str)]
        Relative standard uncertainties stated for the material values and
        the drop radius, with where each comes from
        (:func:`dropkin.liquids.stated_uncertainties`); the fit uses its
        stated default for the others.
    given : Mapping[str, object]
        The sample values given over the experiment file (dotted keys such as
        ``"liquid.name"``, values as given: options, or the ones
        ``measure.json`` recorded).
    liquids_file : str or None
        The user's liquid library the liquids were looked up in.
    """

    series: RadiusSeries
    experiment: Experiment
    path: Path
    uncertainties: Mapping[str, tuple[float, str]] = field(
        default_factory=lambda: MappingProxyType({})
    )
    given: Mapping[str, object] = field(default_factory=lambda: MappingProxyType({}))
    liquids_file: str | None = None

    def sample_record(self) -> dict:
        """The sample as fitted, for ``fit.json``: the values given over the
        experiment file (as given), the liquid library used, and the liquid's
        and medium's values and the drop radius in SI units."""
        exp = self.experiment

        def fluid(f):
            return {
                "name": f.name,
                "temperature_k": f.temperature,
                "glycerol_mass_fraction": f.glycerol_mass_fraction,
                "surface_tension_n_per_m": f.surface_tension,
                "viscosity_pa_s": f.viscosity,
                "density_kg_per_m3": f.density,
            }

        return {
            "given": dict(self.given),
            "liquids_file": self.liquids_file,
            "liquid": fluid(exp.liquid),
            "medium": fluid(exp.medium),
            "drop_radius_m": exp.drops.radius,
        }


#: The experiment sections that describe the sample (what ``measure.json`` records as given).
SAMPLE_SECTIONS = ("liquid", "medium", "drops")


def sample_given(overrides) -> dict:
    """The sample's part of `overrides` (dotted keys of :data:`SAMPLE_SECTIONS`), None left out."""
    return {
        key: value
        for key, value in (overrides or {}).items()
        if value is not None and key.partition(".")[0] in SAMPLE_SECTIONS
    }


def check_sample(experiment: Experiment, *, user_library=None) -> Experiment:
    """The sample with its liquids resolved; raise now what the fit would raise later.

    The liquid and the medium must resolve (library names, temperatures,
    values); only the drop radius may be missing, since a measurement
    supplies it. ``dropkin analyze`` calls this before measuring, so that a
    bad sample description fails in a second rather than after the frames.

    `user_library` is a user's liquid library (path or
    :class:`~dropkin.liquids.LiquidLibrary`), searched first.

    Returns
    -------
    Experiment
        `experiment` with the library's values filled in (see :func:`sample_of`).

    Raises
    ------
    ExperimentError
        Naming the experiment file and the key.
    """
    from ..liquids import resolve_fluids
    from ..scaling import sample_numbers_from_experiment

    full = resolve_fluids(experiment, user_library=user_library)
    probe = full
    if probe.drops.radius is None:
        probe = replace(probe, drops=replace(probe.drops, radius=1.0))  # any size: measured later
    sample_numbers_from_experiment(probe)
    return full


def sample_of(experiment: Experiment, series: RadiusSeries) -> Experiment:
    """The experiment with what the series measured where it says nothing.

    The drop radius and the geometry come from the series when the
    experiment has none.
    """
    if experiment.drops.radius is None and series.drop_radius:
        experiment = replace(
            experiment, drops=replace(experiment.drops, radius=float(series.drop_radius))
        )
    if experiment.setup.geometry is None and series.geometry:
        experiment = experiment.with_overrides({"setup.geometry": series.geometry})
    return experiment


def load_measurement(radius_csv, *, experiment=None, overrides=None, liquids=None) -> Measurement:
    """Read a radius series, its ``measure.json`` and its experiment.

    Parameters
    ----------
    radius_csv : str or os.PathLike
        A ``radius.csv`` written by ``dropkin measure``.
    experiment : str, os.PathLike or Experiment, optional
        The experiment file (or an experiment already read); by default the
        file named in ``measure.json``'s provenance, with the sample values
        given over it then (``sample_overrides``).
    overrides : dict, optional
        Values that take precedence (as for
        :meth:`dropkin.experiment.Experiment.with_overrides`).
    liquids : str or os.PathLike, optional
        A user's liquid library; by default the one ``measure.json`` names
        (``liquids_file``), when it names one.

    Raises
    ------
    DropkinError
        If a file cannot be read or the sample is not described.
    """
    from ..liquids import resolve_fluids, stated_uncertainties

    path = Path(radius_csv)
    series = read_series(path)
    recorded = series.provenance
    given: dict = {}
    if experiment is None:
        exp = _measured_experiment(series, path)
        given = dict(recorded.get("sample_overrides") or {})
        if liquids is None:
            liquids = _recorded_library(recorded.get("liquids_file"), path)
    elif isinstance(experiment, Experiment):
        exp = experiment
    else:
        exp = read_experiment(experiment)
    given.update(sample_given(overrides))
    merged = {**given, **(overrides or {})}
    if merged:
        exp = exp.with_overrides(merged)
    exp = sample_of(exp, series)
    return Measurement(
        series=series,
        experiment=resolve_fluids(exp, user_library=liquids),
        path=path,
        uncertainties=MappingProxyType(stated_uncertainties(exp, user_library=liquids)),
        given=MappingProxyType(given),
        liquids_file=None if liquids is None else str(Path(liquids).resolve()),
    )


def _measured_experiment(series: RadiusSeries, path: Path) -> Experiment:
    """The experiment file ``measure.json`` names, else the one in the series' folder."""
    named = series.provenance.get("experiment_file")
    if named and resolve_named(named, path.parent).is_file():
        return read_experiment(resolve_named(named, path.parent))
    exp = load_experiment(path.parent)
    if exp.path is None:
        raise ExperimentError(
            "no experiment file describes the sample",
            path=path,
            expected="--experiment FILE, or the experiment file named in measure.json",
        )
    return exp


def _recorded_library(named, path: Path):
    """The liquid library ``measure.json`` names (``liquids_file``), which must still exist."""
    if not named:
        return None
    named = resolve_named(named, path.parent)
    if not named.is_file():
        raise ExperimentError(
            "names a liquid library that is not there",
            path=path.parent / "measure.json",
            key="provenance.liquids_file",
            value=named,
            expected="the file, or --liquids FILE",
        )
    return named


def fit_measurement(
    measurement: Measurement,
    *,
    t0=None,
    seed: int = 0,
    bootstrap: int = 200,
    initial_radius: bool = False,
):
    """The regime verdict for a measurement.

    Returns
    -------
    verdict : RegimeVerdict
        Falsy, with its reason, when the data cannot support a fit.
    numbers : SampleNumbers
    """
    from ..scaling import analyze_series, sample_numbers_from_experiment

    exp = measurement.experiment
    numbers = sample_numbers_from_experiment(exp, contact_angle=exp.drops.contact_angle)
    series = measurement.series
    contact = series.contact_time  # from measure.json, or else since_contact_s
    if contact is None and t0 is None:
        raise DropkinError(
            "has no contact instant (measure.json's contact_time_s, or since_contact_s)",
            path=measurement.path,
        )
    err = series.contact_time_err
    # t0 is fitted in the bracket the frames prove; measure.json's bracket
    # start (the last frame with an open gap) reaches back past frames that
    # the measurement relabelled as before contact on its estimate's word.
    measured = series.details.get("contact_bracket_s")
    bracket = frames_bracket(
        series.time, series.status, last_apart=measured[0] if measured else None
    )
    verdict = analyze_series(
        series.time,
        series.radius,
        series.radius_err,
        series.status,
        contact_time=contact if contact is not None else t0,
        contact_time_err=err if err is not None and math.isfinite(err) else None,
        contact_bracket=tuple(bracket) if bracket else None,
        numbers=numbers,
        geometry=exp.setup.geometry,
        view=exp.setup.view,
        t0=t0,
        material_uncertainty={k: u for k, (u, _) in measurement.uncertainties.items()},
        material_uncertainty_sources={k: s for k, (_, s) in measurement.uncertainties.items()},
        seed=seed,
        bootstrap=bootstrap,
        radius_levels=dict(series.level_radii) or None,
        initial_radius=initial_radius,
    )
    return verdict, numbers
