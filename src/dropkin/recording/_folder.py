"""Reader for a folder of frame files: PNG, TIFF, BMP or JPEG, one frame each.

The frames are the image files of the folder (suffixes compared without case),
in natural order: runs of digits compare as numbers wherever they appear, so
``shot_2.png`` comes before ``shot_10.png``. Hidden files, sub-folders and other
files (``experiment.toml``, ``truth.json``...) are ignored. A frame file may be
a symbolic link only to a file inside the recording's folder (the folder as
resolved, so a folder that is itself a link is fine): a link leading out of
it, a link that loops and a link to nothing are refused, naming the link,
rather than read from elsewhere or skipped in silence. Image kinds may be
mixed as long as every frame has the same size and sample type; that is
checked for every file at open time from its header, and the first file that
differs is named.

Pixels are decoded with ``cv2.imdecode(bytes, cv2.IMREAD_UNCHANGED)`` from the
file's bytes as Python read them (so that a file name that is not valid
UTF-8 never reaches OpenCV, which crashed on one), or with tifffile for TIFF
files it can decode, so 8- and 16-bit samples arrive exactly as stored
(12-bit camera data in 16-bit words are not rescaled).
"""

from __future__ import annotations

import re
from contextlib import nullcontext
from pathlib import Path

import cv2
import numpy as np
import tifffile

from ..errors import RecordingError
from ._gray import notes_for_channels, to_gray
from ._headers import IMAGE_SUFFIXES, FrameHeader, read_header
from ._libtiff import libpng_errors, libtiff_errors
from ._tifferrors import tifffile_reports

__all__ = ["FRAME_SUFFIXES", "ImageFolder", "open_image_folder", "natural_key"]

#: Suffixes of the frame files an image folder may hold (compared without case).
FRAME_SUFFIXES = IMAGE_SUFFIXES

_DIGITS = re.compile(r"(\d+)")


def natural_key(name: str) -> tuple:
    """Sort key that compares runs of digits in `name` as numbers.

    Examples
    --------
    >>> sorted(["shot_10.png", "shot_2.png", "Shot_1.png"], key=natural_key)
    ['Shot_1.png', 'shot_2.png', 'shot_10.png']
    """
    parts = []
    for k, part in enumerate(_DIGITS.split(name)):
        if k % 2:
            parts.append((0, int(part)))
        elif part:
            parts.append((1, part.casefold()))
    return (tuple(parts), name)


def _checked_link(entry: Path, inside: Path) -> None:
    """Refuse a frame file that is a link leading out of `inside`, looping or dangling."""
    try:
        target = entry.resolve(strict=True)
    except (OSError, RuntimeError):  # RuntimeError: a loop, before Python 3.13
        raise RecordingError(
            "is a symbolic link that loops or leads nowhere", path=entry
        ) from None
    if not target.is_relative_to(inside):
        raise RecordingError(
            f"is a symbolic link leading out of the recording's folder (to {target})",
            path=entry,
            expected="the frame file itself in the folder",
        )


def frame_files(folder: Path) -> list[Path]:
    """The frame files of `folder`, in natural order (links checked, see the module notes)."""
    inside = folder.resolve()
    files = []
    for entry in folder.iterdir():
        if entry.name.startswith(".") or entry.suffix.lower() not in FRAME_SUFFIXES:
            continue
        if entry.is_symlink():
            _checked_link(entry, inside)
        if entry.is_file():
            files.append(entry)
    return sorted(files, key=lambda entry: natural_key(entry.name))


class ImageFolder:
    """The frames of an image folder; made by :func:`open_image_folder`."""

    kind = "image folder"
    timing = None

    def __init__(self, folder: Path) -> None:
        self.path = folder
        files = frame_files(folder)
        if not files:
            raise RecordingError(
                f"holds no frames (no files ending in {', '.join(FRAME_SUFFIXES)})",
                path=folder,
            )
        first = self._header(files[0], 0)
        headers = [first]
        declared = (0, first) if first.bit_depth is not None else None
        for i, file in enumerate(files[1:], start=1):
            header = self._header(file, i)
            if header.describe() != first.describe():
                raise RecordingError(
                    f"is {header.describe()}, the first frame ({files[0].name}) "
                    f"is {first.describe()}",
                    path=file,
                    frame=i,
                )
            if header.bit_depth is not None:
                # One camera, one depth: frames that declare different
                # significant bits do not belong to one recording.
                if declared is not None and header.bit_depth != declared[1].bit_depth:
                    j, other = declared
                    raise RecordingError(
                        f"declares {header.bit_depth} significant bits, frame {j} "
                        f"({files[j].name}) {other.bit_depth}",
                        path=file,
                        frame=i,
                    )
                declared = declared or (i, header)
            headers.append(header)
        self.files = tuple(files)
        self.shape = (first.rows, first.cols)
        self.dtype = first.dtype
        self._decoders = tuple(header.decoder for header in headers)
        depths = {header.bit_depth for header in headers}
        depth = depths.pop() if len(depths) == 1 else None
        self.bit_depth = 8 * self.dtype.itemsize if depth is None else depth
        notes: list[str] = []
        for header in headers:
            for note in notes_for_channels(header.channels):
                if note not in notes:
                    notes.append(note)
        tiff_by_opencv = sum(
            1
            for file, decoder in zip(files, self._decoders, strict=True)
            if decoder == "opencv" and file.suffix.lower() in (".tif", ".tiff")
        )
        if tiff_by_opencv:
            notes.append(
                f"{tiff_by_opencv} TIFF frame(s) decoded by OpenCV (their compression "
                "needs the optional imagecodecs package in tifffile)"
            )
        self.notes = tuple(notes)
        self.lossy = _lossy_frames(headers)

    @staticmethod
    def _header(file: Path, i: int) -> FrameHeader:
        try:
            return read_header(file)
        except RecordingError as exc:
            raise RecordingError(exc.message, path=file, frame=i) from None
        except OSError as exc:
            raise RecordingError(
                f"cannot be read ({exc.strerror or exc})", path=file, frame=i
            ) from None

    def __len__(self) -> int:
        return len(self.files)

    def _read(self, i: int) -> np.ndarray:
        return _decode(self.files[i], self._decoders[i], frame=i)


def _lossy_frames(headers) -> str | None:
    """What lossy compression the frames went through (see ``recording._lossy``), or None."""
    lossy = [header.lossy for header in headers if header.lossy is not None]
    if not lossy:
        return None
    kinds = " and ".join(sorted(set(lossy)))
    if len(lossy) == len(headers):
        return f"{kinds} frames"
    return f"{kinds} frames ({len(lossy)} of {len(headers)})"


def _decode(file: Path, decoder: str, *, frame: int | None = None) -> np.ndarray:
    """One image file as a 2-D grayscale array, its dtype as stored."""
    if decoder == "tifffile":
        try:
            with tifffile_reports(file, frame=frame):
                image = tifffile.imread(file)
        except RecordingError:
            raise
        except Exception as exc:  # any decoder failure names the file and frame
            raise RecordingError(
                f"cannot be decoded ({type(exc).__name__}: {exc})",
                path=file,
                frame=frame,
            ) from None
        if image.ndim not in (2, 3) or (image.ndim == 3 and not 1 <= image.shape[2] <= 4):
            raise RecordingError(
                f"decodes to an array of shape {image.shape}, not one frame",
                path=file,
                frame=frame,
            )
        return to_gray(image, order="RGB")
    suffix = file.suffix.lower()
    if suffix in (".tif", ".tiff"):
        checked = libtiff_errors(file, frame)
    elif suffix == ".png":
        checked = libpng_errors(file, frame)
    else:
        checked = nullcontext()
    try:
        data = np.fromfile(file, dtype=np.uint8)
    except OSError as exc:
        raise RecordingError(
            f"cannot be read ({exc.strerror or exc})", path=file, frame=frame
        ) from None
    try:
        with checked:
            image = cv2.imdecode(data, cv2.IMREAD_UNCHANGED) if data.size else None
    except cv2.error as exc:
        raise RecordingError(
            f"cannot be decoded by OpenCV ({' '.join(str(exc).split())[-160:]})",
            path=file,
            frame=frame,
        ) from None
    if image is None:
        raise RecordingError(
            "cannot be decoded by OpenCV (damaged, truncated or missing)",
            path=file,
            frame=frame,
        )
    return to_gray(image, order="BGR")


def read_image(path) -> np.ndarray:
    """Read one image file (PNG, TIFF, BMP, JPEG) as a 2-D grayscale array.

    For single images such as a background frame; the dtype is kept.

    Raises
    ------
    RecordingError
        If the file is missing, of another kind, or cannot be decoded.
    """
    path = Path(path)
    suffix = path.suffix.lower()
    if suffix not in FRAME_SUFFIXES:
        raise RecordingError(
            "is not an image file", path=path, expected=" ".join(sorted(FRAME_SUFFIXES))
        )
    if not path.is_file():
        raise RecordingError("no such file", path=path)
    return _decode(path, "tifffile" if suffix in (".tif", ".tiff") else "opencv")


def open_image_folder(folder: Path) -> ImageFolder:
    """Open a folder of frame files (see the module docstring)."""
    return ImageFolder(folder)
