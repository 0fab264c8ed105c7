"""A CSV text as columns of cells, and columns of cells as numbers, whole columns at a time.

The rows are those of :func:`csv.reader` (the ``excel`` dialect); the cells
are converted by :func:`float` and :func:`int`, so values and refusals are
those of a row-by-row reading. Python's loops run in C here (``str.split``,
``map``, ``numpy.fromiter``); a cell-by-cell Python loop runs only for a
column that holds a cell those cannot take (a blank cell of spaces, text),
to find which cells are at fault.
"""

from __future__ import annotations

import csv
import io
import itertools
import operator
from dataclasses import dataclass

import numpy as np

__all__ = ["Table", "split_table", "parse_floats", "parse_ints"]


@dataclass(frozen=True)
class Table:
    """The records of a CSV text after its header.

    Attributes
    ----------
    header : list of str or None
        The first record's cells; None for a text of no records.
    widths : (R,) ndarray of int
        Cells in each record after the header (0 for a blank line).
    rows : (N,) ndarray of int
        The index (in `widths`) of each record given to `columns`: the
        non-blank records as wide as the header, before the first of
        another width.
    columns : list of sequences of str
        One per cell of the header, each of N cells (none when N is 0).
    empty : (N, W) ndarray of bool or None
        The empty cells of `columns`, when known.
    """

    header: list | None
    widths: np.ndarray
    rows: np.ndarray
    columns: list
    empty: np.ndarray | None = None


def _layout(text: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(the end of each line, the commas in each line, the end of each cell).

    A line ends at a newline or at the end of the text, a cell there or at a
    comma. Offsets are those of the text in UTF-8, which writes a comma or a
    newline as that byte only: the counts are those of the characters, and a
    cell is empty where it ends one byte after the cell before it.
    """
    data = np.frombuffer(text.encode("utf-8"), dtype=np.uint8)
    separator = data == 44
    commas = np.flatnonzero(separator)
    newline = data == 10
    ends = np.flatnonzero(newline)
    cells = np.flatnonzero(np.logical_or(separator, newline, out=separator))
    if len(data) and data[-1] != 10:
        ends, cells = np.append(ends, len(data)), np.append(cells, len(data))
    return ends, np.diff(np.searchsorted(commas, ends), prepend=0), cells


def _split_lines(text: str) -> Table:
    """The records of a text without quotes, NUL or CR, each line split at its commas."""
    ends, commas, cell_ends = _layout(text)
    if not len(ends):
        return Table(None, np.zeros(0, np.int64), np.zeros(0, np.int64), [])
    first, rest = text.split("\n", 1) if len(ends) > 1 else (text.removesuffix("\n"), "")
    header = first.split(",") if first else []
    starts = np.concatenate(([0], ends[:-1] + 1))
    widths = np.where(ends > starts, commas + 1, 0)[1:]
    width, n = len(header), len(widths)
    body = rest.removesuffix("\n")
    if not n or not width or not np.all(widths == width):  # blank lines, other widths
        lines = body.split("\n")
        return _columns(header, widths, lines, lambda kept: ",".join(kept).split(","))
    cells = body.replace("\n", ",").split(",")
    empty = np.diff(cell_ends)[width - 1 :] == 1  # the header's cells are the first
    columns = [cells[k::width] for k in range(width)]
    return Table(header, widths, np.arange(n), columns, empty.reshape(n, width))


def _columns(header, widths, body, cells_of) -> Table:
    """The records of `body` (one per entry of `widths`) as wide as the header
    and before the first of another width, as columns; `cells_of(records)`:
    their cells, row after row."""
    width = len(header)
    other = np.flatnonzero((widths != width) & (widths != 0))
    end = int(other[0]) if len(other) else len(widths)
    rows = np.flatnonzero(widths[:end] > 0)
    if not len(rows):
        return Table(header, widths, rows, [])
    kept = body[:end] if len(rows) == end else [body[i] for i in rows.tolist()]
    cells = cells_of(kept)
    return Table(header, widths, rows, [cells[k::width] for k in range(width)])


def split_table(text: str) -> Table:
    """The records of `text` as :func:`csv.reader` reads them (it may raise
    :class:`csv.Error`), the rows as wide as the header as columns. Line ends
    are newlines (a text read with universal newlines)."""
    if '"' in text or "\x00" in text or "\r" in text:
        records = list(csv.reader(io.StringIO(text)))
        if not records:
            return Table(None, np.zeros(0, np.int64), np.zeros(0, np.int64), [])
        widths = np.fromiter(map(len, records[1:]), np.int64, len(records) - 1)
        chain = itertools.chain.from_iterable
        return _columns(records[0], widths, records[1:], lambda kept: list(chain(kept)))
    return _split_lines(text)


def parse_floats(cells, empty=None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The cells as :func:`float` reads them, NaN where a cell is blank;
    `empty`: the empty cells, when known.

    Returns
    -------
    values : (N,) ndarray
        NaN where blank or not a number.
    blank : (N,) ndarray of bool
        Cells empty or of spaces only.
    not_number : (N,) ndarray of bool
        Cells that :func:`float` refuses.
    """
    n = len(cells)
    blank = np.fromiter(map(operator.not_, cells), bool, n) if empty is None else empty
    values = np.full(n, np.nan)
    try:  # the non-empty cells (itertools.compress keeps the truthy ones)
        count = n - int(np.count_nonzero(blank))
        filled = np.fromiter(map(float, itertools.compress(cells, cells)), np.float64, count)
    except ValueError:  # a blank cell of spaces, or text: cell by cell
        return _floats_one_by_one(cells)
    values[~blank] = filled
    return values, blank, np.zeros(n, dtype=bool)


def _floats_one_by_one(cells):
    n = len(cells)
    values = np.full(n, np.nan)
    blank, not_number = np.zeros(n, dtype=bool), np.zeros(n, dtype=bool)
    for i, text in enumerate(cells):
        if text.strip() == "":
            blank[i] = True
            continue
        try:
            values[i] = float(text)
        except ValueError:
            not_number[i] = True
    return values, blank, not_number


def parse_ints(cells) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The cells as :func:`int` reads them.

    Returns
    -------
    values : (N,) ndarray of int64
        0 where a cell is not a whole number or out of range.
    not_whole : (N,) ndarray of bool
        Cells that :func:`int` refuses.
    out_of_range : (N,) ndarray of bool
        Whole numbers that int64 cannot hold.
    """
    n = len(cells)
    try:
        values = np.fromiter(map(int, cells), np.int64, n)
        return values, np.zeros(n, dtype=bool), np.zeros(n, dtype=bool)
    except (ValueError, OverflowError):
        pass
    values = np.zeros(n, dtype=np.int64)
    not_whole, out_of_range = np.zeros(n, dtype=bool), np.zeros(n, dtype=bool)
    for i, text in enumerate(cells):
        try:
            number = int(text)
        except ValueError:
            not_whole[i] = True
            continue
        if -(2**63) <= number < 2**63:
            values[i] = number
        else:
            out_of_range[i] = True
    return values, not_whole, out_of_range
