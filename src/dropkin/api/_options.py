"""The Python API's keywords: the command line's options, with the same names and values.

``dropkin.analyze(path, frame_rate="10 kHz", pixel_size="20 µm/px",
liquid="water", temperature="20 degC")`` means what ``dropkin analyze path
--frame-rate "10 kHz" --pixel-size "20 µm/px" --liquid water --temperature
"20 degC"`` means: the names are the options' with underscores (the
experiment's keys are in :mod:`dropkin._option_keys`, shared with the command
line), the values are text with a unit as on the command line, or numbers in
SI units. :func:`parse_options` sorts them into what the pipeline takes; a
bad keyword or value is an :class:`~dropkin.errors.ExperimentError` that names
the keyword.
"""

from __future__ import annotations

import math
import os
from contextlib import contextmanager
from dataclasses import dataclass
from numbers import Real

from .._option_keys import RECORDING_OPTION_KEYS, SAMPLE_OPTION_KEYS
from ..errors import ExperimentError
from ..pipeline import AnalysisSettings, parse_roi
from ..units import parse_si

__all__ = ["Options", "parse_options", "OPEN_KEYWORDS", "ANALYZE_KEYWORDS", "SETTING_RANGES"]

#: Whole-number settings and their allowed ranges (inclusive), as the command line's.
SETTING_RANGES = {
    "jobs": (1, 64),
    "chunk_size": (1, 4096),
    "overlays": (0, 50),
    "bootstrap": (0, 100000),
}
#: The edge level's range, as ``--threshold``'s.
THRESHOLD_RANGE = (0.05, 0.95)

_SETTINGS = (
    "roi",
    "threshold",
    "background",
    *SETTING_RANGES,
    "t0",
    "seed",
    "initial_radius",
    "plot_formats",
)
#: What :func:`dropkin.open` takes.
OPEN_KEYWORDS = ("experiment", *RECORDING_OPTION_KEYS)
#: What :func:`dropkin.analyze` takes.
ANALYZE_KEYWORDS = (*OPEN_KEYWORDS, *SAMPLE_OPTION_KEYS, "liquids", *_SETTINGS)


@dataclass(frozen=True)
class Options:
    """The keywords of a call, sorted.

    Attributes
    ----------
    experiment : str or None
        The experiment file named explicitly.
    overrides : dict
        Dotted experiment keys and their values as given.
    liquids : str or None
        The user's liquid library.
    settings : AnalysisSettings
    given : dict
        The keywords as given (JSON-ready), for the provenance.
    """

    experiment: str | None
    overrides: dict
    liquids: str | None
    settings: AnalysisSettings
    given: dict

    @contextmanager
    def named(self):
        """Make an error about a value a keyword gave name the keyword (as the
        command line names its option), not the experiment key."""
        keywords = _keys_to_keywords()
        try:
            yield
        except ExperimentError as exc:
            name = keywords.get(exc.key)
            if name is None or name not in self.given:
                raise
            raise ExperimentError(
                exc.message, key=name, value=self.given[name], expected=exc.expected
            ) from None


def _keys_to_keywords() -> dict:
    return {key: name for name, key in {**RECORDING_OPTION_KEYS, **SAMPLE_OPTION_KEYS}.items()}


def _json(value):
    if isinstance(value, bool | int | float | str) or value is None:
        return value
    if isinstance(value, list | tuple):
        return [_json(v) for v in value]
    return os.fspath(value) if isinstance(value, os.PathLike) else str(value)


def parse_options(options: dict, *, allowed=ANALYZE_KEYWORDS, call: str = "dropkin.analyze"):
    """Sort a call's keywords (see the module docstring) into an :class:`Options`.

    Raises
    ------
    ExperimentError
        For an unknown keyword (with the known ones) or a setting out of its
        range, naming the keyword.
    """
    unknown = sorted(set(options) - set(allowed))
    if unknown:
        elsewhere = unknown[0] in ANALYZE_KEYWORDS  # e.g. liquid= given to dropkin.open
        where = " (an option of dropkin.analyze)" if elsewhere else ""
        raise ExperimentError(
            f"is not an option of {call}{where}",
            key=unknown[0],
            expected=", ".join(allowed),
        )
    given = {k: _json(v) for k, v in options.items() if v is not None}
    overrides = {
        key: options[name]
        for name, key in {**RECORDING_OPTION_KEYS, **SAMPLE_OPTION_KEYS}.items()
        if options.get(name) is not None
    }
    liquids = options.get("liquids")
    experiment = options.get("experiment")
    return Options(
        experiment=None if experiment is None else os.fspath(experiment),
        overrides=overrides,
        liquids=None if liquids is None else os.fspath(liquids),
        settings=_settings(options),
        given=given,
    )


def _whole(options: dict, name: str, default: int) -> int:
    value = options.get(name)
    if value is None:
        return default
    low, high = SETTING_RANGES[name]
    if isinstance(value, bool) or not isinstance(value, int) or not low <= value <= high:
        raise ExperimentError(
            "is not a whole number in range", key=name, value=value, expected=f"{low} to {high}"
        )
    return value


def _threshold(value) -> float:
    low, high = THRESHOLD_RANGE
    if value is None:
        return 0.5
    ok = isinstance(value, Real) and not isinstance(value, bool) and math.isfinite(value)
    if not ok or not low <= value <= high:
        raise ExperimentError(
            "is not an edge level in range",
            key="threshold",
            value=value,
            expected=f"{low} to {high}",
        )
    return float(value)


def _t0(value) -> float | None:
    if value is None:
        return None
    if isinstance(value, Real) and not isinstance(value, bool):
        number = float(value)
    else:
        number = parse_si(value, "s", key="t0")
    if not math.isfinite(number):
        raise ExperimentError(
            "is not a finite time", key="t0", value=value, expected='e.g. "1.2 ms"'
        )
    return number


def _roi(value):
    if value is None or isinstance(value, str):
        return parse_roi(value, key="roi")
    try:
        r0, r1, c0, c1 = (int(v) for v in value)
    except (TypeError, ValueError):
        raise ExperimentError(
            "is not a region", key="roi", value=value, expected='"ROW0:ROW1,COL0:COL1" or 4 ints'
        ) from None
    return (r0, r1, c0, c1)


def _settings(options: dict) -> AnalysisSettings:
    """The analysis settings among the keywords (the defaults are the command line's)."""
    seed = options.get("seed", 0)
    if isinstance(seed, bool) or not isinstance(seed, int):
        raise ExperimentError("is not a whole number", key="seed", value=seed)
    background = options.get("background")
    if background is not None and not os.path.isfile(background):
        raise ExperimentError("is not a file", key="background", value=os.fspath(background))
    return AnalysisSettings(
        roi=_roi(options.get("roi")),
        threshold=_threshold(options.get("threshold")),
        background=None if background is None else os.fspath(background),
        jobs=_whole(options, "jobs", 1),
        chunk_size=_whole(options, "chunk_size", 64),
        overlays=_whole(options, "overlays", 6),
        t0=_t0(options.get("t0")),
        seed=seed,
        bootstrap=_whole(options, "bootstrap", 200),
        initial_radius=bool(options.get("initial_radius", False)),
        plot_formats=_plot_formats(options.get("plot_formats", "png")),
    )


def _plot_formats(value) -> tuple[str, ...]:
    """``plot_formats``: "png,svg" or a sequence of formats; PNG always among them."""
    from ..report._style import PLOT_FORMATS

    given = value.split(",") if isinstance(value, str) else value
    try:
        formats = tuple(dict.fromkeys(str(v).strip().lower() for v in given if str(v).strip()))
    except TypeError:
        formats = ()
    if not formats or set(formats) - set(PLOT_FORMATS):
        raise ExperimentError(
            f"is not a list of {', '.join(PLOT_FORMATS)} (e.g. 'png,svg')",
            key="plot_formats",
            value=value,
        )
    return ("png", *(f for f in formats if f != "png"))
