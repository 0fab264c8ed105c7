"""Time ``dropkin fit`` on long synthetic series (issue 17, finding 12; issue 18).

Writes a radius.csv of N rows (a side-view coalescence, ``r = A (t - t0)**0.5``
with 1 % Gaussian noise, invented for this benchmark: frames before contact,
unresolved frames across the contact bracket, then ``ok`` frames) beside a
measure.json taken from a measurement of the shipped sample
``sample_frames/fast_pair.tif`` (``--measure``, made with ``dropkin measure``),
and times ``dropkin fit`` on it as a separate process. The load average is
printed before and after.

    python benchmarks/fit_speed.py --measure OUT/measure.json [--rows 10000 100000]

Last measured on this 2-core machine, 2026-12-05, evening (load 1.6 before,
1.5 after), the whole ``dropkin fit`` with its 200 resamples, figures and
report: 2,000 rows 1.9 s, 10^4 rows 2.1 s, 10^5 rows 2.6 s, 10^6 rows 6.2 s.
That afternoon: 3.8, 4.3, 4.3 and 7.5 s (904 MB peak RSS at 10^6 rows, most
of it reading the CSV); that morning, before the long-series work: 6.1 s,
19.9 s, about 150 s and over 300 s (1.8 GB). The fits see at most 2,048
averaged points (docs/physics.md §4.8, "Long series"), radius.csv is read
whole columns at a time, the figures bin long series, the bootstrap refits
by Newton steps and the figures are drawn on two processes.
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time

import numpy as np


def write_series(folder, measure_json, rows, seed=0):
    """radius.csv of `rows` frames over the sample's first millisecond, and its measure.json."""
    info = json.load(open(measure_json))
    hi = info["contact_bracket_s"][1]
    t0 = info["contact_time_s"]
    span = 1e-3
    time_s = np.arange(rows) * (span / rows)
    rng = np.random.default_rng(seed)
    # Before contact up to t0 (the frames then prove the bracket a frame wide around it),
    # unresolved up to the sample's bracket end, ok after.
    status = np.where(time_s <= t0, "before-contact", np.where(time_s <= hi, "unresolved", "ok"))
    tau = time_s - t0
    with np.errstate(invalid="ignore"):
        r = 0.0164 * np.sqrt(tau) * (1.0 + 0.01 * rng.standard_normal(rows))
    ok = status == "ok"
    radius = np.where(ok, r, np.nan)
    err = np.where(ok, 0.01 * r, np.nan)
    since = np.where(time_s > t0, tau, np.nan)
    with open(os.path.join(folder, "radius.csv"), "w") as out:
        out.write("frame,time_s,since_contact_s,radius_m,radius_err_m,status\n")
        for i, values in enumerate(
            zip(time_s.tolist(), since.tolist(), radius.tolist(), err.tolist(), strict=True)
        ):
            text = ",".join("" if v != v else repr(v) for v in values)
            out.write(f"{i},{text},{status[i]}\n")
    info["frames"] = rows
    prov = info.get("provenance", {})
    if prov.get("experiment_file"):  # relative to the measure.json it came from
        where = os.path.dirname(os.path.abspath(measure_json))
        prov["experiment_file"] = os.path.normpath(os.path.join(where, prov["experiment_file"]))
    info["frame_rate_hz"] = rows / span
    counts = {k: int(np.sum(status == k)) for k in ("ok", "before-contact", "unresolved")}
    info["status_counts"] = {**info["status_counts"], **counts}
    json.dump(info, open(os.path.join(folder, "measure.json"), "w"))


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--measure", required=True, help="measure.json of the shipped sample")
    parser.add_argument("--rows", type=int, nargs="+", default=[10_000, 100_000])
    parser.add_argument("--keep", help="folder to keep the series in")
    args = parser.parse_args()
    root = args.keep or tempfile.mkdtemp(prefix="fit_speed_")
    print("load before:", os.getloadavg())
    for rows in args.rows:
        folder = os.path.join(root, f"rows_{rows}")
        os.makedirs(folder, exist_ok=True)
        write_series(folder, args.measure, rows)
        out = os.path.join(folder, "fit")
        shutil.rmtree(out, ignore_errors=True)
        cmd = ["dropkin", "fit", os.path.join(folder, "radius.csv"), "-o", out]
        start = time.perf_counter()
        done = subprocess.run(cmd, capture_output=True, text=True)
        wall = time.perf_counter() - start
        tail = (done.stderr or done.stdout).strip().splitlines()[-1:]
        print(f"{rows:>9} rows: dropkin fit {wall:7.1f} s (exit {done.returncode}) {tail}")
        sys.stdout.flush()
    print("load after:", os.getloadavg())
    if not args.keep:
        shutil.rmtree(root)


if __name__ == "__main__":
    main()
