"""Colour to grayscale, the one way every reader does it.

Readers hand over images as they were decoded: (M, N) gray, (M, N, 2) gray with
alpha, (M, N, 3) colour or (M, N, 4) colour with alpha. OpenCV decodes colour
in blue-green-red order, tifffile in red-green-blue order; the caller says which.
The luma weights are those of ITU-R BT.601 (0.299 red, 0.587 green, 0.114 blue),
the weights OpenCV's ``COLOR_BGR2GRAY`` uses, so that a frame from a video and
the same frame from a PNG give the same gray values.
"""

from __future__ import annotations

import cv2
import numpy as np

__all__ = ["COLOUR_NOTE", "ALPHA_NOTE", "to_gray", "notes_for_channels"]

COLOUR_NOTE = "colour frames converted to grayscale (ITU-R BT.601 weights)"
ALPHA_NOTE = "alpha channel dropped"

_BT601 = {"RGB": (0.299, 0.587, 0.114), "BGR": (0.114, 0.587, 0.299)}
_CV_CODES = {
    ("BGR", 3): cv2.COLOR_BGR2GRAY,
    ("BGR", 4): cv2.COLOR_BGRA2GRAY,
    ("RGB", 3): cv2.COLOR_RGB2GRAY,
    ("RGB", 4): cv2.COLOR_RGBA2GRAY,
}
# Depths cv2.cvtColor converts to gray; other dtypes go through numpy.
_CV_DTYPES = (np.dtype(np.uint8), np.dtype(np.uint16), np.dtype(np.float32))


def notes_for_channels(channels: int) -> tuple[str, ...]:
    """Return the notes a recording with `channels` samples per pixel carries.

    Parameters
    ----------
    channels : int
        Samples per pixel as stored: 1 gray, 2 gray and alpha, 3 colour,
        4 colour and alpha.

    Returns
    -------
    notes : tuple of str
    """
    notes = []
    if channels >= 3:
        notes.append(COLOUR_NOTE)
    if channels in (2, 4):
        notes.append(ALPHA_NOTE)
    return tuple(notes)


def to_gray(image: np.ndarray, *, order: str = "BGR") -> np.ndarray:
    """Return a 2-D grayscale version of a decoded image.

    Parameters
    ----------
    image : (M, N) or (M, N, C) ndarray
        The decoded image, C in 1..4. Not modified.
    order : {"BGR", "RGB"}
        Channel order of colour images: OpenCV gives "BGR", tifffile "RGB".

    Returns
    -------
    gray : (M, N) ndarray
        Same dtype as `image`. A 2-D input is returned as it is (readers
        always pass a freshly decoded array); alpha is dropped; colour is
        combined with the BT.601 weights and rounded to the nearest value.

    Examples
    --------
    >>> import numpy as np
    >>> rgb = np.zeros((1, 2, 3), np.uint8)
    >>> rgb[0, 0] = (255, 255, 255)
    >>> to_gray(rgb, order="RGB")
    array([[255,   0]], dtype=uint8)
    """
    if order not in _BT601:
        raise ValueError(f"order must be 'BGR' or 'RGB', not {order!r}")
    if image.ndim == 2:
        return image
    if image.ndim != 3 or not 1 <= image.shape[2] <= 4:
        raise ValueError(f"expected an (M, N) or (M, N, 1..4) image, got {image.shape}")
    channels = image.shape[2]
    if channels <= 2:  # gray, or gray and alpha
        return np.ascontiguousarray(image[:, :, 0])
    if image.dtype in _CV_DTYPES:
        return cv2.cvtColor(np.ascontiguousarray(image), _CV_CODES[order, channels])
    weights = np.asarray(_BT601[order])
    gray = image[:, :, :3].astype(np.float64) @ weights
    if np.issubdtype(image.dtype, np.integer):
        info = np.iinfo(image.dtype)
        gray = np.clip(np.rint(gray), info.min, info.max)
    return gray.astype(image.dtype)
