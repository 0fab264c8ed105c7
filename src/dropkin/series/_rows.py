"""Reading ``radius.csv`` (and ``angles.csv``): their rows checked, whole columns at a time.

The checks are those of a reading row by row, and the error is the one such
a reading meets first: the first bad line, and in it the first failed check
in this order: the number of fields; the frame; ``time_s``,
``since_contact_s``, ``radius_m``, ``radius_err_m`` (each: a number, finite,
not NaN, not negative but for the times); the status; a time; a radius for
an ``ok`` row; frames, then times, increasing from the row before; then the
other columns (edge levels, trigger) as the first numbers.
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np

from ..errors import DropkinError
from ..status import STATUSES, status_mask
from ._cells import Table, parse_floats, parse_ints, split_table
from ._csv import ANGLE_COLUMNS, CSV_COLUMNS, TRIGGER_COLUMN, header_levels, level_column

__all__ = ["read_columns", "read_angles"]

_SIGNED = ("time_s", TRIGGER_COLUMN)  # the columns that may hold negative numbers
_KNOWN = frozenset(STATUSES)


class _Checks:
    """The failed checks, kept to raise the one a row-by-row reading meets first."""

    def __init__(self, table: Table, path: Path):
        self.rows, self.path, self.order, self.failed = table.rows, path, 0, []

    def add(self, bad: np.ndarray, error) -> None:
        """`bad`: a mask of the rows failing a check; `error(i, line)`: its message."""
        self.order += 1
        if bad.any():
            first = int(np.argmax(bad))
            self.failed.append((first, self.order, error))

    def raise_first(self) -> None:
        if self.failed:
            first, _, error = min(self.failed, key=lambda f: f[:2])
            raise error(first, int(self.rows[first]) + 2)


def _numbers(checks: _Checks, cells, column: str, empty=None) -> np.ndarray:
    """A column of numbers (NaN where empty), its checks added to `checks`;
    `empty`: its empty cells, when known."""
    values, blank, not_number = parse_floats(cells, empty)
    path = checks.path

    def error(message, **more):
        return lambda i, line: DropkinError(
            f"line {line}: {column} {message}", path=path, value=cells[i], **more
        )

    checks.add(not_number, error("is not a number"))
    checks.add(np.isinf(values), error("is infinite"))
    nan_text = np.isnan(values) & ~blank & ~not_number  # the format leaves such cells empty
    checks.add(nan_text, error("is NaN", expected="a number, or nothing"))
    if column not in _SIGNED:
        checks.add(values < 0, error("is negative"))
    return values


def _frames(checks: _Checks, cells, *, in_range: bool = True) -> tuple[np.ndarray, np.ndarray]:
    """The frame numbers, and the mask of those beyond int64 (refused if `in_range`)."""
    frame, not_whole, out_of_range = parse_ints(cells)
    refused = [(not_whole, "is not a whole number")]
    refused += [(out_of_range, "is out of range")] if in_range else []
    for bad, message in refused:
        checks.add(
            bad,
            lambda i, line, message=message: DropkinError(
                f"line {line}: frame {message}", path=checks.path, value=cells[i]
            ),
        )
    return frame, out_of_range


def _statuses(checks: _Checks, cells) -> tuple:
    if _KNOWN.issuperset(cells):
        return tuple(cells)
    status = tuple(map(str.strip, cells))
    known = status_mask(status, *_KNOWN)
    checks.add(
        ~known,
        lambda i, line: DropkinError(
            f"line {line}: unknown status",
            path=checks.path,
            value=status[i],
            expected=" | ".join(STATUSES),
        ),
    )
    return status


def _increasing(checks: _Checks, values: np.ndarray, column: str, kind) -> None:
    """Each row's `column` above the row before's."""
    bad = np.zeros(len(values), dtype=bool)
    bad[1:] = ~(values[1:] > values[:-1])
    checks.add(
        bad,
        lambda i, line: DropkinError(
            f"line {line}: {column} does not increase (line {line - 1} has "
            f"{kind(values[i - 1])!r})",
            path=checks.path,
            value=kind(values[i]),
            expected="rows in the order of the frames, one per frame",
        ),
    )


def _row_checks(checks: _Checks, columns: dict) -> None:
    """The checks of a row's cells against each other and against the row before."""
    time, path = columns["time_s"], checks.path
    checks.add(
        np.isnan(time),
        lambda i, line: DropkinError(
            f"line {line}: time_s is empty", path=path, expected="a time in s"
        ),
    )
    ok = status_mask(columns["status"], "ok")
    checks.add(
        ok & ~(columns["radius_m"] > 0),
        lambda i, line: DropkinError(
            f"line {line}: status ok without a radius", path=path, expected="radius_m above 0"
        ),
    )
    _increasing(checks, columns["frame"], "frame", int)
    _increasing(checks, time, "time_s", float)


def _checked(table: Table, names: list, path: Path) -> dict:
    """The columns of `table` (named `names`), or the first error of its rows."""
    checks = _Checks(table, path)
    cells = table.columns or [()] * len(names)
    empty = [None] * len(names) if table.empty is None else list(table.empty.T)
    columns = {"frame": _frames(checks, cells[0])[0]}
    for k in range(1, 5):
        columns[names[k]] = _numbers(checks, cells[k], names[k], empty[k])
    columns["status"] = _statuses(checks, cells[5])
    _row_checks(checks, columns)
    extra = [_numbers(checks, cells[k], names[k], empty[k]) for k in range(6, len(names))]
    checks.raise_first()
    _same_widths(table, len(names), path)
    return {**columns, "extra": extra}


def _same_widths(table: Table, width: int, path: Path) -> None:
    """Refuse the first row of `table` not `width` cells wide (blank lines aside)."""
    if len(table.rows) < np.count_nonzero(table.widths):
        record = int(np.flatnonzero((table.widths != width) & (table.widths != 0))[0])
        raise DropkinError(
            f"line {record + 2}: has {int(table.widths[record])} fields",
            path=path,
            expected=str(width),
        )


def _table(path: Path) -> Table:
    """The records of the CSV file `path` (see :func:`~._cells.split_table`)."""
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise DropkinError(f"cannot be read ({exc})", path=path) from None
    try:
        return split_table(text)
    except csv.Error as exc:
        raise DropkinError(f"cannot be read as CSV ({exc})", path=path) from None


def read_columns(path: Path) -> dict:
    """The columns of a ``radius.csv``, checked as the module says.

    Returns
    -------
    dict
        Arrays by the names of :data:`CSV_COLUMNS` (``status`` a tuple of
        str), and ``level_radii``: the radii (m) at the other edge levels by
        level (empty without them), and :data:`TRIGGER_COLUMN` when the file
        has it.
    """
    table = _table(path)
    if table.header is None:
        raise DropkinError(
            "is empty", path=path, expected="a header line " + ",".join(CSV_COLUMNS)
        )
    levels, trigger = header_levels(table.header, path=path)
    names = [*CSV_COLUMNS, *map(level_column, levels), *[TRIGGER_COLUMN] * trigger]
    columns = _checked(table, names, path)
    extra = columns.pop("extra")
    columns["level_radii"] = dict(zip(levels, extra[: len(levels)], strict=True))
    if trigger:
        columns[TRIGGER_COLUMN] = extra[-1]
    return columns


def read_angles(path: Path, frames) -> np.ndarray:
    """The apparent contact angles of ``angles.csv``, one row per frame of `frames`.

    Returns
    -------
    (F, 2) ndarray
        Degrees at the left and right contact points, in the order of
        `frames`; NaN where the file has no angle (or no row) for a frame
        (the last of its rows, when it has several).

    Raises
    ------
    DropkinError
        Naming the file and the line, when the header is not
        :data:`ANGLE_COLUMNS`, a row has other than 4 cells, or a frame is not
        a whole number, an angle not a number, infinite, NaN or negative
        (empty cells are allowed: no angle). ``time_s`` is not read.
    """
    table = _table(path)
    if table.header is None or tuple(c.strip() for c in table.header) != ANGLE_COLUMNS:
        raise DropkinError(
            "has not the header of an angles file", path=path, expected=",".join(ANGLE_COLUMNS)
        )
    checks = _Checks(table, path)
    cells = table.columns or [()] * len(ANGLE_COLUMNS)
    empty = [None] * len(cells) if table.empty is None else list(table.empty.T)
    number, beyond = _frames(checks, cells[0], in_range=False)
    angles = [_numbers(checks, cells[k], ANGLE_COLUMNS[k], empty[k]) for k in (2, 3)]
    checks.raise_first()
    _same_widths(table, len(ANGLE_COLUMNS), path)
    return _by_frame(number[~beyond], np.column_stack(angles)[~beyond], frames)


def _by_frame(numbers: np.ndarray, values: np.ndarray, frames) -> np.ndarray:
    """The row of `values` for each of `frames` (its last row in `numbers`), NaN if none."""
    wanted = np.fromiter(map(int, frames), np.int64)
    out = np.full((len(wanted), values.shape[1]), np.nan)
    if not len(numbers):
        return out
    order = np.argsort(numbers, kind="stable")  # equal frames keep the file's order
    last = np.searchsorted(numbers[order], wanted, side="right") - 1
    found = (last >= 0) & (numbers[order][np.maximum(last, 0)] == wanted)
    out[found] = values[order[last[found]]]
    return out
