"""What a file's header may claim, checked before anything is allocated for it.

A damaged or hostile header can claim a frame of 100 000 x 100 000 16-bit
samples; decoding it would ask for 20 GB at once, and the process would die
of it (or, worse, take the machine's memory with it) before any decoder found
out that the file holds a few kilobytes. Every reader therefore checks the
size of one decoded frame, from the header alone, against
:data:`MAX_FRAME_BYTES` before it decodes anything.

The bound is 64 MiB for one frame as the decoder produces it (rows x columns
x samples per pixel x bytes per sample, before colour is converted to gray):
a 16-bit gray frame of up to 5792 x 5792 pixels, an 8-bit gray frame of
8192 x 8192, an 8-bit colour frame with alpha of 4096 x 4096. High-speed
cameras record one to a few megapixels (a 16-bit frame of 4 megapixels is
8 MiB; common practice), so the bound leaves a factor of 8 above the largest
sensor a coalescence or spreading experiment uses, and refuses only what no
such camera writes. The per-frame analysis works on floating-point copies
of a frame (several times its decoded size), so a bound of 256 MiB let three
hostile 16000 x 16000 PNG frames of 750 kB cost gigabytes before the analysis
gave up; the bound is set for that working memory, not for the decoder's.
It holds for every reader, also for
uncompressed TIFF stacks that could be memory-mapped, so that one rule says
which frames dropkin reads. How many frames are held at once is the caller's
choice (``Recording.chunks(n)``); the readers never decode more than the
frames asked for.

The frames decoded together are bounded as well: :func:`frames_at_once`
says how many frames of a recording fit in :data:`MAX_HELD_BYTES` (256 MiB,
decoded), at least one; the measurement cuts its chunks to that number, so a
recording of large frames is streamed a few frames at a time whatever
``--chunk-size`` asks. Both bounds are applied to the sizes the headers
claim, before any frame is decoded. There is no bound on a recording's
length: its frames are never all held at once.

The number of frames a file claims is checked against its size instead: a
TIFF stack whose pages would end past the end of the file is refused as
truncated before a page is decoded.
"""

from __future__ import annotations

import math

from ..errors import RecordingError

__all__ = ["MAX_FRAME_BYTES", "MAX_HELD_BYTES", "check_frame_size", "frames_at_once"]

#: Largest decoded frame dropkin reads, in bytes (see the module docstring).
MAX_FRAME_BYTES = 64 * 2**20

#: Largest sum of decoded frames held at once, in bytes (see the module docstring).
MAX_HELD_BYTES = 256 * 2**20


def frames_at_once(shape, itemsize: int, wanted: int) -> int:
    """How many of `wanted` frames of `shape` and `itemsize` to decode together:
    at most `wanted`, at least 1, and no more than fit in :data:`MAX_HELD_BYTES`.

    Examples
    --------
    >>> frames_at_once((1024, 1024), 2, 64)
    64
    >>> frames_at_once((8192, 8192), 1, 64)
    4
    """
    frame = max(math.prod(int(s) for s in shape) * int(itemsize), 1)
    return max(1, min(int(wanted), MAX_HELD_BYTES // frame))


def check_frame_size(shape, itemsize: int, *, path, frame: int | None = None) -> None:
    """Refuse a frame of `shape` that is empty or larger than :data:`MAX_FRAME_BYTES`.

    Parameters
    ----------
    shape : tuple of int
        (rows, cols) or (rows, cols, samples) of one decoded frame, as the
        header claims it.
    itemsize : int
        Bytes per sample once decoded.
    path : path-like
        The file, named in the error.
    frame : int, optional
        The frame, named in the error.

    Raises
    ------
    RecordingError
        When a dimension is below 1, or the frame would exceed the bound.

    Examples
    --------
    >>> check_frame_size((1024, 1024), 2, path="a.tif")
    >>> check_frame_size((100_000, 100_000), 2, path="a.tif")
    Traceback (most recent call last):
        ...
    dropkin.errors.RecordingError: a.tif: claims frames of 100000 x 100000 samples of 2 bytes \
(20000000000 bytes), more than the 67108864 bytes dropkin decodes per frame
    """
    dims = [int(s) for s in shape]
    if not dims or min(dims) < 1:
        raise RecordingError(
            f"claims an empty frame ({' x '.join(map(str, dims))})", path=path, frame=frame
        )
    nbytes = math.prod(dims) * int(itemsize)
    if nbytes > MAX_FRAME_BYTES:
        size = " x ".join(map(str, dims))
        raise RecordingError(
            f"claims frames of {size} samples of {itemsize} bytes ({nbytes} bytes), "
            f"more than the {MAX_FRAME_BYTES} bytes dropkin decodes per frame",
            path=path,
            frame=frame,
        )
