"""A recording and its experiment in, a :class:`~dropkin.series.RadiusSeries` out:
frames streamed in chunks (optionally in worker processes) through ``vision/``."""

from ._stream import MeasureOptions as MeasureOptions
from ._stream import Preparation as Preparation
from ._stream import measure as measure
from ._stream import prepare as prepare
from ._stream import recording_sha256 as recording_sha256

__all__ = [
    "MeasureOptions",
    "Preparation",
    "measure",
    "prepare",
    "recording_sha256",
]
