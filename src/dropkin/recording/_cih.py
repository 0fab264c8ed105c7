"""The header of a .mraw recording: a .cih text file or a .cihx file.

A .cih file is lines of ``Key : Value`` (``Record Rate(fps) : 60000``); a
.cihx file holds an XML document ``<cih>...</cih>`` (after a few bytes of
binary preamble) whose elements carry the same facts. :func:`read_header`
reads either into one dictionary keyed by the .cih names, each value checked
and converted, so that one reader serves both; a missing or malformed value
is one RecordingError naming the file and the key (the .cih key, or the
.cihx element's path).
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from pathlib import Path

from ..errors import RecordingError

__all__ = ["HEADER_SUFFIXES", "read_header"]

HEADER_SUFFIXES = (".cih", ".cihx")

# Largest header read: a real one is a few kilobytes.
_MAX_HEADER_BYTES = 4 * 2**20

# .cih key -> .cihx element path (under <cih>).
_CIHX_PATHS = {
    "Record Rate(fps)": "recordInfo/recordRate",
    "Total Frame": "frameInfo/totalFrame",
    "Original Total Frame": "frameInfo/recordedFrame",
    "Start Frame": "frameInfo/startFrame",
    "Correct Trigger Frame": "frameInfo/correctTriggerFrame",
    "Save Step": "frameInfo/skipFrame",
    "Image Width": "imageDataInfo/resolution/width",
    "Image Height": "imageDataInfo/resolution/height",
    "Color Type": "imageDataInfo/colorInfo/type",
    "Color Bit": "imageDataInfo/colorInfo/bit",
    "EffectiveBit Depth": "imageDataInfo/effectiveBit/depth",
    "EffectiveBit Side": "imageDataInfo/effectiveBit/side",
    "File Format": "imageFileInfo/fileFormat",
}

# Key -> (type, required, default). Integers are frame counts and numbers.
_FIELDS = {
    "Record Rate(fps)": (float, True, None),
    "Total Frame": (int, True, None),
    "Image Width": (int, True, None),
    "Image Height": (int, True, None),
    "Color Bit": (int, True, None),
    "File Format": (str, True, None),
    "Original Total Frame": (int, False, None),
    "Start Frame": (int, False, 0),
    "Correct Trigger Frame": (int, False, 0),
    "Save Step": (int, False, 1),
    "Color Type": (str, False, "Mono"),
    "EffectiveBit Depth": (int, False, None),
    "EffectiveBit Side": (str, False, "Lower"),
}


def _read_text(path: Path) -> str:
    try:
        with open(path, "rb") as handle:
            data = handle.read(_MAX_HEADER_BYTES + 1)
    except OSError as exc:
        raise RecordingError(f"cannot be read ({exc.strerror})", path=path) from None
    if len(data) > _MAX_HEADER_BYTES:
        raise RecordingError(
            f"is larger than the {_MAX_HEADER_BYTES} bytes a header may take", path=path
        )
    return data.decode("utf-8", errors="replace")


def _cih_values(path: Path) -> dict[str, str]:
    values = {}
    for line in _read_text(path).splitlines():
        key, sep, value = line.partition(" : ")
        if sep and key.strip() and key.strip() not in values:
            values[key.strip()] = value.strip()
    if not values:
        raise RecordingError("holds no 'Key : Value' line of a .cih header", path=path)
    return values


def _cihx_values(path: Path) -> dict[str, str]:
    text = _read_text(path)
    start, end = text.find("<cih>"), text.rfind("</cih>")
    if start < 0 or end < start:
        raise RecordingError("holds no <cih> ... </cih> document", path=path)
    try:
        root = ET.fromstring(text[start : end + len("</cih>")])
    except ET.ParseError as exc:
        raise RecordingError(f"is not well-formed XML ({exc})", path=path) from None
    values = {}
    for key, where in _CIHX_PATHS.items():
        element = root.find(where)
        if element is not None and element.text is not None:
            values[key] = element.text.strip()
    return values


def _convert(key: str, text: str, kind, *, path, name: str):
    if kind is str:
        return text
    try:
        value = float(text) if kind is float else int(text)
    except ValueError:
        expected = "a number" if kind is float else "a whole number"
        raise RecordingError(
            "is not a number", path=path, key=name, value=text, expected=expected
        ) from None
    return value


def read_header(path: Path) -> dict:
    """The facts of a .cih or .cihx header, by .cih key, checked and converted.

    Returns
    -------
    dict
        Every key of the header that dropkin uses (see ``_FIELDS``), with its
        default when the header leaves an optional key out, and ``"_names"``:
        the name each key has in this file (for messages).

    Raises
    ------
    RecordingError
        When the file cannot be read, is not a header, lacks a required key or
        holds a value that is not a number where one is needed.
    """
    xml = path.suffix.lower() == ".cihx"
    raw = _cihx_values(path) if xml else _cih_values(path)
    names = {key: (_CIHX_PATHS[key] if xml else key) for key in _FIELDS}
    header = {"_names": names}
    for key, (kind, required, default) in _FIELDS.items():
        if key not in raw:
            if required:
                raise RecordingError("is missing", path=path, key=names[key])
            header[key] = default
            continue
        header[key] = _convert(key, raw[key], kind, path=path, name=names[key])
    return header
