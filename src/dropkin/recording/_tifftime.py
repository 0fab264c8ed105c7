"""Frame timing from a TIFF file's own metadata: ImageJ and OME.

Two sources are read, and only when they are plainly about time:

- ImageJ's ``finterval`` (with its ``tunit``), when the stack's frames form a
  time axis;
- OME-XML: per-plane ``DeltaT`` when every frame has one and they increase,
  else the ``TimeIncrement`` of the first image's ``Pixels``.

Anything else (vendor tags, file dates) is not trusted.
"""

from __future__ import annotations

import math
import xml.etree.ElementTree as ElementTree

import numpy as np

from ._base import FileTiming

__all__ = ["timing_from_imagej", "timing_from_ome"]

# Seconds per unit, for the unit names ImageJ and OME write.
_SECONDS = {
    "s": 1.0,
    "sec": 1.0,
    "second": 1.0,
    "seconds": 1.0,
    "ms": 1e-3,
    "msec": 1e-3,
    "us": 1e-6,
    "\N{MICRO SIGN}s": 1e-6,
    "\N{GREEK SMALL LETTER MU}s": 1e-6,
    "usec": 1e-6,
    "microsecond": 1e-6,
    "ns": 1e-9,
    "nsec": 1e-9,
    "min": 60.0,
    "h": 3600.0,
}

# Axis codes (tifffile's) that may stand for successive instants.
_TIME_AXES = {"T", "I", "Q"}


def _seconds(value, unit) -> float | None:
    """`value` in `unit` as seconds, or None when either cannot be read."""
    try:
        number = float(value)
    except (TypeError, ValueError, OverflowError):
        return None
    factor = _SECONDS.get(str(unit).strip().lower())
    return None if factor is None else number * factor


# Longest frame interval taken from a file: 10^6 s (11.6 days). A longer one
# is no recording of drops, and with it the times of a long stack would leave
# the range of floating point.
_LONGEST_INTERVAL = 1e6


def _usable(interval: float | None) -> bool:
    """Whether `interval` is a positive time, at most 10^6 s, whose rate is finite."""
    return (
        interval is not None
        and math.isfinite(interval)
        and 0 < interval <= _LONGEST_INTERVAL
        and math.isfinite(1.0 / interval)
    )


def _count(text, default: int) -> int | None:
    """An OME integer attribute, or None when it is not one."""
    try:
        return int(text if text is not None else default)
    except (TypeError, ValueError):
        return None


def timing_from_imagej(
    metadata: dict | None, frame_axes: str
) -> tuple[FileTiming | None, tuple[str, ...]]:
    """Read ImageJ's frame interval.

    Parameters
    ----------
    metadata : dict or None
        ``TiffFile.imagej_metadata``.
    frame_axes : str
        tifffile's axis codes of the axes that were flattened into frames.

    Returns
    -------
    timing : FileTiming or None
    notes : tuple of str
        Why an interval that is present was not used.
    """
    if not metadata or "finterval" not in metadata:
        return None, ()
    unit = metadata.get("tunit", "s")
    interval = _seconds(metadata["finterval"], unit)
    if not _usable(interval):
        value = metadata["finterval"]
        return None, (f"ImageJ finterval = {value!r} {unit} is not a positive time; not used",)
    if len(frame_axes) > 1 or not set(frame_axes) <= _TIME_AXES:
        return None, (
            (
                f"ImageJ finterval not used: the frames run over axes {frame_axes!r}, "
                "not over time alone"
            ),
        )
    return FileTiming("file metadata (ImageJ finterval)", interval=interval), ()


def _local(tag: str) -> str:
    return tag.rsplit("}", 1)[-1]


def timing_from_ome(xml: str | None, n_frames: int) -> tuple[FileTiming | None, tuple[str, ...]]:
    """Read per-frame ``DeltaT`` or ``TimeIncrement`` from OME-XML.

    Parameters
    ----------
    xml : str or None
        ``TiffFile.ome_metadata``.
    n_frames : int
        Number of frames in the stack; the planes must match it.

    Returns
    -------
    timing : FileTiming or None
    notes : tuple of str
        Why timing that is present was not used.
    """
    if not xml:
        return None, ()
    try:
        root = ElementTree.fromstring(xml)
    except ElementTree.ParseError:
        return None, ("OME metadata cannot be parsed; its timing was not used",)
    pixels = next((e for e in root.iter() if _local(e.tag) == "Pixels"), None)
    if pixels is None:
        return None, ()
    sizes = [_count(pixels.get(f"Size{a}"), 1) for a in "ZC"]
    if sizes != [1, 1]:
        return None, ("OME timing not used: the stack has several Z planes or channels",)
    notes: list[str] = []
    planes = [e for e in pixels if _local(e.tag) == "Plane" and "DeltaT" in e.attrib]
    if planes and any(_count(e.get("TheT"), 0) is None for e in planes):
        notes.append("OME DeltaT not used: a plane's TheT is not an integer")
        planes = []
    if planes:
        order = sorted(planes, key=lambda e: _count(e.get("TheT"), 0))
        times = np.array(
            [_seconds(e.get("DeltaT"), e.get("DeltaTUnit", "s")) for e in order],
            dtype=float,
        )
        good = len(times) == n_frames and bool(np.all(np.isfinite(times)))
        if good and len(times) > 1:
            with np.errstate(over="ignore"):  # finite times whose steps overflow
                times = times - times[0]  # the increase must survive this, too
                steps = np.diff(times)
                good = bool(np.all(steps > 0)) and _usable(float(np.mean(steps)))
        if good:
            return FileTiming("file timestamps (OME DeltaT)", times=times), ()
        notes.append(
            "OME DeltaT not used: not one increasing time per frame "
            f"({len(times)} values for {n_frames} frames)"
        )
    if "TimeIncrement" in pixels.attrib:
        interval = _seconds(pixels.get("TimeIncrement"), pixels.get("TimeIncrementUnit", "s"))
        if _usable(interval):
            origin = "file metadata (OME TimeIncrement)"
            return FileTiming(origin, interval=interval), tuple(notes)
        notes.append("OME TimeIncrement is not a positive time; not used")
    return None, tuple(notes)
