"""Reader for a .mraw recording and its .cih or .cihx header.

The .mraw file holds the frames back to back with nothing else: ``Color Bit``
8 (one byte a sample), 16 (little-endian 16-bit words, of which ``EffectiveBit
Depth`` bits carry data, in the low bits or, with ``EffectiveBit Side :
Higher``, the high ones) or 12 (packed: two samples in three bytes, the first
sample's high eight bits first). The header is a file of the same name beside
it; either file may be given.

Time comes from the saved-frame rate: ``Record Rate(fps)`` divided by ``Save
Step`` (the camera saved every k-th frame it recorded), never from the record
rate alone. Frame numbers count from the trigger: the first saved frame is
recorded frame ``Start Frame`` (negative when it came before the trigger), and
the trigger is recorded frame ``Correct Trigger Frame`` (0 unless moved), so
saved frame i is ``(Start Frame + i * Save Step - Correct Trigger Frame) /
Record Rate`` seconds after the trigger.

Colour recordings are refused, as are headers that describe frames saved in
another format (``File Format`` other than MRaw).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..errors import RecordingError
from ._base import FileTiming
from ._camera import CameraFrames, Layout, file_size
from ._cih import HEADER_SUFFIXES, read_header

__all__ = ["MRAW_SUFFIXES", "MrawRecording", "open_mraw"]

MRAW_SUFFIXES = (".mraw", *HEADER_SUFFIXES)

_PACKING = {8: "u8", 12: "p12", 16: "u16"}


def _beside(path: Path, suffixes) -> Path | None:
    """The first file with the same stem and one of `suffixes` (either case)."""
    for suffix in suffixes:
        for candidate in (path.with_suffix(suffix), path.with_suffix(suffix.upper())):
            if candidate.is_file():
                return candidate
    return None


def find_pair(path: Path) -> tuple[Path, Path]:
    """(header, data) for a given .mraw, .cih or .cihx file."""
    if path.suffix.lower() == ".mraw":
        header = _beside(path, HEADER_SUFFIXES)
        if header is None:
            raise RecordingError(
                "has no header beside it (a .cih or .cihx file of the same name)", path=path
            )
        return header, path
    data = _beside(path, (".mraw",))
    if data is None:
        raise RecordingError(
            "has no .mraw file of the same name beside it (the frames)", path=path
        )
    return path, data


def _positive(header: dict, key: str, path) -> None:
    if not header[key] > 0:
        raise RecordingError(
            "must be positive", path=path, key=header["_names"][key], value=header[key]
        )


class MrawRecording(CameraFrames):
    """The frames of a .mraw file, described by its header; made by :func:`open_mraw`."""

    kind = "mraw recording"

    def __init__(self, path: Path) -> None:
        self.header_path, self.path = find_pair(path)
        header = read_header(self.header_path)
        self._inspect(header)
        self._time(header)

    def _inspect(self, header: dict) -> None:
        where, names = self.header_path, header["_names"]
        for key in ("Record Rate(fps)", "Total Frame", "Image Width", "Image Height", "Save Step"):
            _positive(header, key, where)
        if header["File Format"].lower() != "mraw":
            raise RecordingError(
                "describes frames saved in another format; dropkin reads .mraw recordings",
                path=where,
                key=names["File Format"],
                value=header["File Format"],
                expected="MRaw",
            )
        if header["Color Type"].lower() != "mono" or header["Color Bit"] not in _PACKING:
            raise RecordingError(
                f"describes {header['Color Type']} frames of {header['Color Bit']} bits; "
                "dropkin reads gray .mraw recordings of 8, 12 or 16 bits",
                path=where,
                key=names["Color Bit"],
                value=header["Color Bit"],
            )
        rows, cols, count = header["Image Height"], header["Image Width"], header["Total Frame"]
        packing = _PACKING[header["Color Bit"]]
        self._layout = Layout(np.zeros(0, np.int64), rows, cols, packing)
        size = file_size(self.path)
        whole = size // self._layout.frame_bytes
        if count > whole:
            raise RecordingError(
                f"claims {count} frames of {self._layout.frame_bytes} bytes: the recording "
                f"is truncated, {self.path.name} ({size} bytes) ends inside frame {whole}",
                path=where,
                key=names["Total Frame"],
                value=count,
                frame=whole,
            )
        self._layout = Layout(
            np.arange(count, dtype=np.int64) * self._layout.frame_bytes, rows, cols, packing
        )
        self._layout.check(self.path, size)
        notes = []
        extra = size - count * self._layout.frame_bytes
        if extra:
            notes.append(f"the .mraw file holds {extra} bytes after its {count} frames (ignored)")
        self.shape = (rows, cols)
        self.dtype = np.dtype(np.uint8 if packing == "u8" else np.uint16)
        stored = header["Color Bit"]
        effective = header["EffectiveBit Depth"]
        self.bit_depth = effective if effective and 0 < effective < stored else stored
        if packing == "u16" and header["EffectiveBit Side"].lower() == "higher":
            if self.bit_depth < 16:
                notes.append(
                    f"the {self.bit_depth} significant bits sit in the high bits of each "
                    "16-bit word (EffectiveBit Side Higher); values were not shifted"
                )
        self.notes = tuple(notes)

    def _time(self, header: dict) -> None:
        rate, step = header["Record Rate(fps)"], header["Save Step"]
        start, trigger = header["Start Frame"], header["Correct Trigger Frame"]
        saved = rate / step
        self.trigger_frame = (trigger - start) / step
        origin = f".cih header (record rate {rate:g} fps / save step {step})"
        self.timing = FileTiming(origin, interval=1.0 / saved, trigger=(trigger - start) / rate)
        self.timing_notes = ()
        self.header_facts = {
            "header_file": str(self.header_path),
            "record_rate_hz": rate,
            "save_step": step,
            "saved_frame_rate_hz": saved,
            "first_frame_number": start,
            "trigger_frame_number": trigger,
            "trigger_frame": self.trigger_frame,
            "bit_depth": self.bit_depth,
            "stored_bits": header["Color Bit"],
            "effective_bit_depth": header["EffectiveBit Depth"],
            "effective_bit_side": header["EffectiveBit Side"],
            "per_frame_timestamps": False,
            "packing": self._layout.packing,
        }


def open_mraw(path: Path) -> MrawRecording:
    """Open a .mraw recording from its .mraw, .cih or .cihx file (see the module docstring)."""
    return MrawRecording(path)
