"""Reader for a .cine file: a high-speed camera's recording in one file.

The file starts with a 44-byte file header (``CINEFILEHEADER``), then a
``BITMAPINFOHEADER`` (40 bytes, at ``OffImageHeader``), the camera's ``SETUP``
structure (at ``OffSetup``; its ``Length`` field says how much of it this
version of the format wrote), tagged blocks up to ``OffImageOffsets``, and
there one 64-bit offset per saved image. Each image starts with an
annotation whose first 32-bit word is its size; the image's last four
annotation bytes hold the image's size, and its samples follow.

What is read, and how:

- **Samples.** Gray frames only: 8-bit, 16-bit little-endian words (the
  significant bits given by ``SETUP.RealBPP``, e.g. 12), or packed 12-bit
  (``biCompression`` 1024). Unpacked frames are stored bottom row first (as
  in a bitmap) and are flipped; packed frames are stored top row first. The
  samples are never rescaled (the header's black and white levels are only
  reported).
- **Time.** The per-frame time stamps of the tagged block of type 1002 (one
  32.32 fixed-point instant per image) when the file has them: they hold
  whatever the camera saved (every frame, or every k-th). Without them, the
  saved-frame rate is the acquisition rate (``dFrameRate``, else
  ``FrameRate``) divided by the decimation the header records
  (``fDecimation``), never the acquisition rate alone when frames were
  skipped.
- **Trigger.** Image numbers count from the trigger (image 0; negative before
  it): ``FirstImageNo`` is the number of the first saved image. With time
  stamps the trigger's instant is the header's ``TriggerTime``.

Every offset, size and count is checked against the file's size before it is
used; a damaged header or a short file gives one RecordingError naming the
file and the field or byte offset.
"""

from __future__ import annotations

import struct
from pathlib import Path

import numpy as np

from ..errors import RecordingError
from ._base import FileTiming
from ._camera import CameraFrames, Layout, file_size

__all__ = ["CINE_SUFFIXES", "CineFile", "open_cine"]

CINE_SUFFIXES = (".cine",)

_FILE_HEADER = struct.Struct("<2sHHHiIiIIIIQ")  # CINEFILEHEADER, 44 bytes
_BITMAP = struct.Struct("<IiiHHIIiiII")  # BITMAPINFOHEADER, 40 bytes
_TICKS = 2.0**32  # TIME64: seconds in the high word, fractions of 2**-32 s in the low

# SETUP fields read: name -> (byte offset in SETUP, struct format).
_SETUP_FIELDS = {
    "Mark": (140, "2s"),
    "Length": (142, "H"),
    "FrameRate": (768, "I"),
    "CFA": (808, "I"),
    "RealBPP": (896, "I"),
    "BlackLevel": (5732, "i"),
    "WhiteLevel": (5736, "i"),
    "RecBPP": (12416, "I"),
    "fDecimation": (13460, "f"),
    "dFrameRate": (13472, "d"),
}
_PACKED_12 = 1024  # biCompression of packed 12-bit samples
_TIME_BLOCK = 1002  # tagged block of per-image time stamps
_MAX_BLOCKS = 10_000
# Headers, setup and tagged blocks before the offsets table: the time-stamp and
# exposure blocks take 12 bytes an image, so 64 MiB hold 5 million images.
_MAX_HEADER = 64 * 2**20


def _unpack(data: bytes, fmt: struct.Struct, offset: int, *, path, what: str) -> tuple:
    if offset < 0 or offset + fmt.size > len(data):
        raise RecordingError(
            f"has a damaged header: the {what} at byte {offset} ({fmt.size} bytes) does not "
            f"fit before byte {len(data)}, where the image offsets start",
            path=path,
            key=what,
        )
    return fmt.unpack_from(data, offset)


class CineFile(CameraFrames):
    """The frames of a .cine file; made by :func:`open_cine`."""

    kind = "cine file"

    def __init__(self, path: Path) -> None:
        self.path = path
        size = file_size(path)
        with open(path, "rb") as handle:
            header = self._file_header(handle.read(_FILE_HEADER.size))
            start, count = header["OffImageOffsets"], header["ImageCount"]
            if start > _MAX_HEADER:
                raise RecordingError(
                    f"puts its image offsets at byte {start}, beyond the {_MAX_HEADER} bytes "
                    "a .cine header may take",
                    path=path,
                    key="OffImageOffsets",
                )
            if start + 8 * count > size:
                raise RecordingError(
                    f"is truncated: its table of {count} image offsets at byte {start} ends "
                    f"past the end of the file ({size} bytes)",
                    path=path,
                    key="ImageCount",
                )
            handle.seek(0)
            head = handle.read(start)
            table = np.frombuffer(handle.read(8 * count), dtype="<i8")
        bitmap = self._bitmap(head, header["OffImageHeader"])
        setup = self._setup(head, header["OffSetup"])
        self._inspect(head, table, header, bitmap, setup, size)

    # -- header ---------------------------------------------------------------

    def _file_header(self, head: bytes) -> dict:
        if len(head) < _FILE_HEADER.size:
            raise RecordingError(
                f"is too short for a .cine file ({len(head)} bytes)", path=self.path
            )
        values = _FILE_HEADER.unpack(head)
        names = (
            "Type Headersize Compression Version FirstMovieImage TotalImageCount "
            "FirstImageNo ImageCount OffImageHeader OffSetup OffImageOffsets TriggerTime"
        ).split()
        header = dict(zip(names, values, strict=True))
        if header["Type"] != b"CI":
            raise RecordingError(
                f"is not a .cine file (it starts with {header['Type']!r}, not b'CI')",
                path=self.path,
                key="Type",
            )
        if header["ImageCount"] < 1:
            raise RecordingError("holds no image", path=self.path, key="ImageCount", value=0)
        return header

    def _bitmap(self, head: bytes, offset: int) -> dict:
        values = _unpack(head, _BITMAP, offset, path=self.path, what="OffImageHeader")
        names = (
            "biSize biWidth biHeight biPlanes biBitCount biCompression biSizeImage "
            "biXPelsPerMeter biYPelsPerMeter biClrUsed biClrImportant"
        ).split()
        return dict(zip(names, values, strict=True))

    def _setup(self, head: bytes, offset: int) -> dict:
        mark, length = _unpack(
            head, struct.Struct("<2sH"), offset + 140, path=self.path, what="OffSetup"
        )
        if mark != b"ST":
            raise RecordingError(
                f"has no setup block at byte {offset} (mark {mark!r}, not b'ST')",
                path=self.path,
                key="OffSetup",
            )
        setup = {"Length": length, "OffSetup": offset}
        for name, (field, fmt) in _SETUP_FIELDS.items():
            form = struct.Struct("<" + fmt)
            if field + form.size <= length:  # older versions wrote less of SETUP
                setup[name] = _unpack(head, form, offset + field, path=self.path, what=name)[0]
        return setup

    # -- frames ---------------------------------------------------------------

    def _inspect(self, head, table, header: dict, bitmap: dict, setup: dict, size: int) -> None:
        path = self.path
        count = header["ImageCount"]
        rows, cols = abs(bitmap["biHeight"]), bitmap["biWidth"]
        packing, depth = self._packing(header, bitmap, setup)
        if np.any(table < 0) or np.any(table + 8 > size):
            frame = int(np.flatnonzero((table < 0) | (table + 8 > size))[0])
            raise RecordingError(
                f"is truncated: image {frame} is said to start at byte {int(table[frame])}, "
                f"past the end of the file ({size} bytes)",
                path=path,
                frame=frame,
            )
        annotation = self._annotation_sizes(table)
        bad = np.flatnonzero(annotation < 8)
        if len(bad):
            frame = int(bad[0])
            raise RecordingError(
                f"has a damaged image annotation at byte {int(table[frame])} (size "
                f"{int(annotation[frame])}, at least 8 expected)",
                path=path,
                frame=frame,
                key="AnnotationSize",
            )
        self._layout = Layout(
            offsets=table.astype(np.int64) + annotation,
            rows=rows,
            cols=cols,
            packing=packing,
            bottom_up=packing != "p12" and bitmap["biHeight"] > 0,
        )
        self._layout.check(path, size)
        self.shape = (rows, cols)
        self.dtype = np.dtype(np.uint8 if packing == "u8" else np.uint16)
        self.bit_depth = depth
        self._time(head, header, setup, count)

    def _packing(self, header: dict, bitmap: dict, setup: dict) -> tuple[str, int]:
        """How the samples are stored, and the bits that carry data."""
        path = self.path
        cfa = setup.get("CFA", 0) & 0xFF
        if header["Compression"] != 0 or cfa != 0 or bitmap["biBitCount"] not in (8, 16):
            raise RecordingError(
                "holds colour or compressed images (Compression "
                f"{header['Compression']}, colour filter code {cfa}, "
                f"{bitmap['biBitCount']} bits per pixel); dropkin reads gray .cine files",
                path=path,
                key="Compression",
            )
        if bitmap["biCompression"] == _PACKED_12:
            return "p12", 12
        if bitmap["biCompression"] != 0:
            raise RecordingError(
                f"stores its samples with code {bitmap['biCompression']} (packed 10-bit with a "
                "linearisation table, or another); dropkin reads 8-bit, 16-bit and packed 12-bit",
                path=path,
                key="biCompression",
            )
        if bitmap["biBitCount"] == 8:
            return "u8", 8
        real = setup.get("RealBPP", 16)
        return "u16", real if 8 < real <= 16 else 16

    def _annotation_sizes(self, table: np.ndarray) -> np.ndarray:
        """The annotation size at each image's start, read through a memory map."""
        mapped = np.memmap(self.path, dtype=np.uint8, mode="r")
        words = mapped[table[:, None] + np.arange(4)]
        return words.copy().view("<u4").ravel().astype(np.int64)

    def _time_stamps(self, head: bytes, header: dict, setup: dict, count: int):
        """The per-image time stamps (int64 ticks of 2**-32 s), or None, and a note."""
        position = setup["OffSetup"] + setup["Length"]
        end = min(header["OffImageOffsets"], len(head))
        for _ in range(_MAX_BLOCKS):
            if position + 8 > end:
                return None, None
            length, kind = struct.unpack_from("<IH", head, position)
            if length < 8 or position + length > end:
                raise RecordingError(
                    f"has a damaged tagged block at byte {position} (size {length})",
                    path=self.path,
                    key="BlockSize",
                )
            if kind == _TIME_BLOCK:
                if length - 8 != 8 * count:
                    note = (
                        f"the time-stamp block holds {(length - 8) // 8} stamps for {count} "
                        "images and was not used"
                    )
                    return None, note
                stamps = np.frombuffer(head, dtype="<u8", count=count, offset=position + 8)
                return stamps.astype(np.int64), None
            position += length
        return None, None

    def _time(self, head: bytes, header: dict, setup: dict, count: int) -> None:
        stamps, note = self._time_stamps(head, header, setup, count)
        rate = setup.get("dFrameRate") or float(setup.get("FrameRate", 0))
        decimation = setup.get("fDecimation") or 1.0
        saved = rate / decimation if rate > 0 and decimation >= 1 else None
        first = header["FirstImageNo"]
        notes = [note] if note else []
        self.trigger_frame = float(-first)
        if stamps is not None:
            times = (stamps - stamps[0]) / _TICKS
            if count > 1 and np.any(np.diff(times) <= 0):
                raise RecordingError(
                    "has time stamps that do not increase", path=self.path, key="time stamps"
                )
            trigger = (np.int64(header["TriggerTime"]) - stamps[0]) / _TICKS
            self.timing = FileTiming("file time stamps (.cine)", times=times, trigger=trigger)
        elif saved is not None:
            self.timing = FileTiming(
                "file header (.cine frame rate)", interval=1.0 / saved, trigger=-first / saved
            )
        else:
            self.timing = None
        self.timing_notes = tuple(notes)
        self.notes = tuple(notes)
        self.header_facts = {
            "record_rate_hz": rate or None,
            "save_step": decimation,
            "saved_frame_rate_hz": saved,
            "first_frame_number": first,
            "trigger_frame": self.trigger_frame,
            "bit_depth": self.bit_depth,
            "effective_bit_depth": setup.get("RealBPP"),
            "recorded_bit_depth": setup.get("RecBPP"),
            "black_level": setup.get("BlackLevel"),
            "white_level": setup.get("WhiteLevel"),
            "per_frame_timestamps": stamps is not None,
            "packing": self._layout.packing,
        }


def open_cine(path: Path) -> CineFile:
    """Open a .cine file (see the module docstring)."""
    return CineFile(path)
