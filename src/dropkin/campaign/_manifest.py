"""The campaign manifest: which recordings a batch analyses, and with what.

A manifest is a TOML file::

    [campaign]
    name = "viscosity series, 21 degC"     # optional

    [shared]                               # every recording (tables as in experiment.toml)
    recording = { pixel_size = "2.5 um" }
    setup = { geometry = "coalescence", view = "side" }
    liquid = { name = "glycerol-water", temperature = "21 degC" }
    analysis = { bootstrap = 200, seed = 0 }

    [[recordings]]
    path = "g80"                           # a folder of frames, a TIFF or a video
    liquid = { glycerol_mass_fraction = 0.80 }
    recording = { frame_rate = "50 kHz" }

    [[recordings]]
    glob = "water_*"                       # every matching recording, each labelled by its name
    liquid = "my-oil"                      # short for liquid = { name = "my-oil" }
    liquids = "liquids.toml"               # a liquid library of one's own (TOML)
    temperature = "22 degC"                # short for liquid.temperature
    drop_radius = "1 mm"                   # short for drops.radius

The short keys are the command line's sample options (``medium`` too); a
liquid other than the experiment file's replaces the file's liquid and its
values (see :meth:`dropkin.experiment.Experiment.with_overrides`).

Values are merged in this order, later ones winning: the recording's own
experiment file (``experiment.toml`` in its folder, ``<stem>.toml`` beside
it, or the file an entry names with ``experiment = "..."``), then
``[shared]``, then the entry's own tables. ``analysis`` holds the settings of
the measurement and the fit (``threshold``, ``roi``, ``background``,
``overlays``, ``t0``, ``seed``, ``bootstrap``, ``chunk_size``, ``initial_radius``).

Paths are resolved relative to the manifest's folder and may not leave it
(no absolute paths, no ``..`` out of it, no symbolic link pointing out of
it) unless the caller allows outside paths.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from pathlib import Path

from .._toml import load_toml
from ..errors import ExperimentError
from ..pipeline._steps import AnalysisSettings, parse_roi

__all__ = ["Task", "Campaign", "read_manifest", "LABEL_PATTERN"]

LABEL_PATTERN = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._-]{0,99}$")
_SECTIONS = ("recording", "setup", "liquid", "medium", "drops")
#: Short keys (as the command line's sample options) and the experiment key each stands for.
_SHORT_KEYS = {"temperature": ("liquid", "temperature"), "drop_radius": ("drops", "radius")}
_SAMPLE_KEYS = (*_SHORT_KEYS, "liquids")
_ENTRY_KEYS = {"path", "glob", "label", "experiment", "analysis", *_SECTIONS, *_SAMPLE_KEYS}
_ANALYSIS_KEYS = ("threshold", "roi", "background", "overlays", "t0", "seed", "bootstrap")
_ANALYSIS_KEYS += ("chunk_size", "initial_radius")


@dataclass(frozen=True)
class Task:
    """One recording of a campaign, ready to analyse (plain data: it is pickled).

    Attributes
    ----------
    label : str
        Unique in the campaign; the name of its output folder.
    source : str
        Absolute path of the recording.
    experiment_file : str or None
        An experiment file the entry names (else the recording's own is found).
    overrides : dict
        Dotted experiment keys to values as the manifest wrote them.
    settings : AnalysisSettings
    liquids_file : str or None
        Absolute path of the user's liquid library the entry (or ``[shared]``) names.
    where : str
        The entry in the manifest (``recordings[3]``), for messages.
    """

    label: str
    source: str
    experiment_file: str | None
    overrides: dict = field(default_factory=dict)
    settings: AnalysisSettings = AnalysisSettings()
    where: str = ""
    liquids_file: str | None = None


@dataclass(frozen=True)
class Campaign:
    """A manifest, read and checked."""

    path: Path
    name: str
    tasks: tuple[Task, ...]


def _fail(message, path, key, **fields):
    raise ExperimentError(message, path=path, key=key, **fields)


def _table(value, path, key) -> dict:
    if not isinstance(value, dict):
        _fail("must be a table", path, key)
    return value


def _experiment_tables(table: dict, path, where: str) -> tuple[dict, dict]:
    """An entry's experiment tables with its short keys folded in; and, for each
    dotted key a short key gave, that short key (for messages)."""
    document, short = {}, {}
    for section in _SECTIONS:
        if section in table:
            value = table[section]
            if section in ("liquid", "medium") and isinstance(value, str):
                value = {"name": value}  # liquid = "water": the library name
            document[section] = dict(_table(value, path, f"{where}.{section}"))
    for name, (section, key) in _SHORT_KEYS.items():
        if name in table:
            values = document.setdefault(section, {})
            if key in values:
                _fail(
                    "is given twice",
                    path,
                    f"{where}.{name}",
                    expected=f"{name} or {section}.{key}",
                )
            values[key] = table[name]
            short[f"{section}.{key}"] = name
    return document, short


def _experiment_values(table: dict, path, where: str) -> dict:
    """Flatten an entry's experiment tables to dotted keys, checking each value."""
    from ..experiment import experiment_from_mapping

    document, short = _experiment_tables(table, path, where)
    flat = {
        f"{section}.{key}": value
        for section, values in document.items()
        for key, value in values.items()
    }
    try:
        experiment_from_mapping(document)  # the rules of an experiment file
    except ExperimentError as exc:
        key = short.get(exc.key, exc.key)
        raise ExperimentError(
            exc.message,
            path=path,
            key=f"{where}.{key}" if key else where,
            value=exc.value,
            expected=exc.expected,
        ) from None
    return flat


def _liquids_file(table: dict, place, where: str) -> str | None:
    """The liquid library a table names (``liquids``), checked now; None when it names none."""
    from ..liquids import load_liquid_library

    if "liquids" not in table:
        return None
    key = f"{where}.liquids"
    full = place.resolve(table["liquids"], key, must="file")
    try:
        load_liquid_library(full)  # a broken library fails before anything runs
    except ExperimentError as exc:
        raise ExperimentError(
            exc.message, path=place.path, key=key, value=table["liquids"], expected=exc.expected
        ) from None
    return str(full)


def _int(value, path, key, lo, hi) -> int:
    if isinstance(value, bool) or not isinstance(value, int) or not lo <= value <= hi:
        _fail("must be a whole number", path, key, value=value, expected=f"{lo} to {hi}")
    return value


def _analysis(table: dict, base: dict, path, where: str, resolve) -> dict:
    from ..units import parse_si

    values = dict(base)
    for key, value in _table(table, path, f"{where}.analysis").items():
        dotted = f"{where}.analysis.{key}"
        if key not in _ANALYSIS_KEYS:
            _fail("unknown key", path, dotted, expected=f"one of {', '.join(_ANALYSIS_KEYS)}")
        if key == "threshold":
            ok = isinstance(value, int | float) and not isinstance(value, bool)
            if not ok or not (math.isfinite(value) and 0.05 <= value <= 0.95):
                _fail("must be a number", path, dotted, value=value, expected="0.05 to 0.95")
            values[key] = float(value)
        elif key == "roi":
            values[key] = _roi(value, path, dotted)
        elif key == "background":
            values[key] = str(resolve(value, dotted, must="file"))
        elif key == "t0":
            values[key] = parse_si(value, "s", key=dotted, path=path)
        elif key == "overlays":
            values[key] = _int(value, path, dotted, 0, 50)
        elif key == "bootstrap":
            values[key] = _int(value, path, dotted, 0, 100000)
        elif key == "chunk_size":
            values[key] = _int(value, path, dotted, 1, 4096)
        elif key == "initial_radius":
            if not isinstance(value, bool):
                _fail("must be true or false", path, dotted, value=value)
            values[key] = value
        else:  # seed
            values[key] = _int(value, path, dotted, 0, 2**32 - 1)
    return values


def _roi(value, path, key):
    if not isinstance(value, str):
        _fail("is not a region", path, key, value=value, expected="'ROW0:ROW1,COL0:COL1'")
    r0, r1, c0, c1 = parse_roi(value, key=key, path=path)
    if r0 < 0 or c0 < 0 or r1 <= r0 or c1 <= c0:
        _fail("is not a region", path, key, value=value, expected="'ROW0:ROW1,COL0:COL1'")
    return (r0, r1, c0, c1)


def _label_from(path: Path) -> str:
    stem = path.name if path.is_dir() else path.stem
    label = re.sub(r"[^A-Za-z0-9._-]+", "-", stem).lstrip("._-") or "recording"
    return label[:100]


def _read_document(path: Path) -> dict:
    """The manifest's TOML, with only the top-level tables a manifest has."""
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise ExperimentError(f"cannot be read ({exc.strerror or exc})", path=path) from None
    except UnicodeDecodeError:
        raise ExperimentError("is not UTF-8 text", path=path) from None
    document = load_toml(text, path=path)
    for key in document:
        if key not in ("campaign", "shared", "recordings"):
            _fail("unknown key", path, key, expected="campaign, shared or recordings")
    return document


@dataclass(frozen=True)
class _Place:
    """Where a manifest is, and whether the paths it names may leave its folder."""

    path: Path
    base: Path
    allow_outside: bool

    def resolve(self, text, key, *, must="any") -> Path:
        """A path the manifest names, made absolute and checked (see the module notes)."""
        path = self.path
        if not isinstance(text, str) or not text.strip():
            _fail("must be a path", path, key, value=text)
        given = Path(text)
        if given.is_absolute() and not self.allow_outside:
            _fail("is an absolute path", path, key, value=text, expected=_INSIDE)
        full = (self.base / given).resolve()
        if not self.allow_outside and not full.is_relative_to(self.base):
            _fail("leads out of the manifest's folder", path, key, value=text, expected=_INSIDE)
        if not full.exists():
            _fail("does not exist", path, key, value=text)
        if must == "file" and not full.is_file():
            _fail("is not a file", path, key, value=text)
        return full


def _check_label(label, seen: dict, source, path, where: str) -> None:
    """A usable label, used by no other recording (whatever its case)."""
    if not isinstance(label, str) or not LABEL_PATTERN.match(label):
        _fail(
            "is not a usable label",
            path,
            f"{where}.label",
            value=label,
            expected="letters, digits, '.', '_' or '-', starting with a letter or digit",
        )
    if label.lower() in seen:
        _fail(
            f"is also the label of {seen[label.lower()]}",
            path,
            f"{where}.label",
            value=label,
            expected="a label of its own (labels name the output folders)",
        )
    seen[label.lower()] = str(source)


def _entry_tasks(entry, where: str, shared: tuple, place: _Place, seen) -> list[Task]:
    """The tasks of one ``[[recordings]]`` entry (one, or one per match of its glob)."""
    path, resolve = place.path, place.resolve
    entry = _table(entry, path, where)
    for key in entry:
        if key not in _ENTRY_KEYS:
            _fail("unknown key", path, f"{where}.{key}", expected=", ".join(sorted(_ENTRY_KEYS)))
    if ("path" in entry) == ("glob" in entry):
        _fail("needs either path or glob", path, where)
    if "glob" in entry and "label" in entry:
        _fail("cannot label every match of a glob", path, f"{where}.label")
    shared_values, shared_analysis, shared_liquids = shared
    values = {**shared_values, **_experiment_values(entry, path, where)}
    liquids = _liquids_file(entry, place, where) or shared_liquids
    settings = AnalysisSettings(
        **_analysis(entry.get("analysis", {}), shared_analysis, path, where, resolve)
    )
    experiment = entry.get("experiment")
    if experiment is not None:
        experiment = str(resolve(experiment, f"{where}.experiment", must="file"))
    if "path" in entry:
        sources = [resolve(entry["path"], f"{where}.path")]
    else:
        sources = _glob(entry["glob"], place.base, path, f"{where}.glob", place.allow_outside)
    tasks = []
    for source in sources:
        label = entry.get("label", _label_from(source))
        _check_label(label, seen, source, path, where)
        tasks.append(Task(label, str(source), experiment, values, settings, where, liquids))
    return tasks


def read_manifest(path, *, allow_outside: bool = False) -> Campaign:
    """Read a campaign manifest and check every entry before anything runs.

    Parameters
    ----------
    path : str or os.PathLike
    allow_outside : bool
        Accept absolute paths and paths that lead out of the manifest's folder.

    Raises
    ------
    ExperimentError
        Naming the manifest and the key: malformed TOML, unknown keys, bad
        values, paths that do not exist or leave the manifest's folder,
        labels that clash.
    """
    path = Path(path)
    document = _read_document(path)
    place = _Place(path, path.parent.resolve(), allow_outside)
    campaign = _table(document.get("campaign", {}), path, "campaign")
    for key in campaign:
        if key not in ("name", "description"):
            _fail("unknown key", path, f"campaign.{key}", expected="name or description")
    shared = _table(document.get("shared", {}), path, "shared")
    for key in shared:
        if key not in (*_SECTIONS, *_SAMPLE_KEYS, "analysis"):
            expected = f"experiment tables, {', '.join(_SAMPLE_KEYS)} or analysis"
            _fail("unknown key", path, f"shared.{key}", expected=expected)
    shared_values = _experiment_values(shared, path, "shared")
    shared_analysis = _analysis(shared.get("analysis", {}), {}, path, "shared", place.resolve)
    shared_liquids = _liquids_file(shared, place, "shared")
    entries = document.get("recordings")
    if not isinstance(entries, list) or not entries:
        _fail("lists no recordings", path, "recordings", expected="[[recordings]] entries")
    tasks: list[Task] = []
    seen: dict[str, str] = {}
    for i, entry in enumerate(entries):
        shared_all = (shared_values, shared_analysis, shared_liquids)
        tasks += _entry_tasks(entry, f"recordings[{i + 1}]", shared_all, place, seen)
    name = campaign.get("name", path.stem)
    return Campaign(path=path, name=str(name), tasks=tuple(tasks))


_INSIDE = "a path inside the manifest's folder (or allow outside paths)"


def _glob(pattern, base: Path, path, key, allow_outside) -> list[Path]:
    if not isinstance(pattern, str) or not pattern.strip():
        _fail("must be a glob pattern", path, key, value=pattern)
    if Path(pattern).is_absolute():
        if not allow_outside:
            _fail("is an absolute path", path, key, value=pattern, expected=_INSIDE)
        import glob as globbing

        matches = [Path(p) for p in globbing.glob(pattern)]
    else:
        matches = list(base.glob(pattern))
    found = []
    for match in sorted(matches):
        full = match.resolve()
        if not allow_outside and not full.is_relative_to(base):
            _fail("leads out of the manifest's folder", path, key, value=pattern, expected=_INSIDE)
        if match.name.startswith(".") or match.suffix.lower() == ".toml":
            continue  # hidden files and experiment files are not recordings
        if match.suffix.lower() == ".json":
            continue
        found.append(full)
    if not found:
        _fail("matches no recording", path, key, value=pattern)
    return found
