"""The columns of ``radius.csv`` and ``angles.csv`` as Frictionless Table Schemas.

:func:`table_schema` describes the columns a file's header names: each
field's name, type, description (with its unit in words) and constraints,
empty cells as the missing value, ``frame`` as the primary key. The unit is
also given as a ``unit`` property of the field (``s``, ``m``, ``deg``): the
Table Schema standard defines no unit property but lets a descriptor carry
properties of its own, and readers that do not know it ignore it.
"""

from __future__ import annotations

from ..status import STATUSES
from ._csv import TRIGGER_COLUMN, level_of_column

__all__ = ["table_schema", "MISSING_VALUES"]

#: Cells that mean "no value" in both files: empty ones only.
MISSING_VALUES = ("",)

_STATUS_TEXT = (
    "What the frame shows: ok (a radius was measured), before-contact (not touching yet), "
    "unresolved (in contact, but narrower than the optics resolve; a radius may still be "
    "given), not-found (nothing to measure was seen), at-edge (what is measured reaches the "
    "frame's border), after-growth (in contact, after the growth phase has ended: the merged "
    "drop rings or the neck nears the drop radius; a radius may be given, kept out of the fit)."
)

# name: (type, unit or None, description, constraints)
_FIELDS = {
    "frame": (
        "integer",
        None,
        (
            "Frame index in the recording file, counted from its first frame (0), also when "
            "first_frame leaves some out; one row per frame."
        ),
        {"required": True, "unique": True, "minimum": 0},
    ),
    "time_s": (
        "number",
        "s",
        "Time of the frame from the first frame kept, in seconds.",
        {"required": True},
    ),
    "since_contact_s": (
        "number",
        "s",
        (
            "Time since the measured contact instant (measure.json contact_time_s), in seconds; "
            "empty before contact and where no contact was seen."
        ),
        {},
    ),
    "radius_m": (
        "number",
        "m",
        (
            "Neck radius (two drops) or contact radius (spreading drop), in metres, with the "
            "outline at measure.json's edge_level; empty where the frame has no measurement."
        ),
        {"minimum": 0},
    ),
    "radius_err_m": (
        "number",
        "m",
        "Standard uncertainty of radius_m, in metres; empty where there is none.",
        {"minimum": 0},
    ),
    "status": ("string", None, _STATUS_TEXT, {"required": True, "enum": list(STATUSES)}),
    TRIGGER_COLUMN: (
        "number",
        "s",
        (
            "Time of the frame from the camera's trigger (from the camera file's header), in "
            "seconds; negative before the trigger."
        ),
        {},
    ),
    "angle_left_deg": (
        "number",
        "deg",
        (
            "Apparent contact angle at the left contact point, in degrees, inside the liquid; "
            "empty where none was measured."
        ),
        {"minimum": 0, "maximum": 180},
    ),
    "angle_right_deg": (
        "number",
        "deg",
        (
            "Apparent contact angle at the right contact point, in degrees, inside the liquid; "
            "empty where none was measured."
        ),
        {"minimum": 0, "maximum": 180},
    ),
}


def _level_field(level: float) -> tuple:
    return (
        "number",
        "m",
        (
            f"The radius of radius_m with the outline at edge level {level:g} (the fraction of "
            "the way from the drops' dark rim to the background), in metres; empty where not "
            "measured. The spread over the levels is the fit's systematic interval."
        ),
        {"minimum": 0},
    )


def _field(name: str) -> dict:
    level = level_of_column(name)
    if level is not None:
        kind, unit, text, constraints = _level_field(level)
    elif name in _FIELDS:
        kind, unit, text, constraints = _FIELDS[name]
    else:
        raise ValueError(f"no description of column {name!r}")
    field = {"name": name, "type": kind, "description": text}
    if unit is not None:
        field["unit"] = unit
    if constraints:
        field["constraints"] = dict(constraints)
    return field


def table_schema(header) -> dict:
    """The Table Schema of a ``radius.csv`` or ``angles.csv`` with the columns `header`.

    Raises
    ------
    ValueError
        For a column neither file has.

    Examples
    --------
    >>> schema = table_schema(["frame", "time_s", "angle_left_deg", "angle_right_deg"])
    >>> [f["name"] for f in schema["fields"]], schema["primaryKey"]
    (['frame', 'time_s', 'angle_left_deg', 'angle_right_deg'], ['frame'])
    >>> schema["fields"][2]["unit"]
    'deg'
    """
    return {
        "fields": [_field(name) for name in header],
        "missingValues": list(MISSING_VALUES),
        "primaryKey": ["frame"],
    }
