"""Property-based tests (hypothesis): readers either succeed or raise a DropkinError.

The only outcomes allowed for any input are a correct result or a
:class:`~dropkin.errors.DropkinError` whose message is one line; never another
exception. Inputs are random TOML documents and unit strings (experiment
reader) and random CSV text (the reader of ``dropkin fit``).
"""

import math

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from dropkin.errors import DropkinError
from dropkin.experiment import experiment_from_toml
from dropkin.series import CSV_COLUMNS, STATUSES, read_radius_csv
from dropkin.units import parse_si

KEYS = {
    "recording": ["frame_rate", "pixel_size", "first_frame", "last_frame", "fram_rate"],
    "setup": ["geometry", "view", "shape"],
    "liquid": [
        "name",
        "glycerol_mass_fraction",
        "temperature",
        "surface_tension",
        "viscosity",
        "density",
    ],
    "medium": ["viscosity", "density"],
    "drops": ["radius"],
    "extra": ["x"],
}
UNITS = ["Hz", "kfps", "um", "mm", "m/s", "mN/m", "mPa*s", "kg/m^3", "degC", "K", "%", "", "s"]
NUMBERS = st.one_of(
    st.integers(-(10**6), 10**6),
    st.floats(allow_nan=True, allow_infinity=True),
)
TEXT_VALUES = st.one_of(
    st.builds(lambda x, u: f"{x} {u}", NUMBERS, st.sampled_from(UNITS)),
    st.text(max_size=12),
    st.sampled_from(["coalescence", "spreading", "side", "bottom", "water", "85 %"]),
)
VALUES = st.one_of(TEXT_VALUES, NUMBERS, st.booleans())


def _toml_value(value):
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    return '"' + value.replace("\\", "\\\\").replace('"', '\\"') + '"'


@st.composite
def documents(draw):
    lines = []
    for section in draw(st.lists(st.sampled_from(list(KEYS)), unique=True, max_size=5)):
        lines.append(f"[{section}]")
        for key in draw(st.lists(st.sampled_from(KEYS[section]), unique=True, max_size=4)):
            lines.append(f"{key} = {_toml_value(draw(VALUES))}")
    if draw(st.booleans()):
        lines.append(draw(st.text(max_size=20)))  # sometimes broken TOML
    return "\n".join(lines)


def _one_line(exc):
    text = str(exc)
    assert text and "\n" not in text


@settings(max_examples=300, deadline=None)
@given(documents())
def test_experiment_reader_gives_a_result_or_one_dropkin_error(text):
    try:
        exp = experiment_from_toml(text)
    except DropkinError as exc:
        _one_line(exc)
        return
    # A result: every quantity it holds is a positive finite SI float.
    for record in (exp.recording, exp.liquid, exp.medium, exp.drops):
        for name in (
            "frame_rate",
            "pixel_size",
            "temperature",
            "surface_tension",
            "viscosity",
            "density",
            "radius",
        ):
            value = getattr(record, name, None)
            if value is not None:
                assert math.isfinite(value) and value > 0


@settings(max_examples=300, deadline=None)
@given(st.text(max_size=30), st.sampled_from(["Hz", "m", "N/m", "Pa*s", "kg/m^3", "K"]))
def test_unit_parsing_gives_a_finite_float_or_one_dropkin_error(text, unit):
    try:
        value = parse_si(text, unit, key="k")
    except DropkinError as exc:
        _one_line(exc)
        return
    assert math.isfinite(value)


CELLS = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-5, 10**6).map(str),
    st.sampled_from(["", "nan", "inf", "-inf", "1e400", "abc", " 3 ", *STATUSES, "ok "]),
)


@st.composite
def csv_texts(draw):
    header = ",".join(CSV_COLUMNS) if draw(st.integers(0, 9)) else draw(st.text(max_size=30))
    rows = draw(st.lists(st.lists(CELLS, min_size=0, max_size=7), max_size=12))
    return header + "\n" + "\n".join(",".join(r) for r in rows)


@settings(max_examples=300, deadline=None)
@given(csv_texts())
def test_radius_csv_reader_gives_arrays_or_one_dropkin_error(tmp_path_factory, text):
    path = tmp_path_factory.mktemp("csv") / "radius.csv"
    path.write_text(text, encoding="utf-8")
    try:
        data = read_radius_csv(path)
    except DropkinError as exc:
        _one_line(exc)
        assert "radius.csv" in str(exc)
        return
    # the record's columns, in the order of CSV_COLUMNS
    columns = (
        data.frame,
        data.time,
        data.since_contact,
        data.radius,
        data.radius_err,
        data.status,
    )
    data = dict(zip(CSV_COLUMNS, columns, strict=True))
    n = len(data["frame"])
    assert all(len(data[c]) == n for c in CSV_COLUMNS)
    assert set(data["status"]) <= set(STATUSES)
    for column in CSV_COLUMNS[1:5]:
        assert not np.isinf(data[column]).any()
