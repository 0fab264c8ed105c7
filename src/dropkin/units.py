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
"""

from __future__ import annotations

import functools
import math
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
    quantity = _as_quantity(text, ureg, key=key, path=path, expected=expected)
    target = ureg.Unit(unit)
    if quantity.dimensionality != target.dimensionality:
        raise QuantityError(
            f"has the dimension {quantity.dimensionality}, not that of {unit}",
            key=_where(key),
            value=text if isinstance(text, str) else str(text),
            expected=expected,
            path=path,
        )
    magnitude = quantity.to(target).magnitude
    if not math.isfinite(magnitude):
        raise QuantityError(
            "is not a finite number",
            key=_where(key),
            value=str(text),
            expected=expected,
            path=path,
        )
    return quantity


def _as_quantity(text, ureg, *, key, path, expected):
    """`text` as a pint Quantity with a unit; a QuantityError for a bare number or bad text."""
    if isinstance(text, ureg.Quantity):
        return text
    if isinstance(text, bool) or isinstance(text, Real):
        raise QuantityError(
            "a bare number has no unit",
            key=_where(key),
            value=text,
            expected=expected,
            path=path,
        )
    if not isinstance(text, str):
        raise QuantityError(
            f"must be a text with a unit, not {type(text).__name__}",
            key=_where(key),
            value=text,
            expected=expected,
            path=path,
        )
    try:
        quantity = ureg.Quantity(text.strip())
    except Exception as exc:  # pint raises many kinds (tokenize, undefined unit, ...)
        reason = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        raise QuantityError(
            f"cannot be read as a quantity ({reason})",
            key=_where(key),
            value=text,
            expected=expected,
            path=path,
        ) from None
    if not isinstance(quantity, ureg.Quantity) or quantity.dimensionless:
        raise QuantityError(
            "a bare number has no unit",
            key=_where(key),
            value=text,
            expected=expected,
            path=path,
        )
    return quantity


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
    if isinstance(value, Real) and not isinstance(value, bool):
        number = float(value)
    elif isinstance(value, str):
        try:
            quantity = registry().Quantity(value.strip())
            number = float(quantity.to("dimensionless").magnitude)
        except Exception:  # pint raises many kinds (undefined unit, dimensionality, ...)
            raise QuantityError(
                "is not a relative uncertainty",
                key=_where(key),
                value=value,
                expected=_RELATIVE,
                path=path,
            ) from None
    else:
        raise QuantityError(
            "is not a relative uncertainty",
            key=_where(key),
            value=value,
            expected=_RELATIVE,
            path=path,
        )
    if not (math.isfinite(number) and 0.0 <= number < 1.0):
        raise QuantityError(
            "must lie from 0 to below 1",
            key=_where(key),
            value=value,
            expected=_RELATIVE,
            path=path,
        )
    return number


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
