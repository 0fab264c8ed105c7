"""Stream a multi-page uint16 TIFF of more than 1 GiB through dropkin.

The script writes the stack page by page (so that writing it needs little
memory), then reads it twice in child processes, each touching every frame
(summing it):

- dropkin: ``open_recording(path, ...).chunks(64)``;
- baseline: plain tifffile page iteration, ``page.asarray()`` for each page.

Each reader runs in its own process so that its peak resident memory (the
``ru_maxrss`` of that process) counts only the streaming, not the generator.
It prints frames per second, MB/s and peak memory for both, and the ratio of
dropkin's speed to the baseline's. The goal: dropkin's peak resident memory
stays below 300 MB (exit code 1 if not).

By default the file was just written and sits in the operating system's page
cache, so the numbers are those of reading from memory; ``--cold`` asks the
kernel to drop the file from the cache before each read
(``posix_fadvise(DONTNEED)``), which measures the disk instead.

Usage::

    python benchmarks/read_stack.py                 # temporary file, deleted after
    python benchmarks/read_stack.py --keep --path /data/stack.tif
    python benchmarks/read_stack.py --frames 2000 --chunk 32 --cold
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

MEMORY_GOAL = 300e6  # bytes of peak resident memory for the dropkin reader
MB = 1e6
GIB = 2**30


def generate(path: Path, *, frames: int, rows: int, cols: int, seed: int = 1) -> int:
    """Write the stack one page at a time; return the sum of all samples."""
    import tifffile

    base = np.random.default_rng(seed).integers(0, 4096, size=(rows, cols), dtype=np.uint16)
    total = 0
    bigtiff = frames * rows * cols * 2 > 3.9e9
    with tifffile.TiffWriter(path, bigtiff=bigtiff) as writer:
        for k in range(frames):
            frame = base ^ np.uint16(k % 4096)  # 12-bit values that change per frame
            total += int(frame.sum(dtype=np.uint64))
            writer.write(frame, contiguous=True, photometric="minisblack")
    return total


def drop_from_cache(path: Path) -> None:
    """Ask the kernel to forget the file's cached pages (clean pages only)."""
    fd = os.open(path, os.O_RDONLY)
    try:
        os.fsync(fd)
        os.posix_fadvise(fd, 0, 0, os.POSIX_FADV_DONTNEED)
    finally:
        os.close(fd)


def stream(method: str, path: str, chunk: int) -> dict:
    """Read every frame with `method` (in this process) and report what it cost."""
    rss_before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
    total = frames = 0
    start = time.perf_counter()
    if method == "dropkin":
        from dropkin.recording import open_recording

        with open_recording(path, frame_rate=1.0) as rec:
            for _, block in rec.chunks(chunk):
                total += int(block.sum(dtype=np.uint64))
                frames += len(block)
    elif method == "tifffile":
        import tifffile

        with tifffile.TiffFile(path) as tif:
            for page in tif.pages:
                total += int(page.asarray().sum(dtype=np.uint64))
                frames += 1
    else:
        raise ValueError(method)
    seconds = time.perf_counter() - start
    return {
        "method": method,
        "frames": frames,
        "total": total,
        "seconds": seconds,
        "peak_rss": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024,
        "rss_before": rss_before,
    }


def run_child(method: str, path: Path, chunk: int) -> dict:
    command = [sys.executable, __file__, "--stream", method, str(path), "--chunk", str(chunk)]
    done = subprocess.run(command, capture_output=True, text=True, check=False)
    if done.returncode != 0:
        sys.exit(f"{method} reader failed:\n{done.stderr}")
    return json.loads(done.stdout)


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--path", type=Path, help="where to write the stack (default: temp)")
    parser.add_argument("--frames", type=int, default=1100)
    parser.add_argument("--rows", type=int, default=1024)
    parser.add_argument("--cols", type=int, default=512)
    parser.add_argument("--chunk", type=int, default=64, help="frames per chunk for dropkin")
    parser.add_argument("--repeat", type=int, default=2, help="reads per reader (best kept)")
    parser.add_argument("--cold", action="store_true", help="drop the file from the page cache")
    parser.add_argument("--keep", action="store_true", help="keep the generated file")
    parser.add_argument("--stream", nargs=2, metavar=("METHOD", "PATH"), help=argparse.SUPPRESS)
    args = parser.parse_args(argv)

    if args.stream:  # child process: one reader, results as JSON on stdout
        print(json.dumps(stream(args.stream[0], args.stream[1], args.chunk)))
        return 0

    folder = None
    if args.path is None:
        folder = Path(tempfile.mkdtemp(prefix="dropkin-bench-"))
        path = folder / "stack.tif"
    else:
        path = args.path
    try:
        start = time.perf_counter()
        expected = generate(path, frames=args.frames, rows=args.rows, cols=args.cols)
        size = path.stat().st_size
        print(
            f"wrote {path}: {args.frames} frames of {args.rows} x {args.cols} uint16, "
            f"{size / GIB:.3f} GiB in {time.perf_counter() - start:.1f} s "
            f"(generator peak RSS {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.0f}"
            " MB)"
        )
        print(f"page cache: {'dropped before each read' if args.cold else 'warm'}")
        best = {}
        for attempt in range(args.repeat):
            for method in ("tifffile", "dropkin"):
                if args.cold:
                    drop_from_cache(path)
                result = run_child(method, path, args.chunk)
                if result["frames"] != args.frames or result["total"] != expected:
                    sys.exit(f"{method} read wrong data: {result}")
                fps = result["frames"] / result["seconds"]
                print(
                    f"  run {attempt + 1} {method:8s}: {fps:7.0f} frames/s "
                    f"{size / result['seconds'] / MB:7.0f} MB/s  peak RSS "
                    f"{result['peak_rss'] / MB:5.0f} MB (at start {result['rss_before'] / MB:.0f})"
                )
                if method not in best or result["seconds"] < best[method]["seconds"]:
                    best[method] = result
        base, ours = best["tifffile"], best["dropkin"]
        print(
            f"dropkin chunks({args.chunk}) / tifffile pages, speed ratio (best runs): "
            f"{base['seconds'] / ours['seconds']:.2f}"
        )
        peak = max(r["peak_rss"] for r in best.values() if r["method"] == "dropkin")
        verdict = "ok" if peak < MEMORY_GOAL else "TOO HIGH"
        print(f"dropkin peak RSS {peak / MB:.0f} MB, goal < {MEMORY_GOAL / MB:.0f} MB: {verdict}")
        return 0 if peak < MEMORY_GOAL else 1
    finally:
        if args.keep:
            print(f"kept {path}")
        elif folder is not None:
            shutil.rmtree(folder, ignore_errors=True)
        else:
            path.unlink(missing_ok=True)


if __name__ == "__main__":
    sys.exit(main())
