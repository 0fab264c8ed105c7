"""The experiment file: what the frames alone cannot tell.

An ``experiment.toml`` sits inside a folder of frames, or beside a recording
file as ``<stem>.toml``, or is named with ``--experiment``. Every value with a
unit is a string that pint parses (``frame_rate = "20000 Hz"``); a bare number
is refused with a message naming the key and the unit expected. Unknown keys
are refused too, with the list of known ones: a typo must not pass silently.

The file becomes a frozen :class:`Experiment` in SI units. Command-line
options override the file through :meth:`Experiment.with_overrides`.

Examples
--------
>>> text = '''
... [recording]
... frame_rate = "20 kHz"
... pixel_size = "5 um"
... [setup]
... geometry = "coalescence"
... '''
>>> exp = experiment_from_toml(text)
>>> exp.recording.frame_rate
20000.0
>>> exp.setup.geometry, exp.setup.view
('coalescence', 'side')
"""

from __future__ import annotations

import dataclasses
import json
import math
import tomllib
from dataclasses import dataclass, field
from numbers import Real
from pathlib import Path

from .errors import ExperimentError
from .units import parse_si, registry

__all__ = [
    "Experiment",
    "RecordingSettings",
    "Setup",
    "Fluid",
    "Drops",
    "GEOMETRIES",
    "VIEWS",
    "EXPERIMENT_FILE_NAME",
    "find_experiment_file",
    "read_experiment",
    "experiment_from_toml",
    "experiment_from_mapping",
    "load_experiment",
    "experiment_to_toml",
]

EXPERIMENT_FILE_NAME = "experiment.toml"
GEOMETRIES = ("coalescence", "spreading")
VIEWS = ("side", "bottom")


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
    """

    frame_rate: float | None = None
    pixel_size: float | None = None
    first_frame: int = 0
    last_frame: int | None = None


@dataclass(frozen=True)
class Setup:
    """What was filmed.

    Attributes
    ----------
    geometry : str or None
        ``"coalescence"`` or ``"spreading"``; None when not stated.
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
    """The drops' size.

    Attributes
    ----------
    radius : float or None
        Drop radius (m); None means it is to be measured from the frames.
    """

    radius: float | None = None


@dataclass(frozen=True)
class Experiment:
    """A validated experiment description, all values in SI units.

    Attributes
    ----------
    recording : RecordingSettings
    setup : Setup
    liquid : Fluid
        The drops' liquid.
    medium : Fluid
        The surrounding fluid; air when the file does not say otherwise.
    drops : Drops
    path : pathlib.Path or None
        The file it was read from; None when no file was found.
    """

    recording: RecordingSettings = field(default_factory=RecordingSettings)
    setup: Setup = field(default_factory=Setup)
    liquid: Fluid = field(default_factory=Fluid)
    medium: Fluid = field(default_factory=lambda: Fluid(name="air"))
    drops: Drops = field(default_factory=Drops)
    path: Path | None = None

    def with_overrides(self, overrides: dict[str, object]) -> Experiment:
        """Return a copy with some values replaced; ``None`` values are skipped.

        Parameters
        ----------
        overrides : dict
            Dotted keys as in the file (``"recording.frame_rate"``) mapped to
            values already in SI units (floats), or to text as the file would
            hold it (``"20 kHz"``). Typically the command-line options.

        Returns
        -------
        Experiment
            A new, validated record; this one is unchanged.
        """
        sections: dict[str, dict[str, object]] = {}
        for dotted, value in overrides.items():
            if value is None:
                continue
            section, _, key = dotted.partition(".")
            spec = _SCHEMA.get(section)
            if spec is None or key not in spec[1]:
                raise ExperimentError("unknown setting", key=dotted)
            kind = spec[1][key]
            if isinstance(value, Real) and not isinstance(value, bool) and kind[0] == "quantity":
                value = _check_number(float(value), kind, key=dotted, path=None)
            else:
                value = _convert(value, kind, key=dotted, path=None)
            sections.setdefault(section, {})[key] = value
        changes = {
            name: dataclasses.replace(getattr(self, name), **values)
            for name, values in sections.items()
        }
        new = dataclasses.replace(self, **changes)
        _check_consistency(new, path=None)
        return new


# The kind of each key: ("quantity", SI unit) for a positive value with a unit,
# ("choice", allowed...), ("text",), ("fraction",) or ("index",).
_SCHEMA: dict[str, tuple[type, dict[str, tuple]]] = {
    "recording": (
        RecordingSettings,
        {
            "frame_rate": ("quantity", "Hz"),
            "pixel_size": ("quantity", "m"),
            "first_frame": ("index",),
            "last_frame": ("index",),
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
    "drops": (Drops, {"radius": ("quantity", "m")}),
}
_SCHEMA["medium"] = _SCHEMA["liquid"]


def _known(names) -> str:
    return ", ".join(sorted(names))


def _check_number(value: float, kind: tuple, *, key: str, path) -> float:
    """Check an SI magnitude: finite and strictly positive (all dropkin's are)."""
    unit = kind[1]
    if not math.isfinite(value):
        raise ExperimentError("is not a finite number", key=key, value=value, path=path)
    if value <= 0:
        raise ExperimentError(
            "must be positive",
            key=key,
            value=value,
            path=path,
            expected=f"a value above 0 {unit}" if unit != "K" else "a temperature above 0 K",
        )
    return value


def _convert(value, kind: tuple, *, key: str, path):
    """Turn one value of the file into its SI form, or raise naming the key."""
    what = kind[0]
    if what == "quantity":
        si = parse_si(value, kind[1], key=key, path=path)
        return _check_number(si, kind, key=key, path=path)
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


def _check_consistency(exp: Experiment, *, path) -> None:
    rec = exp.recording
    if rec.last_frame is not None and rec.last_frame < rec.first_frame:
        raise ExperimentError(
            f"comes before recording.first_frame = {rec.first_frame}",
            key="recording.last_frame",
            value=rec.last_frame,
            path=path,
        )


def _from_mapping(document: dict, *, path) -> Experiment:
    unknown = set(document) - set(_SCHEMA)
    if unknown:
        name = sorted(unknown)[0]
        raise ExperimentError(
            "unknown section or key",
            key=name,
            path=path,
            expected=f"one of the sections {_known(_SCHEMA)}",
        )
    parts: dict[str, object] = {}
    for section, (record_type, keys) in _SCHEMA.items():
        table = document.get(section, {})
        if not isinstance(table, dict):
            raise ExperimentError(
                "must be a table",
                key=section,
                path=path,
                expected=f"a [{section}] section",
            )
        for key in table:
            if key not in keys:
                raise ExperimentError(
                    "unknown key",
                    key=f"{section}.{key}",
                    path=path,
                    expected=f"one of {_known(keys)}",
                )
        values = {
            key: _convert(value, keys[key], key=f"{section}.{key}", path=path)
            for key, value in table.items()
        }
        if section == "medium" and "name" not in values and not table:
            values["name"] = "air"
        parts[section] = record_type(**values)
    exp = Experiment(**parts, path=None if path is None else Path(path))
    _check_consistency(exp, path=path)
    return exp


def experiment_from_mapping(document: dict, *, path=None) -> Experiment:
    """Validate tables as an experiment file holds them (as ``tomllib`` reads it).

    The rules are the file's: a bare number where a unit is needed is refused.
    """
    return _from_mapping(document, path=path)


def experiment_from_toml(text: str, *, path=None) -> Experiment:
    """Parse the text of an experiment file.

    Parameters
    ----------
    text : str
        TOML text in the form of ``experiment.toml``.
    path : str or os.PathLike, optional
        Where the text came from, for error messages and :attr:`Experiment.path`.

    Raises
    ------
    ExperimentError
        For malformed TOML, unknown sections or keys, bare numbers where a
        quantity is needed, wrong dimensions and values out of range.
    """
    try:
        document = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ExperimentError(f"is not valid TOML ({exc})", path=path) from None
    return _from_mapping(document, path=path)


def read_experiment(path) -> Experiment:
    """Read and validate an experiment file.

    Raises
    ------
    ExperimentError
        If the file cannot be read or is not a valid experiment description.
    """
    path = Path(path)
    try:
        text = path.read_bytes().decode("utf-8")
    except UnicodeDecodeError:
        raise ExperimentError("is not UTF-8 text", path=path) from None
    except OSError as exc:
        raise ExperimentError(f"cannot be read ({exc.strerror or exc})", path=path) from None
    return experiment_from_toml(text, path=path)


def find_experiment_file(source) -> Path | None:
    """Find the experiment file that belongs to a recording, if there is one.

    Inside a folder of frames it is ``experiment.toml``; beside a recording
    file ``shot.tif`` it is ``shot.toml``.
    """
    source = Path(source)
    candidate = source / EXPERIMENT_FILE_NAME if source.is_dir() else source.with_suffix(".toml")
    return candidate if candidate.is_file() else None


def load_experiment(source, *, experiment=None, overrides=None) -> Experiment:
    """The experiment for a recording: its file (found or named) plus overrides.

    Parameters
    ----------
    source : str or os.PathLike
        The recording (folder or file).
    experiment : str or os.PathLike, optional
        An experiment file named explicitly; it must exist.
    overrides : dict, optional
        Values that take precedence over the file, as for
        :meth:`Experiment.with_overrides`.

    Returns
    -------
    Experiment
        With ``path`` None when there was no file to read.
    """
    if experiment is not None:
        if not Path(experiment).is_file():
            raise ExperimentError("no such experiment file", path=experiment)
        exp = read_experiment(experiment)
    else:
        found = find_experiment_file(source)
        exp = read_experiment(found) if found is not None else Experiment()
    return exp.with_overrides(overrides) if overrides else exp


def experiment_to_toml(exp: Experiment, *, header: str = "") -> str:
    """The text of an experiment file that reads back as `exp` (values in SI).

    Floats are written with ``repr``, so :func:`experiment_from_toml` returns
    the same values exactly.

    Examples
    --------
    >>> exp = Experiment().with_overrides({"recording.frame_rate": "20 kHz",
    ...                                    "liquid.viscosity": "110 mPa*s"})
    >>> experiment_from_toml(experiment_to_toml(exp)) == exp
    True
    """
    lines = [f"# {line}".rstrip() for line in header.splitlines()]
    for section, (_, keys) in _SCHEMA.items():
        record = getattr(exp, section)
        default = type(record)() if section != "medium" else Fluid(name="air")
        rows = []
        for key, kind in keys.items():
            value = getattr(record, key)
            if value is None or (section != "medium" and value == getattr(default, key)):
                continue
            if kind[0] == "quantity":
                rows.append(f'{key} = "{float(value)!r} {kind[1]}"')
            elif kind[0] in ("choice", "text"):
                rows.append(f"{key} = {json.dumps(value, ensure_ascii=False)}")
            else:
                rows.append(f"{key} = {value!r}")
        if rows:
            lines += ["", f"[{section}]", *rows]
    return "\n".join(lines).lstrip("\n") + "\n"
