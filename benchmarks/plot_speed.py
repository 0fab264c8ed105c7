"""Time the figures (``write_plots``) of long series (issue 17, finding 12; issue 18).

A series of N rows is made in memory, as ``fit_speed.py`` writes it (a
side-view coalescence, ``r = A (t - t0)**0.5`` with 1 % Gaussian noise over
the first millisecond, invented for this benchmark: frames before contact,
unresolved frames, then ``ok`` frames). The verdict is fitted once, on the
2,000-row series (``--bootstrap 0``): the figures' cost depends on the rows
drawn, not on how the verdict was found. For each N, ``write_plots`` is timed
in this process (its first call, with matplotlib's fonts loaded by a warm-up
on another series, and the best of ``--repeat``), then each figure's drawing
and saving. The load average is printed before and after.

    python benchmarks/plot_speed.py [--rows 2000 100000 1000000] [--repeat 2]

Last measured on this 2-core machine shared with other work (load average
4 to 8), 2026-12-05, first call: 2,000 rows 0.60–0.70 s (before the binning
and the cheaper layout: 0.91–1.13 s); 10⁵ rows 0.68–0.70 s (before: 13.0–13.8
s); 10⁶ rows 1.5 s (before: 144 s, timed by hand on the same series as
``fit_speed.py`` writes it). With the figures shared between the process
and a forked child (issue 18), measured 2026-12-05 at load 1.7–2.3 (other
work on both cores), three runs each, interleaved: 2,000 rows 0.25–0.45 s,
against 0.41–0.43 s one after the other.
"""

from __future__ import annotations

import argparse
import os
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np

from dropkin.report import write_plots
from dropkin.report._plots import figure_makers
from dropkin.report._style import _RC, _save
from dropkin.scaling import analyze_series, sample_numbers
from dropkin.series import RadiusSeries

T0, BRACKET = 3.6e-4, (3.5e-4, 3.7e-4)  # the synthetic contact, its bracket (s)
# docs/physics.md §5.1 (water, 20 °C) in air, as tests/scaling/test_verdict.py
WATER = sample_numbers(
    surface_tension=0.07274,
    viscosity=1.0016e-3,
    density=998.207,
    radius=1e-3,
    outer_viscosity=1.8e-5,
    outer_density=1.2,
)


def series_of(rows, seed=0) -> RadiusSeries:
    """`rows` frames over the first millisecond, as ``fit_speed.write_series``."""
    time_s = np.arange(rows) * (1e-3 / rows)
    rng = np.random.default_rng(seed)
    status = np.where(
        time_s <= BRACKET[0], "before-contact", np.where(time_s <= BRACKET[1], "unresolved", "ok")
    )
    ok = status == "ok"
    with np.errstate(invalid="ignore"):
        r = 0.0164 * np.sqrt(time_s - T0) * (1.0 + 0.01 * rng.standard_normal(rows))
    radius = np.where(ok, r, np.nan)
    return RadiusSeries(
        frame=np.arange(rows),
        time=time_s,
        radius=radius,
        radius_err=np.where(ok, 0.01 * radius, np.nan),
        status=tuple(status),
        contact_time=T0,
        contact_time_err=1e-5,
        drop_radius=1e-3,
        geometry="coalescence",
        view="side",
        frame_rate=rows / 1e-3,
        pixel_size=1e-6,
    )


def verdict_of(series):
    return analyze_series(
        series.time,
        series.radius,
        series.radius_err,
        series.status,
        contact_time=T0,
        contact_bracket=BRACKET,
        numbers=WATER,
        geometry="coalescence",
        bootstrap=0,
    )


def per_figure(series, verdict, out):
    import matplotlib

    times = {}
    with matplotlib.rc_context(_RC), warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for stem, draw in figure_makers(series, verdict).items():
            start = time.perf_counter()
            fig = draw()
            built = time.perf_counter()
            _save(fig, out, stem)
            times[stem] = (built - start, time.perf_counter() - built)
    return "  ".join(f"{k} {b:.2f}+{s:.2f}" for k, (b, s) in times.items())


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, nargs="+", default=[2_000, 100_000, 1_000_000])
    parser.add_argument("--repeat", type=int, default=2)
    args = parser.parse_args()
    print("load before:", os.getloadavg())
    verdict = verdict_of(series_of(2_000))
    with tempfile.TemporaryDirectory() as out:
        write_plots(out, series=series_of(100), verdict=verdict)  # fonts, caches
        for rows in args.rows:
            series = series_of(rows)
            runs = []
            for _ in range(args.repeat):
                start = time.perf_counter()
                write_plots(out, series=series, verdict=verdict)
                runs.append(time.perf_counter() - start)
            figures = per_figure(series, verdict, Path(out) / "plots")
            print(f"{rows:>9} rows: write_plots {runs[0]:.2f} s (best {min(runs):.2f}); {figures}")
    print("load after:", os.getloadavg())


if __name__ == "__main__":
    main()
