"""The sections of an experiment file, the kind of value each key holds, and their conversion.

Each section (``[recording]``, ``[setup]``, ``[liquid]``, ``[medium]``,
``[drops]``, ``[uncertainty]``) is a frozen record; :data:`SCHEMA` gives, for each key, the kind
of value it holds, and :func:`convert` turns a value of the file into its SI
form or raises an :class:`~dropkin.errors.ExperimentError` naming the key. The
whole file, and the :class:`~dropkin.experiment.Experiment` it becomes, are in
:mod:`dropkin.experiment`.

Examples
--------
>>> convert("20 kHz", SCHEMA["recording"][1]["frame_rate"], key="recording.frame_rate", path=None)
20000.0
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from numbers import Real

from .errors import ExperimentError
from .units import parse_relative, parse_si, registry

__all__ = [
    "GEOMETRIES",
    "VIEWS",
    "RecordingSettings",
    "Setup",
    "Fluid",
    "Drops",
    "Uncertainty",
    "UNCERTAIN_VALUES",
    "SCHEMA",
    "known",
    "check_number",
    "convert",
]

GEOMETRIES = ("coalescence", "sessile-coalescence", "spreading")
VIEWS = ("side", "bottom")
#: Dark drops on a backlight, bright drops on a dark field (front light,
#: fluorescence), or told from the first frames.
CONTRASTS = ("auto", "dark-drops", "bright-drops")


@dataclass(frozen=True)
class RecordingSettings:
    """How the frames were taken.

    Attributes
    ----------
    frame_rate : float or None
        Frames per second (Hz); None when the file must supply per-frame times.
    pixel_size : float or None
        Length of one pixel in the object plane (m).
    first_frame : int
        Index of the first frame kept (frames before it are skipped).
    last_frame : int or None
        Index of the last frame kept (inclusive); None keeps all to the end.
    contrast : str
        ``"dark-drops"`` (backlight), ``"bright-drops"`` (front light,
        fluorescence) or ``"auto"``: told from the first frames.
    """

    frame_rate: float | None = None
    pixel_size: float | None = None
    first_frame: int = 0
    last_frame: int | None = None
    contrast: str = "auto"


@dataclass(frozen=True)
class Setup:
    """What was filmed.

    Attributes
    ----------
    geometry : str or None
        ``"coalescence"`` (free drops), ``"sessile-coalescence"`` (two drops
        on a plate) or ``"spreading"``; None when not stated.
    view : str
        ``"side"`` or ``"bottom"``.
    """

    geometry: str | None = None
    view: str = "side"


@dataclass(frozen=True)
class Fluid:
    """Material values of a fluid, in SI units; None where not given.

    Attributes
    ----------
    name : str or None
        A name from the liquid library, or the user's own label.
    glycerol_mass_fraction : float or None
        For glycerol–water mixtures, the mass fraction of glycerol (0–1).
    temperature : float or None
        Temperature (K).
    surface_tension : float or None
        Surface tension against the surrounding medium (N/m).
    viscosity : float or None
        Dynamic viscosity (Pa s).
    density : float or None
        Density (kg/m^3).
    """

    name: str | None = None
    glycerol_mass_fraction: float | None = None
    temperature: float | None = None
    surface_tension: float | None = None
    viscosity: float | None = None
    density: float | None = None


@dataclass(frozen=True)
class Drops:
    """The drops' size and, on a plate, their contact angle.

    Attributes
    ----------
    radius : float or None
        Drop radius (m); None means it is to be measured from the frames.
        For drops on a plate, the radius of the caps' footprint.
    contact_angle : float or None
        The drops' contact angle on the plate (rad, between 0 and pi), for
        sessile coalescence; written in the file as ``"40 deg"`` or
        ``"0.7 rad"``.
    """

    radius: float | None = None
    contact_angle: float | None = None


#: The values an ``[uncertainty]`` section may qualify, and the key each stands for.
UNCERTAIN_VALUES = {
    "surface_tension": "liquid.surface_tension",
    "viscosity": "liquid.viscosity",
    "density": "liquid.density",
    "medium_viscosity": "medium.viscosity",
    "medium_density": "medium.density",
    "radius": "drops.radius",
}


@dataclass(frozen=True)
class Uncertainty:
    """Relative standard uncertainties the experiment file states; None where it states none.

    Each applies to the value named in :data:`UNCERTAIN_VALUES`, whether the
    file gives that value or the liquid library fills it in; it takes
    precedence over the library's stated uncertainty and over the 2 %
    default. Written ``0.03`` or ``"3 %"`` (a standard uncertainty, k = 1).

    Attributes
    ----------
    surface_tension, viscosity, density : float or None
        Of the liquid's values.
    medium_viscosity, medium_density : float or None
        Of the surrounding medium's values.
    radius : float or None
        Of the drop radius R.
    """

    surface_tension: float | None = None
    viscosity: float | None = None
    density: float | None = None
    medium_viscosity: float | None = None
    medium_density: float | None = None
    radius: float | None = None


# The kind of each key: ("quantity", SI unit) for a positive value with a unit,
# ("choice", allowed...), ("text",), ("fraction",), ("index",) or ("relative",).
SCHEMA: dict[str, tuple[type, dict[str, tuple]]] = {
    "recording": (
        RecordingSettings,
        {
            "frame_rate": ("quantity", "Hz"),
            "pixel_size": ("quantity", "m"),
            "first_frame": ("index",),
            "last_frame": ("index",),
            "contrast": ("choice", *CONTRASTS),
        },
    ),
    "setup": (
        Setup,
        {"geometry": ("choice", *GEOMETRIES), "view": ("choice", *VIEWS)},
    ),
    "liquid": (
        Fluid,
        {
            "name": ("text",),
            "glycerol_mass_fraction": ("fraction",),
            "temperature": ("quantity", "K"),
            "surface_tension": ("quantity", "N/m"),
            "viscosity": ("quantity", "Pa*s"),
            "density": ("quantity", "kg/m^3"),
        },
    ),
    "drops": (Drops, {"radius": ("quantity", "m"), "contact_angle": ("quantity", "rad")}),
}
SCHEMA["medium"] = SCHEMA["liquid"]
SCHEMA["uncertainty"] = (Uncertainty, {name: ("relative",) for name in UNCERTAIN_VALUES})


def known(names) -> str:
    """Names as a sorted, comma-separated list, for messages."""
    return ", ".join(sorted(names))


def check_number(value: float, kind: tuple, *, key: str, path) -> float:
    """Check an SI magnitude: finite and strictly positive (all dropkin's are);
    an angle also below 180 degrees."""
    unit = kind[1]
    if not math.isfinite(value):
        raise ExperimentError("is not a finite number", key=key, value=value, path=path)
    if unit == "rad" and not 0 < value < math.pi:
        raise ExperimentError(
            "must lie between 0 and 180 degrees", key=key, value=value, path=path
        )
    if value <= 0:
        raise ExperimentError(
            "must be positive",
            key=key,
            value=value,
            path=path,
            expected=f"a value above 0 {unit}" if unit != "K" else "a temperature above 0 K",
        )
    return value


#: An angle as the file writes it: a number and deg, degrees, ° or rad.
_ANGLE = re.compile(
    r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(deg|degrees?|°|rad|radians?)\s*$"
)


def _angle(value, *, key: str, path) -> float:
    """An angle in radians from ``"40 deg"``, ``"40°"`` or ``"0.7 rad"``; a
    bare number is refused (degrees or radians would be a guess)."""
    match = _ANGLE.match(value) if isinstance(value, str) else None
    if match is None:
        raise ExperimentError(
            "is not an angle with its unit",
            key=key,
            value=value,
            path=path,
            expected="e.g. '40 deg' or '0.7 rad'",
        )
    number = float(match.group(1))
    return number if match.group(2).startswith("rad") else math.radians(number)


def convert(value, kind: tuple, *, key: str, path):
    """Turn one value of the file into its SI form, or raise naming the key."""
    what = kind[0]
    if what == "quantity":
        if kind[1] == "rad":
            angle = _angle(value, key=key, path=path)
            if not 0 < angle < math.pi:
                raise ExperimentError(
                    "must lie between 0 and 180 degrees", key=key, value=value, path=path
                )
            return angle
        si = parse_si(value, kind[1], key=key, path=path)
        return check_number(si, kind, key=key, path=path)
    if what == "choice":
        allowed = kind[1:]
        if not isinstance(value, str) or value.strip().lower() not in allowed:
            raise ExperimentError(
                "is not a known choice",
                key=key,
                value=value,
                path=path,
                expected=" or ".join(allowed),
            )
        return value.strip().lower()
    if what == "text":
        if not isinstance(value, str) or not value.strip():
            raise ExperimentError("must be a non-empty text", key=key, value=value, path=path)
        return value.strip()
    if what == "fraction":
        if isinstance(value, str):
            try:
                number = registry().Quantity(value).to("dimensionless").magnitude
            except Exception:
                raise ExperimentError(
                    "is not a fraction",
                    key=key,
                    value=value,
                    path=path,
                    expected="a number from 0 to 1, or a percentage such as '85 %'",
                ) from None
        elif isinstance(value, Real) and not isinstance(value, bool):
            number = float(value)
        else:
            raise ExperimentError("is not a fraction", key=key, value=value, path=path)
        if not (math.isfinite(number) and 0.0 <= number <= 1.0):
            raise ExperimentError(
                "must lie between 0 and 1",
                key=key,
                value=value,
                path=path,
                expected="a mass fraction from 0 to 1",
            )
        return float(number)
    if what == "relative":
        return parse_relative(value, key=key, path=path)
    if what == "index":
        if isinstance(value, bool) or not isinstance(value, int) or value < 0:
            raise ExperimentError(
                "must be a whole number of frames, 0 or more",
                key=key,
                value=value,
                path=path,
            )
        return value
    raise AssertionError(f"unknown kind {what!r}")  # pragma: no cover - schema bug
