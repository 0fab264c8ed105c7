"""Time reading a long ``radius.csv`` (issue 17, finding 12; issue 18).

Writes a radius.csv of N rows (invented for this benchmark: statuses in
runs, empty cells where a frame has no value, two edge-level columns and the
trigger column) and times :func:`dropkin.series.read_radius_csv` on it, best
of three, beside a plain row-by-row reading (``csv.reader`` and ``float()``
of each cell, without the checks) as a yardstick. The load average is
printed before and after: the machine is shared.

    python benchmarks/read_radius_csv.py [--rows 100000 1000000]
"""

from __future__ import annotations

import argparse
import csv
import os
import tempfile
import time

import numpy as np

from dropkin.series import CSV_COLUMNS, read_radius_csv

HEADER = [*CSV_COLUMNS, "radius_level_0.4_m", "radius_level_0.6_m", "time_since_trigger_s"]


def write_file(path, rows: int, seed: int = 0) -> None:
    rng = np.random.default_rng(seed)
    time_s = np.arange(rows) * 1e-6
    after = np.arange(rows) >= rows // 10
    status = np.where(after, "ok", "before-contact")
    status[rng.random(rows) < 0.2] = "unresolved"
    ok = status == "ok"
    radius = np.where(ok, 1e-4 * np.sqrt(time_s + 1e-6), np.nan)
    columns = [
        time_s,
        np.where(after, time_s - time_s[rows // 10], np.nan),
        radius,
        0.01 * radius,
        0.99 * radius,
        1.01 * radius,
        time_s - 5e-4,
    ]
    with open(path, "w") as out:
        out.write(",".join(HEADER) + "\n")
        for i, values in enumerate(zip(*(c.tolist() for c in columns), strict=True)):
            cells = ["" if v != v else repr(v) for v in values]
            out.write(f"{i},{','.join(cells[:4])},{status[i]},{','.join(cells[4:])}\n")


def row_by_row(path) -> int:
    """The yardstick: every cell through csv.reader and float(), no checks."""
    with open(path, newline="") as handle:
        rows = list(csv.reader(handle))[1:]
    values = [[float(c) if c else np.nan for c in row[1:5] + row[6:]] for row in rows]
    return len(np.asarray(values))


def best(function, *args, repeat: int = 3) -> float:
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        function(*args)
        times.append(time.perf_counter() - start)
    return min(times)


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, nargs="+", default=[100_000, 1_000_000])
    args = parser.parse_args()
    print("load before:", os.getloadavg())
    with tempfile.TemporaryDirectory(prefix="read_csv_") as folder:
        for rows in args.rows:
            path = os.path.join(folder, f"radius_{rows}.csv")
            write_file(path, rows)
            ours = best(read_radius_csv, path)
            plain = best(row_by_row, path)
            print(
                f"{rows:>9} rows: read_radius_csv {ours:6.2f} s "
                f"({ours / rows * 1e5:.2f} s per 10^5 rows); row by row {plain:6.2f} s"
            )
    print("load after:", os.getloadavg())


if __name__ == "__main__":
    main()
