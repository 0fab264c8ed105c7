"""The text of ``radius.csv``: its columns, their names, and reading them back.

The first columns are a contract (docs/architecture.md), in this order:
:data:`CSV_COLUMNS`. After them come the radii at the other edge levels, one
column per level, named by :func:`level_column` (``radius_level_0.4_m``);
a file without them (written before they existed) still reads. Last, for a
camera file whose header records its trigger, :data:`TRIGGER_COLUMN`: each
frame's time from the trigger (s, negative before it).
"""

from __future__ import annotations

import csv
import io
import math
import re
from pathlib import Path

import numpy as np

from ..errors import DropkinError
from ..status import STATUSES

__all__ = [
    "CSV_COLUMNS",
    "TRIGGER_COLUMN",
    "ANGLE_COLUMNS",
    "level_column",
    "level_of_column",
    "read_columns",
    "read_angles",
]

CSV_COLUMNS = ("frame", "time_s", "since_contact_s", "radius_m", "radius_err_m", "status")

#: The optional last column: time from the camera's trigger (s).
TRIGGER_COLUMN = "time_since_trigger_s"

_LEVEL_COLUMN = re.compile(r"radius_level_([0-9]*\.?[0-9]+)_m")


def level_column(level: float) -> str:
    """The name of the column of the radius (m) at edge level `level`.

    Examples
    --------
    >>> level_column(0.4), level_of_column("radius_level_0.4_m")
    ('radius_level_0.4_m', 0.4)
    """
    return f"radius_level_{float(level):g}_m"


def level_of_column(name: str) -> float | None:
    """The edge level a column holds the radius at, or None if it is no such column."""
    match = _LEVEL_COLUMN.fullmatch(name.strip())
    if match is None:
        return None
    level = float(match.group(1))
    return level if 0.0 < level < 1.0 else None


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
    if value < 0 and column not in ("time_s", TRIGGER_COLUMN):
        raise DropkinError(f"line {line}: {column} is negative", path=path, value=text)
    return value


def _parse_row(row: list, previous: dict | None, *, path, line: int, width: int) -> dict:
    """A row's first cells (those of :data:`CSV_COLUMNS`), checked, and against
    each other and the row before it; `width` is the header's length."""
    if len(row) != width:
        raise DropkinError(f"line {line}: has {len(row)} fields", path=path, expected=str(width))
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
    if math.isnan(values["time_s"]):
        raise DropkinError(f"line {line}: time_s is empty", path=path, expected="a time in s")
    if values["status"] == "ok" and not values["radius_m"] > 0:
        raise DropkinError(
            f"line {line}: status ok without a radius", path=path, expected="radius_m above 0"
        )
    for column in ("frame", "time_s") if previous is not None else ():
        if not values[column] > previous[column]:
            raise DropkinError(
                f"line {line}: {column} does not increase (line {line - 1} has "
                f"{previous[column]!r})",
                path=path,
                value=values[column],
                expected="rows in the order of the frames, one per frame",
            )
    return values


def _header_levels(header, *, path) -> tuple[list[float], bool]:
    """The edge levels of the columns after :data:`CSV_COLUMNS` in a header, and
    whether :data:`TRIGGER_COLUMN` ends it."""
    names = tuple(c.strip() for c in header)
    expected = ",".join(CSV_COLUMNS) + f"[,radius_level_<level>_m ...][,{TRIGGER_COLUMN}]"
    if names[: len(CSV_COLUMNS)] != CSV_COLUMNS:
        raise DropkinError("has other columns than a radius series", path=path, expected=expected)
    trigger = len(names) > len(CSV_COLUMNS) and names[-1] == TRIGGER_COLUMN
    levels = [level_of_column(name) for name in names[len(CSV_COLUMNS) : len(names) - trigger]]
    if None in levels or len(set(levels)) != len(levels):
        raise DropkinError("has other columns than a radius series", path=path, expected=expected)
    return levels, trigger


def read_columns(path: Path) -> dict:
    """The columns of a ``radius.csv``, checked row by row.

    Returns
    -------
    dict
        Arrays by the names of :data:`CSV_COLUMNS`, and ``level_radii``: the
        radii (m) at the other edge levels by level (empty without them),
        and :data:`TRIGGER_COLUMN` when the file has it.
    """
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise DropkinError(f"cannot be read ({exc})", path=path) from None
    rows = list(csv.reader(io.StringIO(text)))
    if not rows:
        raise DropkinError(
            "is empty", path=path, expected="a header line " + ",".join(CSV_COLUMNS)
        )
    levels, trigger = _header_levels(rows[0], path=path)
    width = len(CSV_COLUMNS) + len(levels) + trigger
    parsed, extra, previous = [], [], None
    for line, row in enumerate(rows[1:], start=2):
        if row:
            previous = _parse_row(row, previous, path=path, line=line, width=width)
            parsed.append(previous)
            names = [*map(level_column, levels), *[TRIGGER_COLUMN] * trigger]
            extra.append(
                [
                    _parse_float(text, path=path, line=line, column=name)
                    for name, text in zip(names, row[len(CSV_COLUMNS) :], strict=True)
                ]
            )
    out = {c: np.asarray([v[c] for v in parsed], dtype=np.float64) for c in CSV_COLUMNS[1:5]}
    out["frame"] = np.asarray([v["frame"] for v in parsed], dtype=np.int64)
    out["status"] = tuple(v["status"] for v in parsed)
    values = np.asarray(extra, dtype=np.float64).reshape(len(parsed), len(levels) + trigger)
    out["level_radii"] = {level: values[:, i] for i, level in enumerate(levels)}
    if trigger:
        out[TRIGGER_COLUMN] = values[:, -1]
    return out


ANGLE_COLUMNS = ("frame", "time_s", "angle_left_deg", "angle_right_deg")


def read_angles(path: Path, frames) -> np.ndarray:
    """The apparent contact angles of ``angles.csv``, one row per frame of `frames`.

    Returns
    -------
    (F, 2) ndarray
        Degrees at the left and right contact points, in the order of
        `frames`; NaN where the file has no angle (or no row) for a frame.

    Raises
    ------
    DropkinError
        Naming the file and the line, when the header is not
        :data:`ANGLE_COLUMNS` or a cell is not a number (empty cells are
        allowed: no angle).
    """
    try:
        rows = list(csv.reader(io.StringIO(path.read_text(encoding="utf-8"))))
    except (OSError, UnicodeDecodeError) as exc:
        raise DropkinError(f"cannot be read ({exc})", path=path) from None
    if not rows or tuple(c.strip() for c in rows[0]) != ANGLE_COLUMNS:
        raise DropkinError(
            "has not the header of an angles file", path=path, expected=",".join(ANGLE_COLUMNS)
        )
    by_frame = {}
    for line, row in enumerate(rows[1:], start=2):
        if not row:
            continue
        if len(row) != len(ANGLE_COLUMNS):
            raise DropkinError(f"line {line}: has {len(row)} fields", path=path, expected="4")
        try:
            frame = int(row[0])
        except ValueError:
            raise DropkinError(
                f"line {line}: frame is not a whole number", path=path, value=row[0]
            ) from None
        by_frame[frame] = [
            _parse_float(text, path=path, line=line, column=column)
            for column, text in zip(ANGLE_COLUMNS[2:], row[2:], strict=True)
        ]
    nan = [math.nan, math.nan]
    return np.asarray([by_frame.get(int(f), nan) for f in frames], dtype=np.float64).reshape(-1, 2)
