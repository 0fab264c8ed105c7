"""The radius series: one number per frame, and its files (``radius.csv``, ``measure.json``).

:class:`RadiusSeries` travels from measuring to the fit and the report. On disk
it is its columns (:func:`series_to_csv`) and the rest (:func:`series_to_dict`);
:func:`series_from_dict` builds it back from the two, :func:`read_series` reads them.

The CSV columns are a contract (docs/architecture.md), in this order:
``frame, time_s, since_contact_s, radius_m, radius_err_m, status``. Times
count from the first frame; ``since_contact_s`` is empty before contact (and
everywhere when the contact instant is unknown); ``radius_m`` and
``radius_err_m`` are empty where a frame has no measurement. After them come
the radii at the other edge levels (``radius_level_0.4_m``...; see
:mod:`dropkin.series._csv`), empty where not measured, and, for a recording
whose camera header records its trigger, ``time_since_trigger_s``.
"""

from __future__ import annotations

import csv
import io
import json
import math
from collections import Counter
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from .._atomic import write_text_atomic
from ..errors import DropkinError
from ..status import STATUSES, status_mask
from ._csv import (
    ANGLE_COLUMNS,
    CSV_COLUMNS,
    TRIGGER_COLUMN,
    level_column,
)
from ._frame import series_frame
from ._rows import read_angles, read_columns

__all__ = [
    "STATUSES",
    "CSV_COLUMNS",
    "RadiusSeries",
    "series_to_dict",
    "series_from_dict",
    "series_to_csv",
    "write_series",
    "read_radius_csv",
    "read_series",
    "level_column",
]


@dataclass(frozen=True)
class RadiusSeries:
    """Neck or contact radius in every frame, in SI units.

    Attributes
    ----------
    frame : (F,) ndarray of int
        Frame index in the recording (after ``first_frame`` is applied, it
        still counts from the file's first frame).
    time : (F,) ndarray
        Time of each frame from the first frame kept (s).
    radius : (F,) ndarray
        Neck radius (coalescence) or contact radius (spreading), m; NaN where
        there is no measurement.
    radius_err : (F,) ndarray
        Standard uncertainty of `radius` (m); NaN where there is none.
    status : tuple of str
        One of :data:`STATUSES` per frame.
    contact_time : float or None
        Instant of first contact (s, same origin as `time`); None if unknown.
    contact_time_err : float or None
        Its standard uncertainty (s).
    drop_radius : float or None
        Drop radius (m), given or measured.
    geometry, view : str or None
        As in the experiment file (None for a ``radius.csv`` read alone).
    frame_rate : float or None
        Frames per second (Hz).
    pixel_size : float or None
        Length of one pixel (m); None for a ``radius.csv`` read alone.
    provenance : dict
        Tool version, input path and SHA-256, options.
    details : dict
        Further facts for ``measure.json`` (JSON-ready): method notes, the
        contact bracket, per-frame reasons for frames without a radius.
    angles : (F, 2) ndarray or None
        Apparent contact angle (degrees) at the left and right contact
        points (spreading, side view); None otherwise.
    level_radii : Mapping of float to (F,) ndarray
        The radius (m) of the same frames measured at other edge levels (the
        fraction of the way from the dark rim to the background at which the
        outline lies, as ``details["edge_level"]`` for `radius`), by level,
        in increasing order; NaN where not measured. Their spread is the
        fit's systematic interval. Empty when only one level was measured.
    trigger_time : float or None
        The camera's trigger instant (s, same origin as `time`), when the
        recording's header gives it; ``time - trigger_time`` is radius.csv's
        ``time_since_trigger_s``.
    """

    frame: np.ndarray
    time: np.ndarray
    radius: np.ndarray
    radius_err: np.ndarray
    status: tuple
    contact_time: float | None
    contact_time_err: float | None
    drop_radius: float | None
    geometry: str | None
    view: str | None
    frame_rate: float | None
    pixel_size: float | None
    provenance: dict = field(default_factory=dict)
    details: dict = field(default_factory=dict)
    angles: np.ndarray | None = None
    level_radii: Mapping = field(default_factory=dict)
    trigger_time: float | None = None

    def __post_init__(self):
        n = len(self.frame)
        for name in ("time", "radius", "radius_err", "status"):
            if len(getattr(self, name)) != n:
                raise ValueError(f"{name} has {len(getattr(self, name))} values, frame has {n}")
        for level, values in self.level_radii.items():
            if not 0.0 < level < 1.0 or np.shape(values) != (n,):
                raise ValueError(
                    f"level_radii[{level!r}] must be {n} radii at a level between 0 and 1"
                )
        bad = set(self.status) - set(STATUSES)
        if bad:
            raise ValueError(f"unknown status {sorted(bad)[0]!r}; allowed: {', '.join(STATUSES)}")

    def __len__(self) -> int:
        return len(self.frame)

    @property
    def since_contact(self) -> np.ndarray:
        """Time since contact (s); NaN before contact or when it is unknown."""
        if self.contact_time is None:
            return np.full(len(self), np.nan)
        since = np.asarray(self.time, dtype=np.float64) - self.contact_time
        return np.where(since >= 0, since, np.nan)

    def to_pandas(self):
        """The series as a pandas DataFrame: the columns of ``radius.csv`` (then
        ``angles.csv``'s angles), NaN where the file leaves a cell empty."""
        return series_frame(self)

    @property
    def ok(self) -> np.ndarray:
        """Boolean mask of the frames with status ``ok``."""
        return status_mask(self.status, "ok")

    @property
    def status_counts(self) -> dict[str, int]:
        """Frames of each status, every status of :data:`STATUSES` in its order."""
        counts = Counter(self.status)
        return {name: counts[name] for name in STATUSES}


# measure.json keys that hold a field of the record; the keys besides these,
# the counts (derived from the columns) and the provenance are its details.
_INFO_FIELDS = {
    "contact_time_s": "contact_time",
    "contact_time_err_s": "contact_time_err",
    "drop_radius_m": "drop_radius",
    "geometry": "geometry",
    "view": "view",
    "frame_rate_hz": "frame_rate",
    "pixel_size_m": "pixel_size",
}
_NOT_DETAILS = {*_INFO_FIELDS, "trigger_time_s", "frames", "status_counts", "provenance"}


def series_to_dict(series: RadiusSeries) -> dict:
    """The content of ``measure.json`` (JSON-ready): all of the record but its columns."""
    fields = {key: getattr(series, name) for key, name in _INFO_FIELDS.items()}
    if series.trigger_time is not None:  # only camera files have one
        fields["trigger_time_s"] = series.trigger_time
    counts = {"frames": len(series), "status_counts": series.status_counts}
    return {**fields, **counts, **series.details, "provenance": series.provenance}


def _contact_from_since(time: np.ndarray, since: np.ndarray) -> float | None:
    """The contact instant the ``since_contact_s`` column implies (its first value)."""
    finite = np.isfinite(since)
    if not finite.any():
        return None
    first = int(np.argmax(finite))
    contact = float(time[first]) - float(since[first])
    return contact if math.isfinite(contact) else None


def series_from_dict(info: Mapping, columns: Mapping) -> RadiusSeries:
    """The record from the content of ``measure.json`` and the columns of ``radius.csv``.

    Parameters
    ----------
    info : Mapping
        As :func:`series_to_dict` gives it; may be empty (a ``radius.csv``
        alone), and then the contact instant is the one ``since_contact_s``
        implies.
    columns : Mapping
        Arrays by the names of :data:`CSV_COLUMNS`, as the CSV holds them,
        and optionally ``level_radii`` (radii by edge level, as the
        ``radius_level_*_m`` columns hold them).
    """
    values = {name: info.get(key) for key, name in _INFO_FIELDS.items()}
    if values["contact_time"] is None:
        values["contact_time"] = _contact_from_since(columns["time_s"], columns["since_contact_s"])
    details = {k: v for k, v in info.items() if k not in _NOT_DETAILS}
    trigger = info.get("trigger_time_s")
    since_trigger = columns.get(TRIGGER_COLUMN)
    if trigger is None and since_trigger is not None and len(since_trigger):
        trigger = float(columns["time_s"][0] - since_trigger[0])
    return RadiusSeries(
        frame=columns["frame"],
        time=columns["time_s"],
        radius=columns["radius_m"],
        radius_err=columns["radius_err_m"],
        status=tuple(columns["status"]),
        provenance=dict(info.get("provenance") or {}),
        details=details,
        level_radii=dict(sorted((columns.get("level_radii") or {}).items())),
        trigger_time=trigger,
        **values,
    )


def _number(value: float) -> str:
    return "" if value is None or not math.isfinite(value) else repr(float(value))


def _csv_text(header, rows) -> str:
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(header)
    writer.writerows(rows)
    return buffer.getvalue()


def series_to_csv(series: RadiusSeries) -> str:
    """The text of ``radius.csv``: the columns of :data:`CSV_COLUMNS`, then the
    radius at each other edge level, then the time from the trigger (when known)."""
    columns = (series.time, series.since_contact, series.radius, series.radius_err)
    levels = sorted(series.level_radii)
    header = (*CSV_COLUMNS, *map(level_column, levels))
    others = [series.level_radii[v] for v in levels]
    if series.trigger_time is not None:
        header += (TRIGGER_COLUMN,)
        others.append(np.asarray(series.time, dtype=np.float64) - series.trigger_time)
    others = np.column_stack(others or [np.empty((len(series), 0))])
    rows = zip(series.frame, *columns, series.status, others, strict=True)
    return _csv_text(
        header,
        ([int(f), *map(_number, v), s, *map(_number, o)] for f, *v, s, o in rows),
    )


def write_series(series: RadiusSeries, out_dir) -> tuple[Path, Path]:
    """Write ``radius.csv`` and ``measure.json`` (and ``angles.csv``, the apparent
    contact angles, when the series has them) into `out_dir`, each atomically."""
    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    if series.angles is not None:
        rows = zip(series.frame, series.time, series.angles, strict=True)
        angles = ([int(f), _number(t), *map(_number, a)] for f, t, a in rows)
        write_text_atomic(out_dir / "angles.csv", _csv_text(ANGLE_COLUMNS, angles))
    csv_path = write_text_atomic(out_dir / "radius.csv", series_to_csv(series))
    json_text = json.dumps(series_to_dict(series), indent=2, allow_nan=False) + "\n"
    json_path = write_text_atomic(out_dir / "measure.json", json_text)
    return csv_path, json_path


def read_radius_csv(path) -> RadiusSeries:
    """Read a ``radius.csv`` alone into a :class:`RadiusSeries`.

    The contact instant is the one ``since_contact_s`` implies (None when
    that column is empty); what only ``measure.json`` knows (geometry, pixel
    size, provenance...) is None or empty. :func:`read_series` reads both.

    Raises
    ------
    DropkinError
        If the file is missing, has other columns, or holds a value that is
        not a number or not a known status, a NaN (the format leaves such
        cells empty), a negative radius, uncertainty or time since contact, a
        row without a time, an ``ok`` row without a radius, or rows whose
        frames or times do not increase; the message names the line.
    """
    return series_from_dict({}, read_columns(Path(path)))


def _valid_number(value) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool) and math.isfinite(value)


def _valid_bracket(value) -> bool:
    pair = isinstance(value, list) and len(value) == 2 and all(map(_valid_number, value))
    return pair and value[0] <= value[1]


# What the fit reads from measure.json: key -> (test, what it must be).
_INFO_KEYS = {
    "contact_time_s": (_valid_number, "a finite time in s"),
    "contact_time_err_s": (lambda v: _valid_number(v) and v >= 0, "a finite time >= 0 in s"),
    "contact_bracket_s": (_valid_bracket, "two finite times [lo, hi] in s, lo <= hi"),
    "drop_radius_m": (lambda v: _valid_number(v) and v > 0, "a length above 0 in m"),
    "geometry": (lambda v: v in ("coalescence", "spreading"), "coalescence or spreading"),
}


def _read_info(path: Path) -> dict:
    """The content of a ``measure.json`` (empty when there is none), checked."""
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


def read_series(radius_csv) -> RadiusSeries:
    """Read a ``radius.csv`` with the ``measure.json`` and ``angles.csv`` beside it.

    Raises
    ------
    DropkinError
        As :func:`read_radius_csv`; if the CSV has no rows; if
        ``measure.json`` is not a JSON object or holds a bad contact instant,
        uncertainty or bracket, drop radius, geometry or provenance.
    """
    path = Path(radius_csv)
    columns = read_columns(path)
    if not len(columns["frame"]):
        raise DropkinError("has no rows, only a header", path=path, expected="one row per frame")
    series = series_from_dict(_read_info(path.with_name("measure.json")), columns)
    angles = path.with_name("angles.csv")
    if angles.is_file():
        series = replace(series, angles=read_angles(angles, series.frame))
    return series
