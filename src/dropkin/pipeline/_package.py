"""``datapackage.json``: the output folder described as a Frictionless Data Package.

The tables (``radius.csv``, ``angles.csv``) are tabular data resources with
a Table Schema each (:func:`dropkin.series._schema.table_schema`: types,
units, descriptions, empty cells as missing, ``frame`` as primary key); the
other files (``measure.json``, ``fit.json``, ``experiment.toml``,
``report.html``, the plots and overlay frames) are plain data resources, so
the package lists everything the folder holds. The file holds no time and no
absolute path: two runs on the same data write the same package. A
campaign's ``catalogue.sqlite`` is a database, not a table file, and has no
package.
"""

from __future__ import annotations

import csv
import json
import re
from pathlib import Path

from .._atomic import write_text_atomic

__all__ = ["PACKAGE_NAME", "datapackage", "write_datapackage"]

PACKAGE_NAME = "datapackage.json"

_TABLES = {
    "radius.csv": (
        "radius",
        "The radius series: one row per frame, times in seconds and lengths in metres.",
    ),
    "angles.csv": (
        "angles",
        "Apparent contact angles of a spreading drop seen from the side, one row per frame.",
    ),
}

# file name: (resource name, format, media type, description)
_FILES = {
    "measure.json": (
        "measure",
        "json",
        "application/json",
        (
            "The measurement: contact instant, drop radius, frame rate, pixel size, edge levels "
            "and the provenance (input, options as given and as resolved, versions, platform)."
        ),
    ),
    "fit.json": (
        "fit",
        "json",
        "application/json",
        (
            "The regime verdict: candidate laws with exponents and prefactors and their 95 % "
            "intervals, the time origin, the fit's settings and its provenance."
        ),
    ),
    "experiment.toml": (
        "experiment",
        "toml",
        "application/toml",
        "The experiment as analysed (a campaign's recording).",
    ),
    "report.html": (
        "report",
        "html",
        "text/html",
        "The self-contained report: verdict, plots, overlay frames, provenance.",
    ),
}

_FOLDERS = {
    "plots": ("plot", "A figure of the report."),
    "overlays": ("overlay", "A frame with the measured outline drawn over it."),
}

_IMAGE_TYPES = {".png": "image/png", ".svg": "image/svg+xml", ".pdf": "application/pdf"}


def _header(path: Path) -> list[str]:
    with path.open(encoding="utf-8", newline="") as handle:
        return next(csv.reader(handle), [])


def _table(path: Path, name: str, text: str) -> dict:
    from ..series._schema import table_schema

    return {
        "name": name,
        "path": path.name,
        "profile": "tabular-data-resource",
        "format": "csv",
        "mediatype": "text/csv",
        "encoding": "utf-8",
        "description": text,
        "schema": table_schema([c.strip() for c in _header(path)]),
    }


def _resource_name(text: str) -> str:
    """A resource name the standard allows: lower case, digits, ``-._``."""
    return re.sub(r"[^-a-z0-9._]+", "-", text.lower()).strip("-")


def _folder_resources(out: Path) -> list[dict]:
    resources = []
    for folder, (prefix, text) in _FOLDERS.items():
        files = sorted((out / folder).glob("*")) if (out / folder).is_dir() else []
        for path in files:
            if path.suffix in _IMAGE_TYPES and not path.name.startswith("."):
                resources.append(
                    {
                        "name": _resource_name(f"{prefix}-{path.stem}{path.suffix}"),
                        "path": f"{folder}/{path.name}",
                        "format": path.suffix[1:],
                        "mediatype": _IMAGE_TYPES[path.suffix],
                        "description": text,
                    }
                )
    return resources


def datapackage(out) -> dict:
    """The Data Package descriptor of the output folder `out`, from the files it holds."""
    out = Path(out)
    resources = [
        _table(out / name, resource, text)
        for name, (resource, text) in _TABLES.items()
        if (out / name).is_file()
    ]
    for name, (resource, fmt, mediatype, text) in _FILES.items():
        if (out / name).is_file():
            resources.append(
                {
                    "name": resource,
                    "path": name,
                    "format": fmt,
                    "mediatype": mediatype,
                    "description": text,
                }
            )
    resources.extend(_folder_resources(out))
    return {
        "name": "dropkin-outputs",
        "title": "Outputs of a dropkin analysis",
        "description": (
            "Radius series, measurement, verdict and report of one recording, written by "
            "dropkin. Times are in seconds and lengths in metres (SI); each column's unit is "
            "in its description and its unit property. measure.json's provenance says how "
            "to run the analysis again."
        ),
        "profile": "data-package",
        "resources": resources,
    }


def write_datapackage(out) -> Path:
    """Write ``OUT/datapackage.json`` (atomically) for the files `out` holds; its path."""
    text = json.dumps(datapackage(out), indent=2, ensure_ascii=False) + "\n"
    return write_text_atomic(Path(out) / PACKAGE_NAME, text)
