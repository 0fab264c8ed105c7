"""Streaming a recording through the per-frame image analysis, chunk by chunk.

Chunks go through :mod:`dropkin.vision` in this process (memory-mapped when
the file allows) or in worker processes, and come back in order. Bands
sampled around the neck are kept between the chunks of one recording (in a
worker, between the chunks it measures).
"""

from __future__ import annotations

import pickle
from concurrent.futures import ProcessPoolExecutor

import numpy as np

from .. import vision
from ..recording import frames_at_once, frames_mapped
from ._options import crop

__all__ = ["stream"]

#: In a worker process: (recording, preparation, options, band cache), set
#: once by :func:`_start_worker` so that each chunk's task carries two numbers
#: only (opening a recording and pickling the preparation cost more than a
#: chunk).
_WORKER: tuple = ()


def _start_worker(state: bytes):
    """Unpickle the recording (so that the worker opens the file itself: a
    forked worker must not share the parent's file position), the
    preparation and the options."""
    global _WORKER
    _WORKER = (*pickle.loads(state), {})


def _measure_chunk(bounds):
    """One chunk in a worker (module level: picklable): memory-mapped when
    the file allows (only the pages the bands touch are read)."""
    recording, prep, options, cache = _WORKER
    start, stop = bounds
    frames = recording.memmap(start, stop)
    if frames is None:
        _, frames = next(recording[start:stop].chunks(stop - start))
    return start, _chunk_result(crop(frames, options.roi), prep, options, cache)


def _chunk_result(frames, prep, options, cache, hint=None):
    """The NeckResult or ContactLineResult of a chunk of (cropped) frames."""
    common = {
        "illumination": prep.illumination,
        "dark": prep.dark,
        "noise": prep.noise,
        "level": options.level,
        "gap_blurs": options.gap_blurs,
        "levels": options.other_levels,
    }
    if prep.sessile is not None:
        return vision.measure_bridges(frames, prep.sessile, **common)
    if prep.spreading is not None:
        return vision.measure_contact_lines(frames, prep.spreading, **common)
    return vision.measure_necks(
        frames,
        prep.pair,
        blur=prep.blur,
        cache=cache,
        hint=hint,
        shift_correction=prep.shift_correction,
        **common,
    )


def _last_radius(result, previous):
    """The last measured neck radius of a chunk (a hint for the next one)."""
    finite = np.nonzero(np.isfinite(result.radius))[0]
    return float(result.radius[finite[-1]]) if finite.size else previous


def _sequential_chunks(recording, size):
    """(start, frames) over the recording: memory-mapped when the file allows.

    A memory-mapped stack is handed over a few chunks at a time (four, or
    fewer when that would map more than ``MAP_BYTES``), each span mapped on
    its own and unmapped when dropped: the band sampling reads only the pages
    it touches, and resident memory stays at one span's pages.
    """
    if recording.memmap(0, 1) is None:
        yield from recording.chunks(size)
        return
    span = frames_mapped(recording.frame_shape, recording.dtype.itemsize, size)
    for start in range(0, len(recording), span):
        yield start, recording.memmap(start, start + span)


def stream(recording, prep, options, progress):
    """Yield (start, NeckResult or ContactLineResult) over the whole recording, in order.

    Parameters
    ----------
    recording : Recording
    prep : Preparation
    options : MeasureOptions
        Its `chunk_size` and `jobs` say how the recording is cut and measured.
    progress : callable or None
        Called as ``progress(frames_done, frames_total)``.
    """
    n = len(recording)
    # chunks sized in bytes: large frames go a few at a time (recording/_limits.py)
    size = frames_at_once(
        recording.frame_shape, recording.dtype.itemsize, max(int(options.chunk_size), 1)
    )
    if options.jobs <= 1:
        hint = None
        cache = {}
        for start, chunk in _sequential_chunks(recording, size):
            result = _chunk_result(crop(chunk, options.roi), prep, options, cache, hint)
            hint = _last_radius(result, hint)
            if progress is not None:
                progress(start + len(chunk), n)
            del chunk  # hold no chunk (or map) while the next one is read
            yield start, result
        return
    yield from _parallel(recording, prep, options, progress, size)


def _parallel(recording, prep, options, progress, size):
    """As :func:`stream`, the chunks measured in `options.jobs` worker processes."""
    n = len(recording)
    starts = list(range(0, n, size))
    with ProcessPoolExecutor(
        max_workers=options.jobs,
        initializer=_start_worker,
        initargs=(pickle.dumps((recording, prep, options)),),
    ) as pool:
        # Keep at most two chunks per worker in flight: memory stays bounded.
        window = 2 * options.jobs
        pending = []
        done = 0
        for start in starts:
            pending.append(pool.submit(_measure_chunk, (start, min(start + size, n))))
            if len(pending) >= window:
                first, result = pending.pop(0).result()
                done += len(result.radius)
                if progress is not None:
                    progress(done, n)
                yield first, result
        for future in pending:
            first, result = future.result()
            done += len(result.radius)
            if progress is not None:
                progress(done, n)
            yield first, result
