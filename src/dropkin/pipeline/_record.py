"""The provenance ``measure.json`` and ``fit.json`` carry: enough to run the analysis again.

Paths are relative to the output folder (where it will be published, for a
campaign), read back with :func:`dropkin._provenance.resolve_named`. The
recording alone also keeps its absolute path (``input_absolute``): it is the
one input the output folder never holds, and the SHA-256 beside it tells
whether a file found there is the same recording. The run itself (command
line, options as typed, versions, platform, UTC time) is
:func:`dropkin._provenance.run_record`, with the working directory the command
line's relative paths count from (``cd`` there from the output folder and
paste the command line to run it again); the options as resolved are the
settings in SI units and the measurement's own fields (``frame_rate_hz``,
``pixel_size_m``...).
"""

from __future__ import annotations

import dataclasses
import os
from pathlib import Path

from .._provenance import relative_path, run_record

__all__ = [
    "measure_provenance",
    "fit_provenance",
    "resolved_settings",
    "write_experiment_copy",
]


def resolved_settings(settings, folder) -> dict:
    """An :class:`~dropkin.pipeline.AnalysisSettings` as JSON: SI values, the
    background image's path relative to `folder`."""
    resolved = dataclasses.asdict(settings)
    resolved["roi"] = None if settings.roi is None else list(settings.roi)
    if settings.background is not None:
        resolved["background"] = relative_path(settings.background, folder)
    return resolved


def measure_provenance(measured: dict, rec, experiment_file, settings, folder) -> dict:
    """``measure.json``'s provenance: `measured` (the measurement's own: tool,
    version, options) with the paths made relative to `folder`, the
    recording's SHA-256, where its frame rate came from, the settings as
    resolved and the run."""
    from ..measure import recording_sha256

    source = Path(rec.path)
    return {
        **measured,
        "input": relative_path(source, folder),
        "input_absolute": str(source.absolute()),
        "sha256": recording_sha256(rec),
        "experiment_file": None
        if experiment_file is None
        else relative_path(experiment_file, folder),
        "frame_rate_origin": getattr(rec, "frame_rate_origin", None),
        "settings": None if settings is None else resolved_settings(settings, folder),
        "run": _run(folder),
    }


def fit_provenance(measurement, out, published_dir, experiment_file, fit_settings) -> dict:
    """``fit.json``'s provenance: the ``radius.csv`` fitted (where it is published,
    when it lies in `out`) and the experiment file (`experiment_file`, else the
    measurement's), relative to the folder, the fit's settings as given, and the run."""
    from .._version import __version__

    folder = published_dir if published_dir is not None else out
    radius_csv = Path(measurement.path)
    if published_dir is not None and radius_csv.parent == Path(out):  # moved with `out`
        radius_csv = Path(published_dir) / radius_csv.name
    named = experiment_file if experiment_file is not None else measurement.experiment.path
    return {
        "tool": "dropkin",
        "version": __version__,
        "radius_csv": relative_path(radius_csv, folder),
        "experiment_file": None if named is None else relative_path(named, folder),
        "settings": dict(fit_settings),
        "run": _run(folder),
    }


def _run(folder) -> dict:
    """The run record, with the working directory (relative to `folder`) the
    command line's relative paths count from."""
    return {**run_record(), "working_directory": relative_path(os.getcwd(), folder)}


def write_experiment_copy(out: Path, exp, source, published_dir) -> Path:
    """``OUT/experiment.toml``, the experiment as used; the path the provenance names."""
    from .._atomic import write_text_atomic
    from ..experiment import experiment_to_toml

    out.mkdir(parents=True, exist_ok=True)
    write_text_atomic(
        out / "experiment.toml",
        experiment_to_toml(exp, header=f"The experiment as analysed, for {source}"),
    )
    return Path(published_dir if published_dir is not None else out) / "experiment.toml"
