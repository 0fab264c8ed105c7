"""``radius.csv`` read whole columns at a time: a row-by-row reading's values and refusals.

The reference is Python's own: :func:`csv.reader` for the cells and
:func:`float` / :func:`int` for the numbers, one cell at a time (the
straightforward reading the column-wise reader replaces). The values must be
the same bits, the statuses the same strings. Each refusal is one line naming
the file, the line and the column, and it is the first bad line's (in it, the
first bad column's), as a reading row by row meets it.
"""

from __future__ import annotations

import csv
import io
import math

import numpy as np
import pytest

from dropkin.errors import DropkinError
from dropkin.series import CSV_COLUMNS, read_radius_csv
from dropkin.series._rows import read_angles, read_columns

LEVELS = ("radius_level_0.4_m", "radius_level_0.6_m")
TRIGGER = "time_since_trigger_s"
HEADER = ",".join([*CSV_COLUMNS, *LEVELS, TRIGGER])


def _number(text: str) -> float:
    return math.nan if text.strip() == "" else float(text)


def reference(text: str) -> dict:
    """The columns as csv.reader and float()/int() read them, row by row (no checks)."""
    rows = [row for row in list(csv.reader(io.StringIO(text)))[1:] if row]
    return {
        "frame": np.array([int(r[0]) for r in rows], dtype=np.int64),
        **{
            name: np.array([_number(r[k]) for r in rows], dtype=np.float64)
            for k, name in enumerate(CSV_COLUMNS[1:5], start=1)
        },
        "status": tuple(r[5].strip() for r in rows),
        "extra": [np.array([_number(r[k]) for r in rows]) for k in range(6, 9)],
    }


def series_text(rows: int, seed: int = 0) -> str:
    """A valid synthetic series (invented data): empty cells, level and trigger columns,
    numbers written as repr() writes them and in other forms float() accepts."""
    rng = np.random.default_rng(seed)
    time = np.cumsum(rng.uniform(1e-7, 1e-5, rows)) - 1e-4
    status = rng.choice(["ok", "unresolved", "before-contact", "at-edge", "not-found"], rows)
    radius = rng.uniform(1e-6, 1e-3, rows)
    forms = [repr, lambda v: f"{v:.6e}", lambda v: f" {v!r} ", lambda v: f"{v:.17g}"]
    lines = [HEADER]
    for i in range(rows):
        ok = status[i] == "ok"
        cells = [
            str(3 * i + 7),
            repr(float(time[i])),
            repr(float(time[i] + 5e-5)) if time[i] >= -5e-5 else "",
            forms[i % 4](float(radius[i])) if ok or i % 3 else "",
            repr(float(radius[i] * 0.01)) if ok else ("" if i % 2 else " "),
            status[i] if i % 7 else f" {status[i]} ",
            repr(float(radius[i] * 0.99)) if i % 5 else "",
            "0" if i % 11 == 0 else repr(float(radius[i] * 1.01)),
            repr(float(time[i] + 5e-5)),
        ]
        lines.append(",".join(cells))
    return "\n".join(lines) + "\n"


def assert_same(columns: dict, expected: dict) -> None:
    assert columns["frame"].dtype == np.int64
    assert columns["frame"].tobytes() == expected["frame"].tobytes()
    for name in CSV_COLUMNS[1:5]:
        assert columns[name].dtype == np.float64
        assert columns[name].tobytes() == expected[name].tobytes(), name  # same bits, NaN too
    assert columns["status"] == expected["status"]
    assert all(type(s) is str for s in columns["status"])
    extra = [columns["level_radii"][0.4], columns["level_radii"][0.6], columns[TRIGGER]]
    for got, want in zip(extra, expected["extra"], strict=True):
        assert got.tobytes() == want.tobytes()


@pytest.mark.parametrize(
    "variant",
    ["plain", "crlf", "no final newline", "blank lines", "quoted cells"],
)
def test_columns_are_those_of_csv_reader_and_float(tmp_path, variant):
    text = series_text(3000)
    lines = text.splitlines()
    if variant == "crlf":
        text = "\r\n".join(lines) + "\r\n"
    elif variant == "no final newline":
        text = text.rstrip("\n")
    elif variant == "blank lines":
        text = "\n".join(lines[:10] + [""] + lines[10:2000] + ["", ""] + lines[2000:]) + "\n"
    elif variant == "quoted cells":  # csv.reader takes the quotes off
        text = "\n".join(lines[:50] + [line.replace(",ok", ',"ok"') for line in lines[50:]])
    path = tmp_path / "radius.csv"
    path.write_bytes(text.encode("utf-8"))
    columns = read_columns(path)
    assert len(columns["frame"]) == 3000
    assert_same(columns, reference(text.replace("\r\n", "\n")))


def test_cells_that_only_float_itself_takes_are_read_as_float_reads_them(tmp_path):
    # underscores between digits and non-ASCII digits are numbers for float()
    text = HEADER + "\n0,1_0.5,,,,unresolved,,,-２\n1,20.5,,,,unresolved,,,1\n"
    path = tmp_path / "radius.csv"
    path.write_text(text, encoding="utf-8")
    columns = read_columns(path)
    assert columns["time_s"].tolist() == [10.5, 20.5]
    assert columns[TRIGGER].tolist() == [-2.0, 1.0]


def test_a_header_alone_reads_as_no_rows(tmp_path):
    path = tmp_path / "radius.csv"
    path.write_text(",".join(CSV_COLUMNS) + "\n")
    series = read_radius_csv(path)
    assert len(series) == 0 and series.status == () and series.level_radii == {}


GOOD = ["0,0.0,,,,before-contact", "1,1e-05,,,,unresolved", "2,2e-05,1e-05,3e-05,1e-06,ok"]
BAD_ROWS = {  # the row after GOOD (line 5) -> the message's text after "line 5: "
    "3,3e-05,2e-05,abc,1e-06,ok": "radius_m is not a number",
    "3,3e-05,2e-05,1e400,1e-06,ok": "radius_m is infinite",
    "3,3e-05,2e-05,-inf,1e-06,ok": "radius_m is infinite",
    "3,3e-05,2e-05,nan,1e-06,ok": "radius_m is NaN",
    "3,nan,2e-05,3e-05,1e-06,ok": "time_s is NaN",
    "3,3e-05,-2e-05,3e-05,1e-06,ok": "since_contact_s is negative",
    "3,3e-05,2e-05,-3e-05,1e-06,ok": "radius_m is negative",
    "3,3e-05,2e-05,3e-05,-1e-06,ok": "radius_err_m is negative",
    "3,3e-05,2e-05,3e-05,1e-06,good": "unknown status",
    "3,,2e-05,3e-05,1e-06,ok": "time_s is empty",
    "3, ,2e-05,3e-05,1e-06,ok": "time_s is empty",
    "3,3e-05,2e-05,,1e-06,ok": "status ok without a radius",
    "3,3e-05,2e-05,0,1e-06,ok": "status ok without a radius",
    "3.0,3e-05,2e-05,3e-05,1e-06,ok": "frame is not a whole number",
    "99999999999999999999,3e-05,2e-05,3e-05,1e-06,ok": "frame is out of range",
    "2,3e-05,2e-05,3e-05,1e-06,ok": "frame does not increase (line 4 has 2)",
    "3,2e-05,2e-05,3e-05,1e-06,ok": "time_s does not increase (line 4 has 2e-05)",
    "3,3e-05,2e-05,3e-05,1e-06": "has 5 fields",
    "3,3e-05,2e-05,3e-05,1e-06,ok,": "has 7 fields",
}


@pytest.mark.parametrize("row, message", BAD_ROWS.items(), ids=list(BAD_ROWS.values()))
def test_a_bad_row_is_refused_in_one_line_naming_file_and_line(tmp_path, row, message):
    path = tmp_path / "radius.csv"
    path.write_text("\n".join([",".join(CSV_COLUMNS), *GOOD, row, *GOOD[:1]]) + "\n")
    with pytest.raises(DropkinError) as caught:
        read_radius_csv(path)
    assert caught.value.message == f"line 5: {message}"
    text = str(caught.value)
    assert "\n" not in text and text.startswith(str(path))


@pytest.mark.parametrize(
    "extra, message",
    [
        (",-1e-06,,", "radius_level_0.4_m is negative"),
        (",,1e500,", "radius_level_0.6_m is infinite"),
        (",,,x", "time_since_trigger_s is not a number"),
        (",,,NaN", "time_since_trigger_s is NaN"),
    ],
)
def test_a_bad_level_or_trigger_cell_is_refused(tmp_path, extra, message):
    path = tmp_path / "radius.csv"
    rows = [row + ",,,-1e-3" for row in GOOD]  # a time before the trigger is negative
    path.write_text("\n".join([HEADER, *rows, GOOD[0].replace("0,0.0", "3,1.0") + extra]) + "\n")
    with pytest.raises(DropkinError, match=f"line 5: {message}"):
        read_radius_csv(path)


def test_the_first_bad_line_and_in_it_the_first_bad_column_is_named(tmp_path):
    path = tmp_path / "radius.csv"
    bad = [
        "3,3e-05,-2e-05,-3e-05,1e-06,ok",  # since_contact_s before radius_m
        "4,4e-05,2e-05,3e-05,x,nope",  # later lines: not named
        "4,4e-05",
    ]
    path.write_text("\n".join([",".join(CSV_COLUMNS), *GOOD, *bad]) + "\n")
    with pytest.raises(DropkinError) as caught:
        read_radius_csv(path)
    assert caught.value.message == "line 5: since_contact_s is negative"
    assert caught.value.value == "-2e-05"
    # a short row after the first bad value: the value is named, not the row
    path.write_text("\n".join([",".join(CSV_COLUMNS), *GOOD, "3,3e-05,,,,good", "3"]) + "\n")
    with pytest.raises(DropkinError, match="line 5: unknown status"):
        read_radius_csv(path)
    # blank lines count in the line numbers
    path.write_text("\n".join([",".join(CSV_COLUMNS), "", *GOOD, "", "x,1,,,,ok"]) + "\n")
    with pytest.raises(DropkinError, match="line 7: frame is not a whole number"):
        read_radius_csv(path)


@pytest.mark.parametrize(
    "content, message",
    [
        (b"", "is empty"),
        (b"frame,time_s\n0,0.0\n", "has other columns than a radius series"),
        (b"\xff\xfe" + b"frame", "cannot be read"),
        (
            (",".join(CSV_COLUMNS) + '\n0,0.0,,,,"' + "1" * 200_000 + '"\n').encode(),
            "cannot be read as CSV",
        ),
    ],
    ids=["empty", "other header", "not UTF-8", "a cell beyond csv's limit"],
)
def test_a_file_that_is_no_radius_series_is_refused_in_one_line(tmp_path, content, message):
    path = tmp_path / "radius.csv"
    path.write_bytes(content)
    with pytest.raises(DropkinError) as caught:
        read_radius_csv(path)
    assert caught.value.message.startswith(message)
    assert "\n" not in str(caught.value) and str(path) in str(caught.value)


def test_angles_are_those_of_csv_reader_and_float_the_last_row_of_a_frame_winning(tmp_path):
    rng = np.random.default_rng(1)
    numbers = rng.integers(0, 400, 1000)  # repeated frames, in no order
    left, right = rng.uniform(0, 180, (2, 1000))
    lines = ["frame,time_s,angle_left_deg,angle_right_deg"]
    for i, (f, a, b) in enumerate(zip(numbers, left.tolist(), right.tolist(), strict=True)):
        cells = ["" if i % 3 == 0 else repr(a), " " if i % 4 == 0 else repr(b)]
        lines.append(f"{f},{i},{cells[0]},{cells[1]}")
    text = "\n".join(lines) + "\n"
    path = tmp_path / "angles.csv"
    path.write_text(text)
    expected = {}  # the straightforward reading: row by row, the last row of a frame kept
    for row in list(csv.reader(io.StringIO(text)))[1:]:
        expected[int(row[0])] = [_number(row[2]), _number(row[3])]
    frames = np.arange(-5, 410)
    want = np.array([expected.get(int(f), [math.nan, math.nan]) for f in frames])
    assert read_angles(path, frames).tobytes() == want.tobytes()


@pytest.mark.parametrize(
    "row, message",
    [
        ("2,0.2,x,1", "line 4: angle_left_deg is not a number"),
        ("2,0.2,1,-1", "line 4: angle_right_deg is negative"),
        ("2,0.2,inf,1", "line 4: angle_left_deg is infinite"),
        ("2,0.2,1,nan", "line 4: angle_right_deg is NaN"),
        ("2.5,0.2,1,1", "line 4: frame is not a whole number"),
        ("2,0.2,1", "line 4: has 3 fields"),
    ],
)
def test_a_bad_angles_row_is_refused_naming_its_line(tmp_path, row, message):
    path = tmp_path / "angles.csv"
    path.write_text("frame,time_s,angle_left_deg,angle_right_deg\n0,0,1,2\n1,0.1,,\n" + row)
    with pytest.raises(DropkinError) as caught:
        read_angles(path, [0, 1, 2])
    assert caught.value.message == message and str(path) in str(caught.value)
