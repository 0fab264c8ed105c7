"""The text of ``radius.csv``: its columns and their names (read back by :mod:`._rows`).

The first columns are a contract (docs/architecture.md), in this order:
:data:`CSV_COLUMNS`. After them come the radii at the other edge levels, one
column per level, named by :func:`level_column` (``radius_level_0.4_m``);
a file without them (written before they existed) still reads. Last, for a
camera file whose header records its trigger, :data:`TRIGGER_COLUMN`: each
frame's time from the trigger (s, negative before it).
"""

from __future__ import annotations

import re

from ..errors import DropkinError

__all__ = [
    "CSV_COLUMNS",
    "TRIGGER_COLUMN",
    "ANGLE_COLUMNS",
    "level_column",
    "level_of_column",
    "header_levels",
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
