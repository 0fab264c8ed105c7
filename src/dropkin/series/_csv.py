"""The text of ``radius.csv``: its columns and their names (read back by :mod:`._rows`).

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

__all__ = [
    "CSV_COLUMNS",
    "TRIGGER_COLUMN",
    "ANGLE_COLUMNS",
    "level_column",
    "level_of_column",
    "header_levels",
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


def header_levels(header, *, path) -> tuple[list[float], bool]:
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
