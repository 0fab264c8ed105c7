"""Helpers shared by the hardening tests: is an output file complete?"""

from __future__ import annotations

import csv
import io
import json
import re
import struct
import xml.etree.ElementTree as ET
import zlib
from html.parser import HTMLParser
from pathlib import Path

import pytest

# PNG: ISO/IEC 15948 (the signature, then length-type-data-CRC chunks ending in IEND).
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
# The columns of radius.csv, as docs/architecture.md fixes them: these first,
# then only radii at other edge levels (radius_level_<level>_m).
RADIUS_COLUMNS = "frame,time_s,since_contact_s,radius_m,radius_err_m,status"
LEVEL_COLUMN = re.compile(r"radius_level_0?\.[0-9]+_m")


def png_problem(data: bytes) -> str:
    """Why `data` is not a complete PNG ('' if it is): every chunk's CRC is checked."""
    if data[:8] != PNG_SIGNATURE:
        return "no PNG signature"
    position = 8
    while position + 12 <= len(data):
        (length,) = struct.unpack(">I", data[position : position + 4])
        name = data[position + 4 : position + 8]
        body = data[position + 8 : position + 8 + length]
        end = position + 12 + length
        if end > len(data):
            return f"chunk {name!r} runs past the end"
        (crc,) = struct.unpack(">I", data[end - 4 : end])
        if zlib.crc32(name + body) != crc:
            return f"chunk {name!r} has a wrong CRC"
        if name == b"IEND":
            return "" if end == len(data) else "bytes after IEND"
        position = end
    return "no IEND chunk"


class _Tags(HTMLParser):
    def __init__(self):
        super().__init__()
        self.open: list[str] = []
        self.closed_html = False

    def handle_starttag(self, tag, attrs):
        if tag not in ("meta", "img", "br", "hr", "link", "input"):
            self.open.append(tag)

    def handle_endtag(self, tag):
        if self.open and self.open[-1] == tag:
            self.open.pop()
        if tag == "html":
            self.closed_html = True


def _radius_header(header) -> bool:
    """The header of radius.csv: the contract's columns, then edge-level radii only."""
    first = len(RADIUS_COLUMNS.split(","))
    rest = header[first:]
    return ",".join(header[:first]) == RADIUS_COLUMNS and all(
        LEVEL_COLUMN.fullmatch(name) for name in rest
    )


def file_problem(path: Path) -> str:
    """Why an output file is not complete ('' if it is), judged by its kind.

    CSV: the radius-series header of the design notes and rows of equal width
    (the csv module); JSON: parses fully (json module); PNG: see
    :func:`png_problem`; SVG: parses as XML (ElementTree) with an ``svg`` root;
    HTML: ends with ``</html>`` and every element opened is closed
    (html.parser).
    """
    data = path.read_bytes()
    suffix = path.suffix.lower()
    if suffix == ".png":
        return png_problem(data)
    text = data.decode("utf-8", errors="replace")
    if suffix == ".json":
        try:
            json.loads(text)
        except json.JSONDecodeError as exc:
            return f"JSON does not parse: {exc}"
        return ""
    if suffix == ".csv":
        rows = list(csv.reader(io.StringIO(text)))
        if not rows:
            return "empty CSV"
        widths = {len(r) for r in rows if r}
        if len(widths) != 1:
            return f"rows of {sorted(widths)} fields"
        if path.name == "radius.csv" and not _radius_header(rows[0]):
            return f"header {rows[0]}"
        return "" if text.endswith("\n") else "no final newline"
    if suffix == ".svg":
        try:
            root = ET.fromstring(data)
        except ET.ParseError as exc:
            return f"SVG does not parse: {exc}"
        return "" if root.tag.endswith("svg") else f"root element {root.tag}"
    if suffix == ".html":
        parser = _Tags()
        parser.feed(text)
        parser.close()
        if not text.rstrip().endswith("</html>") or not parser.closed_html:
            return "no closing </html>"
        return f"unclosed elements {parser.open}" if parser.open else ""
    return ""


@pytest.fixture
def complete():
    """``complete(path) -> problem`` ('' for a complete file)."""
    return file_problem
