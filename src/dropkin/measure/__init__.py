"""A recording and its experiment in, a :class:`~dropkin.series.RadiusSeries` out:
frames streamed in chunks (optionally in worker processes) through ``vision/``."""

from ._hash import recording_sha256 as recording_sha256
from ._measure import measure as measure
from ._options import MeasureOptions as MeasureOptions
from ._prepare import Preparation as Preparation
from ._prepare import prepare as prepare

__all__ = [
    "MeasureOptions",
    "Preparation",
    "measure",
    "prepare",
    "recording_sha256",
]
