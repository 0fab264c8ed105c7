"""TOML text to a mapping, with every way it can fail as one clear error.

Examples
--------
>>> load_toml('frame_rate = "20 kHz"', path="experiment.toml")
{'frame_rate': '20 kHz'}
"""

from __future__ import annotations

import tomllib

from .errors import ExperimentError

__all__ = ["load_toml"]


def load_toml(text: str, *, path=None) -> dict:
    """The document of `text`; an :class:`ExperimentError` naming `path` if it is not TOML.

    Tables or arrays nested so deeply that the parser runs out of stack are
    refused the same way (Python's recursion limit, about a thousand levels:
    no experiment, liquid or campaign file comes near it).
    """
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ExperimentError(f"is not valid TOML ({exc})", path=path) from None
    except RecursionError:
        reason = "is not usable TOML (tables or arrays nested too deeply)"
        raise ExperimentError(reason, path=path) from None
