"""Frames per second of ``dropkin.measure`` against two baselines in the same run.

A synthetic coalescence recording of 512 x 512 frames (2,000 by default) is
generated once as a multi-page TIFF, then read three ways:

- **floor**: one numpy pass over every frame (reading every pixel once, through
  the same reader), the least any analysis can cost;
- **per-frame script**: what a straightforward script does on each frame:
  scikit-image ``threshold_otsu``, ``label`` and ``regionprops`` (timed on a
  subset of frames, since it is slow; frames per second are what is compared);
- **dropkin**: ``dropkin.measure.measure`` on the whole recording.

Each run is in its own process; before it is timed, each method runs once
on the first 64 frames, so that one-time costs of the process (imports that
libraries make on first use) are not counted for any of the three.

Goals (measurement issue): dropkin at least 50 times the per-frame script's
frames per second, and no more than 3 times slower than the floor. Peak memory
(resident set) of each run is printed too; each run is in its own process.

Last measured (2,000 frames, defaults, 25 runs on a 2-core machine shared with
other jobs, load 2 to 6, so single runs vary twofold): dropkin / script median
57x, min 32x, 19 of 25 runs at 50x or more; floor / dropkin 0.26 to 0.6; peak
RSS 150 MB. On the 6,000-frame stack 157 to 164 MB, whether 1,000 or all 6,000
frames are measured: memory is set by the chunk, not the recording's length.
Interleaved with the previous version under the same load: 24-32x before,
46-77x after. About a third of dropkin's time is the kernel mapping and
unmapping the pages the band touches (two 64 KB windows per frame), a quarter
the one-time preparation on the first frame.

    python benchmarks/measure_speed.py [--frames 2000] [--keep DIR] [--jobs 1]
"""

from __future__ import annotations

import argparse
import json
import resource
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path


def generate(path: Path, frames: int) -> None:
    """Render the recording and write it as an uncompressed, contiguous TIFF.

    Uncompressed stacks are what high-speed cameras export for analysis, and
    the only kind that can be memory-mapped.
    """
    import tifffile

    from dropkin import synth
    from dropkin._atomic import write_text_atomic

    law = synth.inertial_law(surface_tension=0.072, density=998.0, drop_radius=1e-3)
    rec = synth.synthesize(
        synth.Coalescence(drop_radius=1e-3, angle_deg=15.0),
        law,
        # 2 ms of coalescence whatever the number of frames (the neck stays
        # well below the drop radius): 1 Mfps for 2,000 frames.
        camera=synth.Camera(frames / 2e-3, 10e-6, (512, 512)),
        frames=frames,
        contact_frame=20.4,
        optics=synth.Optics(blur_px=1.0, dust_count=6),
        sensor=synth.Sensor(bit_depth=8),
        seed=7,
    )
    with tifffile.TiffWriter(path) as tif:
        for frame in rec.iter_frames():
            tif.write(frame, contiguous=True, photometric="minisblack")
    write_text_atomic(path.with_suffix(".toml"), synth.experiment_toml(rec))


def _open(path):
    from dropkin.experiment import load_experiment
    from dropkin.recording import open_recording

    exp = load_experiment(path)
    rec = open_recording(
        path, frame_rate=exp.recording.frame_rate, pixel_size=exp.recording.pixel_size
    )
    return exp, rec


def run_floor(path, limit=None):
    """Every pixel read once: a sum over the memory-mapped stack, chunk by chunk."""
    import numpy as np

    _, rec = _open(path)
    rec = rec if limit is None else rec[:limit]
    mapped = rec.memmap(0, 1)
    start = time.perf_counter()
    total = 0
    if mapped is None:
        for _, chunk in rec.chunks(64):
            total += int(np.sum(chunk, dtype=np.int64))
    else:
        for i in range(0, len(rec), 64):
            total += int(np.sum(rec.memmap(i, i + 64), dtype=np.int64))
    return len(rec), time.perf_counter() - start


def run_script(path, limit=100):
    """What a straightforward script does for each frame: Otsu threshold,
    label, regionprops, and the neck as the narrowest column of the largest
    region (the two drops once merged) between the drops' centres."""
    import numpy as np
    from skimage import filters, measure

    _, rec = _open(path)
    n = min(limit, len(rec))
    necks = []
    start = time.perf_counter()
    for i in range(n):
        frame = rec[i]
        mask = frame < filters.threshold_otsu(frame)
        regions = measure.regionprops(measure.label(mask))
        if not regions:
            necks.append(np.nan)
            continue
        largest = max(regions, key=lambda p: p.area)
        widths = largest.image.sum(axis=0)
        middle = widths[len(widths) // 4 : 3 * len(widths) // 4]
        necks.append(middle.min() / 2 if middle.size else np.nan)
    return n, time.perf_counter() - start


def run_dropkin(path, jobs=1, limit=None):
    from dropkin.measure import MeasureOptions, measure

    exp, rec = _open(path)
    rec = rec if limit is None else rec[:limit]
    start = time.perf_counter()
    series, _ = measure(rec, exp, options=MeasureOptions(jobs=jobs))
    elapsed = time.perf_counter() - start
    if limit is None:
        ok = series.status.count("ok")
        assert ok > len(series) // 2, "the benchmark recording was not measured"
    return len(rec), elapsed


def child(kind, path, jobs):
    runner = {"floor": run_floor, "script": run_script, "dropkin": run_dropkin}[kind]
    if kind == "dropkin":
        runner(path, jobs, limit=64)
        frames, seconds = runner(path, jobs)
    else:
        runner(path, limit=64)
        frames, seconds = runner(path)
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(json.dumps({"frames": frames, "seconds": seconds, "peak_mb": peak}))


def measure_in_child(kind, path, jobs):
    out = subprocess.run(
        [sys.executable, __file__, "--child", kind, "--path", str(path), "--jobs", str(jobs)],
        capture_output=True,
        text=True,
        check=True,
    )
    return json.loads(out.stdout.strip().splitlines()[-1])


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--frames", type=int, default=2000)
    parser.add_argument("--keep", type=Path, help="folder to keep (and reuse) the recording in")
    parser.add_argument("--jobs", type=int, default=1)
    parser.add_argument("--repeat", type=int, default=2, help="runs of each; the best is kept")
    parser.add_argument("--child", help=argparse.SUPPRESS)
    parser.add_argument("--path", type=Path, help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.child:
        child(args.child, args.path, args.jobs)
        return
    folder = args.keep or Path(tempfile.mkdtemp(prefix="dropkin-bench-"))
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / f"pair_{args.frames}.tif"
    try:
        if not path.exists():
            start = time.perf_counter()
            generate(path, args.frames)
            print(
                f"generated {path} ({args.frames} frames of 512 x 512) in "
                f"{time.perf_counter() - start:.0f} s",
                file=sys.stderr,
            )
        best = {}
        for kind in ("floor", "script", "dropkin"):
            runs = [measure_in_child(kind, path, args.jobs) for _ in range(args.repeat)]
            best[kind] = max(runs, key=lambda r: r["frames"] / r["seconds"])
            fps = best[kind]["frames"] / best[kind]["seconds"]
            print(
                f"{kind:8s} {fps:10.0f} frames/s  ({best[kind]['frames']} frames in "
                f"{best[kind]['seconds']:.2f} s, peak RSS {best[kind]['peak_mb']:.0f} MB)"
            )
        fps = {k: v["frames"] / v["seconds"] for k, v in best.items()}
        print(f"dropkin / per-frame script: {fps['dropkin'] / fps['script']:.0f} x (goal >= 50)")
        print(f"floor / dropkin:            {fps['floor'] / fps['dropkin']:.2f} x (goal <= 3)")
    finally:
        if args.keep is None:
            shutil.rmtree(folder, ignore_errors=True)


if __name__ == "__main__":
    main()
