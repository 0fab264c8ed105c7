"""From a measured radius series to a regime verdict on disk (``dropkin fit``).

:func:`load_measurement` reads ``radius.csv`` with the ``measure.json`` beside
it and the experiment that describes the sample; :func:`fit_measurement`
turns them into the sample's dimensionless numbers and the verdict of
:func:`dropkin.scaling.analyze_series`; :func:`write_fit` writes ``fit.json``.
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np

from .._atomic import write_text_atomic
from ..contact import measured_bracket
from ..errors import DropkinError, ExperimentError
from ..experiment import Drops, Experiment, load_experiment, read_experiment
from ..series import read_radius_csv

__all__ = ["Measurement", "load_measurement", "fit_measurement", "write_fit", "check_sample"]


@dataclass(frozen=True)
class Measurement:
    """A radius series as written by ``dropkin measure``, with its sample.

    Attributes
    ----------
    series : dict
        Columns of ``radius.csv`` (see :func:`dropkin.series.read_radius_csv`).
    info : dict
        The content of ``measure.json`` (empty if there is none).
    experiment : Experiment
        The sample, with the library's values filled in for named liquids and
        the drop radius from ``measure.json`` when the experiment has none.
    path : pathlib.Path
        The ``radius.csv`` read.
    """

    series: dict
    info: dict
    experiment: Experiment
    path: Path


def _number(value) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool) and math.isfinite(value)


# What fit_measurement reads from measure.json: key -> (test, what it must be).
_INFO_KEYS = {
    "contact_time_s": (_number, "a finite time in s"),
    "contact_time_err_s": (lambda v: _number(v) and v >= 0, "a finite time >= 0 in s"),
    "contact_bracket_s": (
        lambda v: isinstance(v, list) and len(v) == 2 and all(map(_number, v)) and v[0] <= v[1],
        "two finite times [lo, hi] in s, lo <= hi",
    ),
    "drop_radius_m": (lambda v: _number(v) and v > 0, "a length above 0 in m"),
    "geometry": (lambda v: v in ("coalescence", "spreading"), "coalescence or spreading"),
}


def _read_info(path: Path) -> dict:
    if not path.is_file():
        return {}
    try:
        info = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise DropkinError(f"cannot be read as JSON ({exc})", path=path) from None
    if not isinstance(info, dict):
        raise DropkinError("is not a JSON object", path=path)
    for key, (valid, expected) in _INFO_KEYS.items():
        if info.get(key) is not None and not valid(info[key]):
            raise DropkinError(
                "has a bad value", path=path, key=key, value=info[key], expected=expected
            )
    provenance = info.get("provenance")
    if provenance is not None and not isinstance(provenance, dict):
        raise DropkinError("is not a JSON object", path=path, key="provenance")
    named = (provenance or {}).get("experiment_file")
    if named is not None and not isinstance(named, str):
        raise DropkinError(
            "has a bad value",
            path=path,
            key="provenance.experiment_file",
            value=named,
            expected="the path of an experiment file",
        )
    return info


def check_sample(experiment: Experiment) -> None:
    """Raise now what :func:`fit_measurement` would raise later about the sample.

    The liquid and the medium must resolve (library names, temperatures,
    values); only the drop radius may be missing, since a measurement
    supplies it. ``dropkin analyze`` calls this before measuring, so that a
    bad sample description fails in a second rather than after the frames.

    Raises
    ------
    ExperimentError
        Naming the experiment file and the key.
    """
    from ..liquids._library import resolve_fluids
    from ..scaling import sample_numbers_from_experiment

    full = resolve_fluids(experiment)
    if full.drops.radius is None:
        full = replace(full, drops=Drops(radius=1.0))  # any size: measured later
    sample_numbers_from_experiment(full)


def load_measurement(radius_csv, *, experiment=None, overrides=None) -> Measurement:
    """Read a radius series, its ``measure.json`` and its experiment.

    Parameters
    ----------
    radius_csv : str or os.PathLike
        A ``radius.csv`` written by ``dropkin measure``.
    experiment : str, os.PathLike or Experiment, optional
        The experiment file (or an experiment already read); by default the
        file named in ``measure.json``'s provenance.
    overrides : dict, optional
        Values that take precedence (as for
        :meth:`dropkin.experiment.Experiment.with_overrides`).

    Raises
    ------
    DropkinError
        If a file cannot be read or the sample is not described.
    """
    from ..liquids._library import resolve_fluids

    path = Path(radius_csv)
    series = read_radius_csv(path)
    if not len(series["frame"]):
        raise DropkinError("has no rows, only a header", path=path, expected="one row per frame")
    info = _read_info(path.with_name("measure.json"))
    if experiment is None:
        named = (info.get("provenance") or {}).get("experiment_file")
        if named and Path(named).is_file():
            exp = read_experiment(named)
        else:
            exp = load_experiment(path.parent)
            if exp.path is None:
                raise ExperimentError(
                    "no experiment file describes the sample",
                    path=path,
                    expected="--experiment FILE, or the experiment file named in measure.json",
                )
    elif isinstance(experiment, Experiment):
        exp = experiment
    else:
        exp = read_experiment(experiment)
    if overrides:
        exp = exp.with_overrides(overrides)
    if exp.drops.radius is None and info.get("drop_radius_m"):
        exp = replace(exp, drops=Drops(radius=float(info["drop_radius_m"])))
    if exp.setup.geometry is None and info.get("geometry"):
        exp = exp.with_overrides({"setup.geometry": info["geometry"]})
    return Measurement(series=series, info=info, experiment=resolve_fluids(exp), path=path)


def fit_measurement(measurement: Measurement, *, t0=None, seed: int = 0, bootstrap: int = 200):
    """The regime verdict for a measurement.

    Returns
    -------
    verdict : RegimeVerdict
        Falsy, with its reason, when the data cannot support a fit.
    numbers : SampleNumbers
    """
    from ..scaling import analyze_series, sample_numbers_from_experiment

    exp = measurement.experiment
    numbers = sample_numbers_from_experiment(exp)
    info, series = measurement.info, measurement.series
    contact = info.get("contact_time_s")
    if contact is None:
        since = series["since_contact_s"]
        finite = np.isfinite(since)
        if finite.any():
            first = int(np.argmax(finite))
            contact = float(series["time_s"][first] - since[first])
    if contact is None and t0 is None:
        raise DropkinError(
            "has no contact instant (measure.json's contact_time_s, or since_contact_s)",
            path=measurement.path,
        )
    err = info.get("contact_time_err_s")
    bracket = measured_bracket(contact, err, info.get("contact_bracket_s"))
    verdict = analyze_series(
        series["time_s"],
        series["radius_m"],
        series["radius_err_m"],
        series["status"],
        contact_time=contact if contact is not None else t0,
        contact_time_err=err if err is not None and math.isfinite(err) else None,
        contact_bracket=tuple(bracket) if bracket else None,
        numbers=numbers,
        geometry=exp.setup.geometry,
        view=exp.setup.view,
        t0=t0,
        seed=seed,
        bootstrap=bootstrap,
    )
    return verdict, numbers


def write_fit(verdict, out_dir) -> Path:
    """Write ``fit.json`` into `out_dir` atomically; return its path."""
    from ..scaling import verdict_to_dict

    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    text = json.dumps(verdict_to_dict(verdict), indent=2, allow_nan=False) + "\n"
    return write_text_atomic(out_dir / "fit.json", text)
