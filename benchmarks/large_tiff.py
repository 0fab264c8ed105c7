"""A multi-page TIFF of several GiB streamed through the reader and through measure.

The script renders a short synthetic coalescence (``dropkin.synth``, 12-bit
frames in 16-bit words) and writes it, page by page, into one uncompressed
BigTIFF stack of ``--size`` GiB (4 by default) in a temporary folder, after
checking that the disk has room; the folder is removed afterwards. The frames
run forward through the rendered ones and then back and forth over those in
contact, so that the neck keeps changing and every frame is measurable.

Then three child processes read the whole file, each reporting its own peak
resident memory (``ru_maxrss``):

- floor: plain ``readinto`` of the file in 64 MiB blocks, each block summed
  with numpy as 16-bit samples: the least that touching every sample costs;
- reader: ``open_recording(path).chunks(--chunk)``, each chunk summed;
- measure: ``dropkin.measure.measure`` on the whole recording (the streaming
  path of ``dropkin measure``); skipped with ``--no-measure``.

It prints frames per second, MB/s and peak memory for each, the reader's speed
against the floor's, and peak memory against the file size. The goal is that
peak memory stays bounded, far below the file: below 200 MB plus three chunks
for the reader (392 MB with the default 32 frames of 2 MiB) and 1 GB for
measure, whatever ``--size`` (exit code 1 if not). By default the
file was just written and sits in the page cache (``--cold`` asks the kernel
to drop it before each read, which measures the disk).

Usage::

    python benchmarks/large_tiff.py                  # 4 GiB in the system's temp folder
    python benchmarks/large_tiff.py --size 8 --dir /data/scratch --cold
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

GIB = 2**30
MB = 1e6
# Peak resident memory goals, bytes: the reader holds the caller's chunk and
# the one being read (3 chunks allow for the decoder's scratch) above what the
# imports take; measure holds a few of its 64-frame chunks. Neither depends on
# the file's size.
IMPORTS = 200e6
MEASURE_GOAL = 1e9
ROWS, COLS = 1024, 1024
RENDERED = 48  # distinct frames rendered; contact near frame 2


def render(rows: int, cols: int):
    """The rendered frames and the experiment file's text (dropkin.synth)."""
    from dropkin import synth

    law = synth.inertial_law(surface_tension=0.072, density=998.0, drop_radius=1e-3)
    rec = synth.synthesize(
        synth.Coalescence(drop_radius=1e-3, angle_deg=15.0),
        law,
        camera=synth.Camera(RENDERED / 2e-3, 10e-6, (rows, cols)),  # 2 ms of coalescence
        frames=RENDERED,
        contact_frame=2.4,
        optics=synth.Optics(blur_px=1.0, dust_count=6),
        sensor=synth.Sensor(bit_depth=12),
        seed=11,
    )
    return np.stack(list(rec.iter_frames())), synth.experiment_toml(rec)


def order(n: int) -> list[int]:
    """Rendered frame of each of the `n` frames: forward, then back and forth in contact."""
    first, last = 4, RENDERED - 1
    cycle = list(range(first, last + 1)) + list(range(last - 1, first, -1))
    head = list(range(RENDERED))
    return [head[k] if k < RENDERED else cycle[(k - RENDERED) % len(cycle)] for k in range(n)]


def generate(path: Path, size: float) -> tuple[int, int]:
    """Write about `size` GiB of frames; return (frames, sum of all samples)."""
    import tifffile

    frames, toml = render(ROWS, COLS)
    n = max(RENDERED, int(size * GIB // frames[0].nbytes))
    sums = [int(frame.sum(dtype=np.uint64)) for frame in frames]
    total = 0
    with tifffile.TiffWriter(path, bigtiff=True) as writer:
        for k in order(n):
            writer.write(frames[k], contiguous=True, photometric="minisblack")
            total += sums[k]
    path.with_suffix(".toml").write_text(toml, encoding="utf-8")
    return n, total


def drop_from_cache(path: Path) -> None:
    """Ask the kernel to forget the file's cached pages (clean pages only)."""
    fd = os.open(path, os.O_RDONLY)
    try:
        os.fsync(fd)
        os.posix_fadvise(fd, 0, 0, os.POSIX_FADV_DONTNEED)
    finally:
        os.close(fd)


def _rss() -> int:
    """Peak resident memory of this process since its exec, in bytes (Linux VmHWM).

    ``ru_maxrss`` would do elsewhere, but Linux carries it over from the parent
    through fork and exec, and the parent holds the rendered frames.
    """
    try:
        with open("/proc/self/status") as status:
            for line in status:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024


def run(method: str, path: Path, chunk: int) -> dict:
    """Read every frame with `method` in this process; what it cost."""
    from dropkin.recording import open_recording

    rss_before = _rss()
    start = time.perf_counter()
    total = frames = 0
    extra = {}
    if method == "floor":
        block = np.empty(64 * 2**20, np.uint8)
        with open(path, "rb", buffering=0) as file:
            while got := file.readinto(block):
                total += int(block[: got - got % 2].view(np.uint16).sum(dtype=np.uint64))
        frames = None
    elif method == "reader":
        with open_recording(path, frame_rate=1.0) as rec:
            extra["open_s"] = time.perf_counter() - start  # the structure checks
            for _, block in rec.chunks(chunk):
                total += int(block.sum(dtype=np.uint64))
                frames += len(block)
    elif method == "measure":
        from dropkin.experiment import load_experiment
        from dropkin.measure import measure

        exp = load_experiment(path)
        rec = open_recording(
            path, frame_rate=exp.recording.frame_rate, pixel_size=exp.recording.pixel_size
        )
        with rec:
            series, _ = measure(rec, exp)
        frames = len(series)
        extra["ok"] = series.status.count("ok")
    else:
        raise ValueError(method)
    seconds = time.perf_counter() - start
    return {
        "method": method,
        "frames": frames,
        "total": total,
        "seconds": seconds,
        "peak_rss": _rss(),
        "rss_before": rss_before,
        **extra,
    }


def child(method: str, path: Path, chunk: int) -> dict:
    command = [sys.executable, __file__, "--child", method, str(path), "--chunk", str(chunk)]
    done = subprocess.run(command, capture_output=True, text=True, check=False)
    if done.returncode != 0:
        sys.exit(f"{method} failed:\n{done.stderr[-3000:]}")
    return json.loads(done.stdout.strip().splitlines()[-1])


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--size", type=float, default=4.0, help="GiB of frames (default 4)")
    parser.add_argument("--dir", type=Path, help="where the temporary folder goes")
    parser.add_argument("--cold", action="store_true", help="drop the file from the page cache")
    parser.add_argument("--no-measure", action="store_true", help="only read the frames")
    parser.add_argument("--chunk", type=int, default=32, help="frames per chunk for the reader")
    parser.add_argument("--child", nargs=2, metavar=("METHOD", "PATH"), help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    if args.child:
        print(json.dumps(run(args.child[0], Path(args.child[1]), args.chunk)))
        return 0

    base = args.dir or Path(tempfile.gettempdir())
    free = shutil.disk_usage(base).free
    need = args.size * GIB * 1.02 + GIB  # the stack, its tag directories, and 1 GiB to spare
    if free < need:
        print(
            f"{base} has {free / GIB:.1f} GiB free; {need / GIB:.1f} GiB needed for "
            f"--size {args.size:g}: choose a smaller --size or another --dir",
            file=sys.stderr,
        )
        return 2
    folder = Path(tempfile.mkdtemp(prefix="dropkin-large-", dir=base))
    try:
        path = folder / "large.tif"
        start = time.perf_counter()
        n, expected = generate(path, args.size)
        size = path.stat().st_size
        print(
            f"wrote {n} frames of {ROWS} x {COLS} uint16 ({size / GIB:.2f} GiB) "
            f"in {time.perf_counter() - start:.0f} s; page cache "
            f"{'dropped before each read' if args.cold else 'warm'}"
        )
        methods = ["floor", "reader"] + ([] if args.no_measure else ["measure"])
        results = {}
        for method in methods:
            if args.cold:
                drop_from_cache(path)
            result = child(method, path, args.chunk)
            if method == "reader" and (result["frames"], result["total"]) != (n, expected):
                sys.exit(f"the reader read wrong data: {result}")
            frames = n if result["frames"] is None else result["frames"]
            print(
                f"  {method:8s} {frames / result['seconds']:8.1f} frames/s "
                f"{size / result['seconds'] / MB:7.0f} MB/s  peak RSS "
                f"{result['peak_rss'] / MB:6.0f} MB (after imports "
                f"{result['rss_before'] / MB:.0f} MB) = {result['peak_rss'] / size:.4f} "
                "of the file"
                + (f"; {result['ok']} frames ok" if "ok" in result else "")
                + (f"; opened in {result['open_s']:.3f} s" if "open_s" in result else "")
            )
            results[method] = result
        floor, reader = results["floor"], results["reader"]
        print(f"reader speed / floor speed: {floor['seconds'] / reader['seconds']:.2f}")
        verdicts = [("reader", IMPORTS + 3 * args.chunk * ROWS * COLS * 2)]
        if not args.no_measure:
            verdicts.append(("measure", MEASURE_GOAL))
        good = True
        for method, goal in verdicts:
            peak = results[method]["peak_rss"]
            fine = peak < goal
            good &= fine
            print(
                f"{method} peak RSS {peak / MB:.0f} MB, goal < {goal / MB:.0f} MB: "
                f"{'ok' if fine else 'TOO HIGH'}"
            )
        return 0 if good else 1
    finally:
        shutil.rmtree(folder, ignore_errors=True)


if __name__ == "__main__":
    sys.exit(main())
