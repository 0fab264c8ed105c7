"""An analysis folder's files: ``fit.json`` written and read, the report redone from a folder.

A run passes its records in memory from step to step; the files are its
outputs. Reading them back is for later work on a finished folder: a fit of a
``radius.csv`` (``dropkin fit``), a report redone by a script
(:func:`write_analysis_outputs`), a campaign's master curves. Each file is read
once, into its record (:func:`dropkin.series.read_series`, :func:`read_fit`),
and the work then follows the same path as in the run.
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import TYPE_CHECKING

from .._atomic import write_text_atomic
from .._provenance import resolve_named
from ..errors import DropkinError, with_path
from ..series import read_series
from ._package import write_datapackage

if TYPE_CHECKING:
    from ..scaling import RegimeVerdict

__all__ = ["write_fit", "read_fit", "write_analysis_outputs"]


def write_fit(
    verdict: RegimeVerdict, out_dir, *, series=None, sample=None, provenance=None
) -> Path:
    """Write ``fit.json`` into `out_dir` atomically; return its path.

    With the `series` the verdict was fitted to, the file also holds
    ``time_origin``: the origin its times count from (the fitted t0) and the
    measured contact instant ``radius.csv``'s ``since_contact_s`` counts from
    (see :mod:`dropkin.report._origin`). With `sample` (see
    :meth:`~dropkin.pipeline._fit.Measurement.sample_record`), it holds the
    sample as fitted under ``settings.sample``. A `provenance` dict (see
    :func:`~dropkin.pipeline._record.fit_provenance`) is written last, as
    ``provenance``; reading the verdict back ignores it.
    """
    from ..scaling import verdict_to_dict  # scipy: imported when needed

    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    data = verdict_to_dict(verdict)
    if series is not None:
        from ..report import origin_dict, time_origin

        data["time_origin"] = origin_dict(time_origin(series, verdict))
    if sample is not None:
        data.setdefault("settings", {})["sample"] = sample
    if provenance is not None:
        data["provenance"] = provenance
    text = json.dumps(data, indent=2, allow_nan=False) + "\n"
    return write_text_atomic(out_dir / "fit.json", text)


def read_fit(path) -> RegimeVerdict:
    """Read a ``fit.json`` back into its verdict (see :func:`dropkin.scaling.verdict_from_dict`).

    Raises
    ------
    DropkinError
        If the file cannot be read, is not a JSON object, or is not the dict
        form of a verdict.
    """
    from ..scaling import verdict_from_dict

    path = Path(path)
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise DropkinError(f"cannot be read as JSON ({exc})", path=path) from None
    if not isinstance(data, dict):
        raise DropkinError("is not a JSON object", path=path)
    try:
        return verdict_from_dict(data)
    except DropkinError as exc:
        raise with_path(exc, path) from None
    except (KeyError, TypeError, ValueError, IndexError) as exc:
        raise DropkinError(f"is not a verdict ({type(exc).__name__}: {exc})", path=path) from None


def _named_experiment(series, folder):
    """The experiment file named in the series' provenance (relative to `folder`,
    where ``measure.json`` lies), when it can still be read."""
    from ..experiment import read_experiment

    named = series.provenance.get("experiment_file")
    if not named:
        return None
    try:
        return read_experiment(resolve_named(named, folder))
    except (DropkinError, OSError, ValueError):
        return None


def write_analysis_outputs(out_dir, *, experiment=None) -> Path:
    """Read an analysis folder's three files; write its plots, its report and its
    ``datapackage.json``.

    The files are ``radius.csv``, ``measure.json`` and ``fit.json`` (and
    ``angles.csv`` when there is one). A failed fit gets its plots and a
    report that says why, as in the run.

    Without `experiment`, the experiment file named in the measurement's
    provenance is read, when it is still there. Returns the report's path.
    """
    from ..report import write_analysis_report

    out_dir = Path(out_dir)
    series = read_series(out_dir / "radius.csv")
    verdict = read_fit(out_dir / "fit.json")
    if experiment is None:
        experiment = _named_experiment(series, out_dir)
    report = write_analysis_report(out_dir, series=series, verdict=verdict, experiment=experiment)
    write_datapackage(out_dir)  # the folder's files, the plots made again included
    return report
