"""The one unit registry, and the parsing of quantities people type.

Units live at the edges of dropkin: the experiment file, the command line and
the written outputs. Everything a person types goes through
:func:`parse_quantity` (or :func:`parse_si`), which refuses a bare number, an
unparsable text and a wrong dimension with a message that names the key, the
value and the unit expected. Inside the library all numbers are SI floats.

Examples
--------
>>> parse_si("20 kfps", "Hz", key="recording.frame_rate")
20000.0
>>> parse_si("2 mm", "m")
0.002
>>> parse_si("21 degC", "K")
294.15
>>> round(parse_si("20 µm/px", "m", key="recording.pixel_size"), 12)  # as labs write it
2e-05
>>> round(parse_si("50 px/mm", "m"), 12)  # the same, given as pixels per length
2e-05
"""

from __future__ import annotations

import functools
import math
import re
from numbers import Real

import click

from .errors import QuantityError

__all__ = [
    "registry",
    "parse_quantity",
    "parse_si",
    "parse_relative",
    "QuantityType",
    "SI_UNITS",
]


@functools.cache
def registry():
    """The one pint registry (built on first use: it takes a good part of a second)."""
    import pint

    reg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    # Frame rates are the camera's word; "kfps" and "Mfps" follow from the prefixes.
    reg.define("fps = 1 / second = frames_per_second")
    return reg


def __getattr__(name):
    # ``ureg`` and ``Quantity`` are the registry's, made when first asked for, so
    # that importing the command line (``dropkin --help``) does not build it.
    if name == "ureg":
        return registry()
    if name == "Quantity":
        return registry().Quantity
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


#: SI unit, as written in outputs, for each kind of quantity dropkin reads.
SI_UNITS = {
    "frame_rate": "Hz",
    "pixel_size": "m",
    "length": "m",
    "time": "s",
    "temperature": "K",
    "surface_tension": "N/m",
    "viscosity": "Pa*s",
    "density": "kg/m^3",
}


def _where(key: str | None) -> str:
    return key if key is not None else "quantity"


def parse_quantity(text, unit: str, *, key: str | None = None, path=None):
    """Parse text such as ``"20000 Hz"`` and check it has the dimension of `unit`.

    Parameters
    ----------
    text : str or pint.Quantity
        What the user wrote. A bare number is refused: dropkin never guesses a
        unit.
    unit : str
        A unit of the expected dimension, e.g. ``"m"``, ``"Hz"``, ``"Pa*s"``;
        it is named in the error message.
    key : str, optional
        The key or option the text came from, for the error message.
    path : str or os.PathLike, optional
        The file the text came from, for the error message.

    Returns
    -------
    quantity : pint.Quantity
        The parsed quantity, in the units the user wrote.

    Raises
    ------
    QuantityError
        For a bare number, unparsable text, a wrong dimension or a value that
        is not finite.
    """
    ureg = registry()
    expected = f"a value with a unit of {unit}, e.g. '1 {unit}'"
    where = {"key": key, "path": path, "expected": expected}
    shown = text if isinstance(text, str) else str(text)
    quantity = _as_quantity(text, ureg, unit=unit, **where)
    target = ureg.Unit(unit)
    if quantity.dimensionality != target.dimensionality:
        raise _refuse(_mismatch(quantity, target, unit), shown, **where)
    magnitude = quantity.to(target).magnitude
    if not math.isfinite(magnitude):
        raise _refuse("is not a finite number", shown, **where)
    _check_range(magnitude, unit, shown, where)
    return quantity


#: A number as people type it: decimal, with an optional exponent ("1.5e4").
_NUMBER = re.compile(
    r"\s*([-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?|[-+]?(?:nan|inf(?:inity)?)\b)\s*(.*?)\s*$",
    re.S | re.I,
)
#: An image pixel: a count of the camera's pixels, never pint's screen pixel (1/96 inch).
_PIXEL = r"(?:px|pixels?)"
_PER_PIXEL = re.compile(rf"^(.+?)\s*/\s*{_PIXEL}$")
_PIXELS_PER = re.compile(rf"^{_PIXEL}\s*/\s*(.+)$")
#: Printers' units, lengths for pint but never a size in a recording.
_TYPOGRAPHIC = r"\b(?:pt|points?|picas?|twips?|didots?|ciceros?)\b"
#: A power of a power ("10**10**10"): pint would compute the integer, for ever.
_STACKED_POWERS = re.compile(r"(\*\*|\^)[\s(+-]*[\d.]+[\s)]*(\*\*|\^)")
_BAD_EXPONENT = re.compile(r"(\*\*|\^)\s*[-+(]?\s*\d{3,}")


def _refuse(reason, text, *, key, path, expected):
    return QuantityError(reason, key=_where(key), value=text, expected=expected, path=path)


def _as_quantity(text, ureg, *, key, path, expected, unit="m"):
    """`text` as a pint Quantity with a unit; a QuantityError for a bare number or bad text.

    The number is read by Python (decimal or e-notation) and only the unit by
    pint. "px" and "pixel" are image pixels: a length per pixel ("20 µm/px")
    or pixels per length ("50 px/mm") gives a pixel size where `unit` is a
    length, and is refused elsewhere.
    """
    where = {"key": key, "path": path, "expected": expected}
    if isinstance(text, ureg.Quantity):
        return text
    if isinstance(text, bool) or isinstance(text, Real):
        raise _refuse("a bare number has no unit", text, **where)
    if not isinstance(text, str):
        raise _refuse(f"must be a text with a unit, not {type(text).__name__}", text, **where)
    match = _NUMBER.match(text)
    if match is None:
        raise _refuse("cannot be read as a quantity (it must start with a number)", text, **where)
    number, unit_text = float(match.group(1)), match.group(2)
    if not math.isfinite(number):
        raise _refuse("is not a finite number", text, **where)
    if not unit_text:
        raise _refuse("a bare number has no unit", text, **where)
    if _STACKED_POWERS.search(text) or _BAD_EXPONENT.search(unit_text) or unit_text[0] in "*^":
        raise _refuse(
            "cannot be read as a quantity (write the number in decimal or e-notation, "
            "e.g. '2e4', and the unit after it)",
            text,
            **where,
        )
    number, unit_text = _pixels(number, unit_text, text, unit, where)
    if re.search(_TYPOGRAPHIC, unit_text):
        raise _refuse(
            "is a typographic unit (a printer's point or pica), not a length in the object plane",
            text,
            **where,
        )
    return number * _unit(ureg, unit_text, text, where)


def _pixels(number, unit_text, text, unit, where):
    """(number, unit text) with an image pixel in a calibration turned into a length."""
    if not re.search(rf"\b{_PIXEL}\b", unit_text):
        return number, unit_text
    per = _PER_PIXEL.match(unit_text)
    inverse = _PIXELS_PER.match(unit_text)
    usable = (
        unit == "m"
        and (per or inverse)
        and not re.search(rf"\b{_PIXEL}\b", (per or inverse).group(1))
    )
    if not usable:
        raise _refuse(
            "px is an image pixel, not a physical unit: give the size of one pixel, "
            "e.g. '20 µm', '20 µm/px' or '50 px/mm'",
            text,
            **where,
        )
    if per:
        return number, per.group(1)
    if number == 0:
        raise _refuse("is zero pixels per length: no pixel size follows", text, **where)
    return 1.0 / number, inverse.group(1)


def _unit(ureg, unit_text, text, where):
    try:
        unit = ureg.Unit(unit_text)
    except Exception as exc:  # pint raises many kinds (tokenize, undefined unit, ...)
        reason = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        raise _refuse(f"cannot be read as a quantity ({reason})", text, **where) from None
    if unit.dimensionless:
        raise _refuse("a bare number has no unit", text, **where)
    return unit


#: Plain words for the dimensions people confuse, and hints for the usual slips.
_DIMENSION_WORDS = {
    "[length]": "a length",
    "[time]": "a time",
    "1 / [time]": "a rate",
    "[temperature]": "a temperature",
    "[current] * [time]": "an electric charge",
    "[mass]": "a mass",
    "[mass] / [time] ** 2": "a surface tension (force per length)",
    "[mass] / [length] / [time]": "a dynamic viscosity",
    "[length] ** 2 / [time]": "a kinematic viscosity",
    "[mass] / [length] ** 3": "a density",
    "[length] / [time]": "a speed",
    "[current] ** 2 * [time] ** 4 / [mass] / [length] ** 2": "a capacitance",
}
_HINTS = {
    ("an electric charge", "a temperature"): " (C is the coulomb: write degC for Celsius)",
    ("a capacitance", "a temperature"): " (F is the farad: write degF for Fahrenheit)",
    ("a kinematic viscosity", "a dynamic viscosity"): (
        " (cSt and St are kinematic: multiply by the density, or give mPa s)"
    ),
}


def _dimension_text(dimensionality) -> str:
    text = str(dimensionality)
    return _DIMENSION_WORDS.get(text, f"the dimension {text}")


def _mismatch(quantity, target, unit) -> str:
    got, want = _dimension_text(quantity.dimensionality), _dimension_text(target.dimensionality)
    return f"has the dimension of {got}, not of {want} like {unit}{_HINTS.get((got, want), '')}"


#: The values dropkin accepts, in SI, per unit: far beyond any laboratory's, close
#: enough that arithmetic on them cannot overflow.
PLAUSIBLE = {
    "Hz": (1e-6, 1e12),
    "m": (1e-12, 1e3),
    "s": (0.0, 1e7),
    "K": (1.0, 1e4),
    "N/m": (1e-7, 1e2),
    "Pa*s": (1e-9, 1e9),
    "kg/m^3": (1e-4, 1e5),
}


def _check_range(magnitude, unit, text, where):
    low, high = PLAUSIBLE.get(unit, (0.0, math.inf))
    if magnitude != 0 and not low <= abs(magnitude) <= high:
        raise _refuse(
            f"is outside what dropkin accepts for a value in {unit} ({low:g} to {high:g})",
            text,
            **where,
        )


def parse_si(text, unit: str, *, key: str | None = None, path=None) -> float:
    """Parse like :func:`parse_quantity` and return the magnitude in `unit` as a float.

    `unit` should be the SI unit (``"m"``, ``"Hz"``, ``"K"``...): the result is
    what the numeric code works with.
    """
    return float(parse_quantity(text, unit, key=key, path=path).to(unit).magnitude)


_RELATIVE = "a relative standard uncertainty from 0 to 1, e.g. 0.02 or '2 %'"


def parse_relative(value, *, key: str | None = None, path=None) -> float:
    """A relative standard uncertainty as written in a file: ``0.02`` or ``"2 %"``.

    A plain number is the fraction itself; a text must be dimensionless
    (``"2 %"``, ``"0.5 percent"``). Values must lie in [0, 1): a number such
    as ``5`` (meant as 5 %) is refused rather than read as 500 %.

    Raises
    ------
    QuantityError
        Naming the key, for a value that is not such a fraction.

    Examples
    --------
    >>> parse_relative("2 %"), parse_relative(0.015)
    (0.02, 0.015)
    """
    where = {"key": key, "path": path, "expected": _RELATIVE}
    number = _relative_number(value, where)
    if not (math.isfinite(number) and 0.0 <= number < 1.0):
        raise _refuse("must lie from 0 to below 1", value, **where)
    return number


def _relative_number(value, where) -> float:
    """The fraction a plain number or a text such as ``"2 %"`` stands for.

    As for quantities, Python reads the number and pint only the unit, so that
    no power is ever computed.
    """
    if isinstance(value, Real) and not isinstance(value, bool):
        return float(value)
    match = _NUMBER.match(value) if isinstance(value, str) else None
    bad = match is None or _STACKED_POWERS.search(value) or _BAD_EXPONENT.search(value)
    if bad:
        raise _refuse("is not a relative uncertainty", value, **where)
    number, unit_text = float(match.group(1)), match.group(2)
    if not unit_text:
        return number
    try:
        factor = registry().Quantity(1.0, unit_text).to("dimensionless").magnitude
    except Exception:  # pint raises many kinds (undefined unit, dimensionality, ...)
        raise _refuse("is not a relative uncertainty", value, **where) from None
    return number * float(factor)


class QuantityType(click.ParamType):
    """A click parameter for a quantity: ``--pixel-size "2.5 um"``.

    The value arrives as a float in `unit` (SI), checked; a parse or dimension
    error becomes a usage error that names the option.

    Parameters
    ----------
    unit : str
        The unit the value is converted to, which also fixes the dimension.
    positive : bool, optional
        Refuse values that are not above zero (in `unit`: a temperature in
        kelvin), so that the message names the option rather than the
        setting it feeds.
    """

    def __init__(self, unit: str, *, positive: bool = False) -> None:
        self.unit = unit
        self.positive = positive
        self.name = f"quantity [{unit}]"

    def convert(self, value, param, ctx):
        key = None if param is None else "--" + param.name.replace("_", "-")
        if isinstance(value, float):
            number = value
        else:
            try:
                number = parse_si(value, self.unit, key=key)
            except QuantityError as exc:
                self.fail(str(exc), param, ctx)
        if self.positive and not number > 0:
            where = f"{key} = {value!r}" if key else repr(value)
            self.fail(
                f"{where}: must be positive (expected a value above 0 {self.unit})", param, ctx
            )
        return number

    def __repr__(self) -> str:
        return f"QuantityType({self.unit!r}, positive={self.positive})"
