"""An analysis folder's files: made whole or not at all, ``fit.json`` written and read,
the report redone from a folder.

Every command that writes an analysis folder builds it aside and publishes
it in one step (:func:`output_folder`, on :func:`dropkin._atomic.staged_folder`):
a run that fails leaves the folder as it was, and a folder holding the
results of another run is refused (:func:`claim_output_folder`) unless
``--overwrite`` asks to replace it whole. ``dropkin fit`` into the folder of
its own ``radius.csv`` carries the measurement's files (:data:`MEASURE_OUTPUTS`)
into the new folder and replaces only what a fit writes.

A run passes its records in memory from step to step; the files are its
outputs. Reading them back is for later work on a finished folder: a fit of a
``radius.csv`` (``dropkin fit``), a report redone by a script
(:func:`write_analysis_outputs`), a campaign's master curves. Each file is read
once, into its record (:func:`dropkin.series.read_series`, :func:`read_fit`),
and the work then follows the same path as in the run.
"""

from __future__ import annotations

import json
import os
from contextlib import contextmanager
from pathlib import Path
from typing import TYPE_CHECKING

from .._atomic import TEMPORARY_PREFIX, replaceable_target, staged_folder, write_text_atomic
from .._provenance import resolve_named
from ..errors import DropkinError, with_path
from ..series import read_series
from ._package import write_datapackage

if TYPE_CHECKING:
    from ..scaling import RegimeVerdict

__all__ = [
    "MEASURE_OUTPUTS",
    "FIT_OUTPUTS",
    "claim_output_folder",
    "output_folder",
    "write_fit",
    "read_fit",
    "write_analysis_outputs",
]

#: What a measurement writes into its folder (``experiment.toml``: a campaign's copy).
MEASURE_OUTPUTS = ("radius.csv", "measure.json", "angles.csv", "overlays", "experiment.toml")
#: What a fit writes into its folder.
FIT_OUTPUTS = ("fit.json", "plots", "report.html")
#: Every name dropkin writes into an analysis folder; ``--overwrite`` replaces
#: only a folder holding nothing else.
_OURS = frozenset((*MEASURE_OUTPUTS, *FIT_OUTPUTS, "datapackage.json"))


def _entries(folder: Path) -> list[str]:
    """The names in `folder`, without the temporaries a killed run left."""
    if not folder.is_dir():
        return []
    return sorted(e for e in os.listdir(folder) if not str(e).startswith(TEMPORARY_PREFIX))


def claim_output_folder(out, *, overwrite: bool = False, keep=(), replaced=()) -> Path:
    """The folder a command may build `out` as; refuse one holding another run's results.

    `out` may be new or empty. A folder holding anything but the names in
    `keep` (a step's inputs in its own folder, carried into the new folder),
    those in `replaced` (the outputs of an earlier run of the same step on
    the same inputs, replaced whole) and ``datapackage.json`` is refused,
    unless `overwrite`; even then a
    folder holding files dropkin does not write (frames, notes) is refused,
    so that ``--overwrite`` never removes them. The working directory (or a
    folder holding it) is refused in any case: it would be replaced under
    the shell's feet.
    A symbolic link is followed: the folder it names is the one replaced.

    Raises
    ------
    DropkinError
        Naming the folder and what it holds.
    """
    target = replaceable_target(out, DropkinError)
    mine = {*keep, *replaced, "datapackage.json"}
    others = [e for e in _entries(target) if e not in mine]
    if not others:
        return target
    shown = ", ".join(others[:4]) + (", ..." if len(others) > 4 else "")
    if not overwrite:
        raise DropkinError(
            f"already holds the results of another run ({shown}); give a new or empty "
            "folder, or --overwrite to replace it whole",
            path=out,
        )
    foreign = [e for e in _entries(target) if e not in {*_OURS, *keep, *replaced}]
    if foreign:
        raise DropkinError(
            f"holds files dropkin does not write ({', '.join(foreign[:4])}); --overwrite "
            "replaces only an output folder: give a new or empty folder",
            path=out,
        )
    return target


@contextmanager
def output_folder(out, *, overwrite: bool = False, keep=(), replaced=(), publish_on=()):
    """Yield a new folder to write `out`'s outputs into; publish it as `out`, whole.

    `out` is first claimed (:func:`claim_output_folder`, with `keep` and
    `replaced`); the names in `keep`
    that `out` holds are carried into the new folder. When the block raises,
    `out` is left as it was, except after an exception of `publish_on` (a
    run that ends with what it measured, say), when what the block wrote is
    published all the same.
    """
    target = claim_output_folder(out, overwrite=overwrite, keep=keep, replaced=replaced)
    present = [name for name in dict.fromkeys(keep) if (target / name).exists()]
    with staged_folder(target, keep=present, publish_on=publish_on) as stage:
        yield stage


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
