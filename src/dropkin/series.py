"""The radius series: one number per frame, and its files (``radius.csv``, ``measure.json``).

The CSV columns are a contract (see the design notes), in this order:
``frame, time_s, since_contact_s, radius_m, radius_err_m, status``. Times
count from the first frame; ``since_contact_s`` is empty before contact (and
everywhere when the contact instant is unknown); ``radius_m`` and
``radius_err_m`` are empty where a frame has no measurement.
"""

from __future__ import annotations

import csv
import io
import json
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ._atomic import write_text_atomic
from .errors import DropkinError
from .status import STATUSES

__all__ = [
    "STATUSES",
    "CSV_COLUMNS",
    "RadiusSeries",
    "write_series",
    "read_radius_csv",
    "series_to_csv",
    "series_summary",
]

CSV_COLUMNS = ("frame", "time_s", "since_contact_s", "radius_m", "radius_err_m", "status")


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
    geometry, view : str
        As in the experiment file.
    frame_rate : float or None
        Frames per second (Hz).
    pixel_size : float
        Length of one pixel (m).
    provenance : dict
        Tool version, input path and SHA-256, options.
    details : dict
        Further facts for ``measure.json`` (JSON-ready): method notes, the
        contact bracket, per-frame reasons for frames without a radius.
    angles : (F, 2) ndarray or None
        Apparent contact angle (degrees) at the left and right contact
        points (spreading, side view); None otherwise.
    """

    frame: np.ndarray
    time: np.ndarray
    radius: np.ndarray
    radius_err: np.ndarray
    status: tuple
    contact_time: float | None
    contact_time_err: float | None
    drop_radius: float | None
    geometry: str
    view: str
    frame_rate: float | None
    pixel_size: float
    provenance: dict = field(default_factory=dict)
    details: dict = field(default_factory=dict)
    angles: np.ndarray | None = None

    def __post_init__(self):
        n = len(self.frame)
        for name in ("time", "radius", "radius_err", "status"):
            if len(getattr(self, name)) != n:
                raise ValueError(f"{name} has {len(getattr(self, name))} values, frame has {n}")
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

    @property
    def ok(self) -> np.ndarray:
        """Boolean mask of the frames with status ``ok``."""
        return np.array([s == "ok" for s in self.status], dtype=bool)


def _number(value: float) -> str:
    return "" if value is None or not math.isfinite(value) else repr(float(value))


def series_to_csv(series: RadiusSeries) -> str:
    """The text of ``radius.csv``."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(CSV_COLUMNS)
    since = series.since_contact
    for i in range(len(series)):
        writer.writerow(
            [
                int(series.frame[i]),
                _number(series.time[i]),
                _number(since[i]),
                _number(series.radius[i]),
                _number(series.radius_err[i]),
                series.status[i],
            ]
        )
    return buffer.getvalue()


def series_summary(series: RadiusSeries) -> dict:
    """The content of ``measure.json`` (JSON-ready)."""
    counts = {name: int(sum(s == name for s in series.status)) for name in STATUSES}
    return {
        "contact_time_s": series.contact_time,
        "contact_time_err_s": series.contact_time_err,
        "drop_radius_m": series.drop_radius,
        "geometry": series.geometry,
        "view": series.view,
        "frame_rate_hz": series.frame_rate,
        "pixel_size_m": series.pixel_size,
        "frames": len(series),
        "status_counts": counts,
        **series.details,
        "provenance": series.provenance,
    }


ANGLE_COLUMNS = ("frame", "time_s", "angle_left_deg", "angle_right_deg")


def angles_to_csv(series: RadiusSeries) -> str:
    """The text of ``angles.csv``: apparent contact angles per frame."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(ANGLE_COLUMNS)
    for i in range(len(series)):
        left, right = series.angles[i]
        writer.writerow(
            [int(series.frame[i]), _number(series.time[i]), _number(left), _number(right)]
        )
    return buffer.getvalue()


def write_series(series: RadiusSeries, out_dir) -> tuple[Path, Path]:
    """Write ``radius.csv`` and ``measure.json`` (and ``angles.csv`` when the
    series has contact angles) into `out_dir`, each atomically."""
    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    if series.angles is not None:
        write_text_atomic(out_dir / "angles.csv", angles_to_csv(series))
    csv_path = write_text_atomic(out_dir / "radius.csv", series_to_csv(series))
    json_text = json.dumps(series_summary(series), indent=2, allow_nan=False) + "\n"
    json_path = write_text_atomic(out_dir / "measure.json", json_text)
    return csv_path, json_path


def _parse_float(text: str, *, path, line: int, column: str) -> float:
    if text.strip() == "":
        return math.nan
    try:
        value = float(text)
    except ValueError:
        raise DropkinError(
            f"line {line}: {column} is not a number", path=path, value=text
        ) from None
    if math.isinf(value):
        raise DropkinError(f"line {line}: {column} is infinite", path=path, value=text)
    if math.isnan(value):  # the format leaves a cell empty where there is no value
        raise DropkinError(
            f"line {line}: {column} is NaN", path=path, value=text, expected="a number, or nothing"
        )
    if value < 0 and column != "time_s":
        raise DropkinError(f"line {line}: {column} is negative", path=path, value=text)
    return value


def _check_row(values: dict, previous: dict | None, *, path, line: int) -> None:
    """A row's cells against each other and against the row before it."""
    if math.isnan(values["time_s"]):
        raise DropkinError(f"line {line}: time_s is empty", path=path, expected="a time in s")
    if values["status"] == "ok" and not values["radius_m"] > 0:
        raise DropkinError(
            f"line {line}: status ok without a radius", path=path, expected="radius_m above 0"
        )
    if previous is None:
        return
    for column in ("frame", "time_s"):
        if not values[column] > previous[column]:
            raise DropkinError(
                f"line {line}: {column} does not increase (line {line - 1} has "
                f"{previous[column]!r})",
                path=path,
                value=values[column],
                expected="rows in the order of the frames, one per frame",
            )


def read_radius_csv(path) -> dict:
    """Read a ``radius.csv`` back into arrays.

    Returns
    -------
    dict
        ``frame`` (int array), ``time_s``, ``since_contact_s``, ``radius_m``,
        ``radius_err_m`` (float arrays, NaN where empty) and ``status``
        (tuple of str).

    Raises
    ------
    DropkinError
        If the file is missing, has other columns, or holds a value that is
        not a number or not a known status, a NaN (the format leaves such
        cells empty), a negative radius, uncertainty or time since contact, a
        row without a time, an ``ok`` row without a radius, or rows whose
        frames or times do not increase; the message names the line.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise DropkinError(f"cannot be read ({exc})", path=path) from None
    rows = list(csv.reader(io.StringIO(text)))
    if not rows:
        raise DropkinError(
            "is empty", path=path, expected="a header line " + ",".join(CSV_COLUMNS)
        )
    if tuple(c.strip() for c in rows[0]) != CSV_COLUMNS:
        raise DropkinError(
            "has other columns than a radius series",
            path=path,
            expected=",".join(CSV_COLUMNS),
        )
    data = {name: [] for name in CSV_COLUMNS}
    previous = None
    for line, row in enumerate(rows[1:], start=2):
        if not row:
            continue
        if len(row) != len(CSV_COLUMNS):
            raise DropkinError(
                f"line {line}: has {len(row)} fields", path=path, expected=str(len(CSV_COLUMNS))
            )
        try:
            values = {"frame": int(row[0])}
        except ValueError:
            raise DropkinError(
                f"line {line}: frame is not a whole number", path=path, value=row[0]
            ) from None
        for column, text in zip(CSV_COLUMNS[1:5], row[1:5], strict=True):
            values[column] = _parse_float(text, path=path, line=line, column=column)
        values["status"] = row[5].strip()
        if values["status"] not in STATUSES:
            raise DropkinError(
                f"line {line}: unknown status",
                path=path,
                value=values["status"],
                expected=" | ".join(STATUSES),
            )
        _check_row(values, previous, path=path, line=line)
        previous = values
        for name in CSV_COLUMNS:
            data[name].append(values[name])
    out = {name: np.asarray(data[name], dtype=np.float64) for name in CSV_COLUMNS[1:5]}
    out["frame"] = np.asarray(data["frame"], dtype=np.int64)
    out["status"] = tuple(data["status"])
    return out
