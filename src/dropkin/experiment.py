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
from dataclasses import dataclass, field
from numbers import Real
from pathlib import Path

from ._experiment_schema import (
    GEOMETRIES,
    SCHEMA,
    VIEWS,
    Drops,
    Fluid,
    RecordingSettings,
    Setup,
    Uncertainty,
    check_number,
    convert,
    known,
)
from ._toml import load_toml
from .errors import ExperimentError

__all__ = [
    "Experiment",
    "RecordingSettings",
    "Setup",
    "Fluid",
    "Drops",
    "Uncertainty",
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
    uncertainty : Uncertainty
        Relative standard uncertainties the file states for its material
        values and the drop radius (``[uncertainty]``); empty by default.
    path : pathlib.Path or None
        The file it was read from; None when no file was found.
    """

    recording: RecordingSettings = field(default_factory=RecordingSettings)
    setup: Setup = field(default_factory=Setup)
    liquid: Fluid = field(default_factory=Fluid)
    medium: Fluid = field(default_factory=lambda: Fluid(name="air"))
    drops: Drops = field(default_factory=Drops)
    uncertainty: Uncertainty = field(default_factory=Uncertainty)
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

        Notes
        -----
        Naming another liquid (``liquid.name``, or ``medium.name``) replaces
        the fluid: the material values and the glycerol fraction the file
        gave for the old one, and the file's ``[uncertainty]`` of those
        values, are dropped unless the same overrides give them again. The
        temperature stays (it belongs to the experiment, not to the liquid).
        The same name, whatever its case, keeps everything.
        """
        sections: dict[str, dict[str, object]] = {}
        for dotted, value in overrides.items():
            if value is None:
                continue
            section, _, key = dotted.partition(".")
            spec = SCHEMA.get(section)
            if spec is None or key not in spec[1]:
                raise ExperimentError("unknown setting", key=dotted)
            kind = spec[1][key]
            if isinstance(value, Real) and not isinstance(value, bool) and kind[0] == "quantity":
                value = check_number(float(value), kind, key=dotted, path=None)
            else:
                value = convert(value, kind, key=dotted, path=None)
            sections.setdefault(section, {})[key] = value
        base = _replace_renamed_fluids(self, sections)
        changes = {
            name: dataclasses.replace(getattr(base, name), **values)
            for name, values in sections.items()
        }
        new = dataclasses.replace(base, **changes)
        _check_consistency(new, path=None)
        return new


#: The values that describe a fluid itself (dropped when another fluid is named),
#: and the ``[uncertainty]`` keys of each section's values.
_FLUID_VALUES = ("glycerol_mass_fraction", "surface_tension", "viscosity", "density")
_FLUID_UNCERTAINTIES = {
    "liquid": ("surface_tension", "viscosity", "density"),
    "medium": ("medium_viscosity", "medium_density"),
}


def _replace_renamed_fluids(exp: Experiment, sections: dict) -> Experiment:
    """`exp` without the values of a fluid that `sections` renames (see ``with_overrides``)."""
    for section, uncertain in _FLUID_UNCERTAINTIES.items():
        name = sections.get(section, {}).get("name")
        fluid = getattr(exp, section)
        if name is None or (fluid.name or "").lower() == name.lower():
            continue
        fluid = dataclasses.replace(fluid, **dict.fromkeys(_FLUID_VALUES))
        uncertainty = dataclasses.replace(exp.uncertainty, **dict.fromkeys(uncertain))
        exp = dataclasses.replace(exp, **{section: fluid}, uncertainty=uncertainty)
    return exp


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
    unknown = set(document) - set(SCHEMA)
    if unknown:
        name = sorted(unknown)[0]
        raise ExperimentError(
            "unknown section or key",
            key=name,
            path=path,
            expected=f"one of the sections {known(SCHEMA)}",
        )
    parts: dict[str, object] = {}
    for section, (record_type, keys) in SCHEMA.items():
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
                    expected=f"one of {known(keys)}",
                )
        values = {
            key: convert(value, keys[key], key=f"{section}.{key}", path=path)
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
    return _from_mapping(load_toml(text, path=path), path=path)


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
    file ``shot.tif`` it is ``shot.toml``. A file found so that is a symbolic
    link must lead inside the recording's folder (the folder of frames, or
    the folder holding the recording file), as the frames' links must; a
    link leading out of it, or nowhere, is refused, naming the link.
    """
    source = Path(source)
    folder = source if source.is_dir() else source.parent
    candidate = folder / EXPERIMENT_FILE_NAME if source.is_dir() else source.with_suffix(".toml")
    if candidate.is_symlink():
        try:
            target = candidate.resolve(strict=True)
        except (OSError, RuntimeError):  # a loop, or a link to nothing
            raise ExperimentError(
                "is a symbolic link that loops or leads nowhere", path=candidate
            ) from None
        if not target.is_relative_to(folder.resolve()):
            raise ExperimentError(
                f"is a symbolic link leading out of the recording's folder (to {target})",
                path=candidate,
                expected="the file itself, or --experiment FILE",
            )
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
    for section, (_, keys) in SCHEMA.items():
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
