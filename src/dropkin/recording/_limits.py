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

The frames held together are bounded in bytes as well: :func:`frames_at_once`
says how many frames of a recording one chunk of the measurement holds so
that the chunk's frames, decoded, plus the analysis' work arrays for them
stay within :data:`CHUNK_BYTES` (96 MiB), at least one frame and at most the
``--chunk-size`` asked for. The work arrays are counted as
:data:`WORK_BYTES_PER_PIXEL` bytes per pixel besides the decoded samples.
Measured (peak of the arrays allocated while one chunk is analysed, per
pixel of the chunk's frames, on 1024-column frames): the neck search 0.05
(median; 1.3 for a chunk searched without a hint), which samples bands of
a frame; the side-view contact line 0.4; the bottom view 0.2 (1.3 at most);
the bridge of sessile drops 2.0, which converts a block of rows of every
frame to one 32-bit float array (4 bytes a pixel of that block, up to the
whole frame). The 4 bytes a pixel cover that largest case. So 512 x 512
16-bit frames keep chunks of 64 frames (1.5 MiB a frame) while 1024 x 1024
16-bit frames go 16 at a time (6 MiB a frame), and a frame of 64 MiB alone.
A stack read through a memory map is mapped a few chunks at a time, at most
:data:`MAP_BYTES` (64 MiB, at least one chunk): the pages a band touches stay
resident while the map lives, and a band across the rows of a frame touches
most of them. Both bounds are applied to the sizes the headers claim, before
any frame is decoded. There is no bound on a recording's length: its frames
are never all held at once.

The number of frames a file claims is checked against its size instead: a
TIFF stack whose pages would end past the end of the file is refused as
truncated before a page is decoded.
"""

from __future__ import annotations

import math

from ..errors import RecordingError

__all__ = [
    "CHUNK_BYTES",
    "MAP_BYTES",
    "MAX_FRAME_BYTES",
    "WORK_BYTES_PER_PIXEL",
    "check_frame_size",
    "frames_at_once",
    "frames_mapped",
]

#: Largest decoded frame dropkin reads, in bytes (see the module docstring).
MAX_FRAME_BYTES = 64 * 2**20

#: Bytes one chunk of the measurement may hold: its frames decoded plus their
#: work arrays (see the module docstring).
CHUNK_BYTES = 96 * 2**20

#: Work-array bytes per pixel of a frame in a chunk, besides its decoded samples
#: (one 32-bit float copy; see the module docstring).
WORK_BYTES_PER_PIXEL = 4

#: Most bytes of a memory-mapped stack mapped at once (see the module docstring).
MAP_BYTES = 64 * 2**20


def frames_at_once(frame_shape, itemsize: int, wanted: int) -> int:
    """How many of `wanted` frames of `frame_shape` and `itemsize` one chunk holds:
    at most `wanted`, at least 1, and no more than fit in :data:`CHUNK_BYTES`
    with their work arrays (:data:`WORK_BYTES_PER_PIXEL`).

    Parameters
    ----------
    frame_shape : tuple of int
        (rows, cols) of one frame (not the recording's (frames, rows, cols)).
    itemsize : int
        Bytes per decoded sample.
    wanted : int
        The chunk size asked for (``--chunk-size``), an upper bound.

    Examples
    --------
    >>> frames_at_once((512, 512), 2, 64)
    64
    >>> frames_at_once((1024, 1024), 2, 64)
    16
    >>> frames_at_once((1024, 1024), 2, 8)
    8
    >>> frames_at_once((5792, 5792), 2, 64)
    1
    """
    pixels = math.prod(int(s) for s in frame_shape)
    frame = max(pixels * (int(itemsize) + WORK_BYTES_PER_PIXEL), 1)
    return max(1, min(int(wanted), CHUNK_BYTES // frame))


def frames_mapped(frame_shape, itemsize: int, chunk: int) -> int:
    """How many frames of a memory-mapped stack to map at once for chunks of
    `chunk` frames: four chunks, cut to :data:`MAP_BYTES`, at least one chunk.

    Examples
    --------
    >>> frames_mapped((512, 512), 2, 64)
    128
    >>> frames_mapped((1024, 1024), 2, 16)
    32
    >>> frames_mapped((4096, 4096), 2, 1)
    2
    """
    frame = max(math.prod(int(s) for s in frame_shape) * int(itemsize), 1)
    return max(int(chunk), min(4 * int(chunk), MAP_BYTES // frame))


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
