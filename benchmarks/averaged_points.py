"""Long series fitted on averaged points against the same series fitted row by row.

A series of more than ``MOST_POINTS`` rows after contact is fitted on averaged
points (docs/physics.md §4.8, "Long series"). This benchmark films the cases
of ``coverage.py`` (published laws written out with numpy, noise of 0.3–1 px)
at ``--rate-factor`` times their frame rate, fits each series both ways with
``dropkin.scaling.analyze_series`` (t0 free in its frame bracket; the row fit
by raising ``MOST_POINTS`` above the rows), and prints per series the rows,
the points, the exponent and coefficient of the true regime's candidate both
ways with their difference in half-widths of the row fit's 95 % interval,
t0's difference likewise, the seconds of each fit and whether the regimes
agree.

    python benchmarks/averaged_points.py [--rate-factor 40] [--series 3] [--bootstrap 100]

Last run on this 2-core machine (2026-12-05, load 3–6, rate factor 40, 3
series a case, 100 resamples): the same regimes in all 21 series
(2353–11299 rows); exponents differ by at most 0.07 half-widths on the pure
power laws, 0.18 on one outer-viscous series, 0.38 on the ELS law (a curved
law seen as a power law), coefficients by at most 0.07, t0 by at most 0.01;
row fits took 10.7–62.6 s, the averaged ones 4.8–14.4 s.
"""

from __future__ import annotations

import argparse
import dataclasses
import math
import os
import sys
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # coverage.py beside it

import coverage as bank
import dropkin.fitting._groups as groups
from dropkin.scaling import analyze_series, sample_numbers


def fitted(case, s, index, bootstrap, most):
    """(verdict, the true regime's candidate or None, seconds) with MOST_POINTS = `most`."""
    groups.MOST_POINTS = most
    start = time.perf_counter()
    v = analyze_series(
        s.time, s.radius, s.radius_err, s.status,
        contact_time=sum(s.bracket) / 2, contact_bracket=s.bracket,
        numbers=sample_numbers(**case.sample), geometry=case.geometry,
        seed=index, bootstrap=bootstrap,
    )  # fmt: skip
    key = case.sides[-1].key
    found = [c for c in v.candidates if c.key == key] if v else []
    return v, (found[0] if found else None), time.perf_counter() - start


def half_widths(a, b, interval) -> float:
    """(b - a) in half-widths of `interval` (NaN without one)."""
    if interval is None or a is None or b is None:
        return math.nan
    half = 0.5 * (interval[1] - interval[0])
    return (b - a) / half if half > 0 else math.nan


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rate-factor", type=float, default=40.0)
    parser.add_argument("--series", type=int, default=3)
    parser.add_argument("--bootstrap", type=int, default=100)
    args = parser.parse_args(argv)
    most = groups.MOST_POINTS
    print("case series rows points | n rows, points, diff | C rows, points, diff | t0 diff | s")
    for i, (name, case) in enumerate(bank.build_cases().items()):
        case = dataclasses.replace(case, fps=case.fps * args.rate_factor)
        for index in range(args.series):
            s = bank.generate(case, bank.series_rng(0, i, index))
            v1, c1, s1 = fitted(case, s, index, args.bootstrap, 10**12)
            v2, c2, s2 = fitted(case, s, index, args.bootstrap, most)
            n = (c1.exponent_fit, c2.exponent_fit) if c1 and c2 else (math.nan, math.nan)
            dn = half_widths(*n, c1.exponent_ci if c1 else None)
            c = (c1.coefficient_fit, c2.coefficient_fit) if c1 and c2 else (None, None)
            dc = half_widths(*c, c1.coefficient_ci if c1 and c[0] is not None else None)
            dt = half_widths(v1.t0, v2.t0, v1.t0_ci) if v1 and v2 else math.nan
            shown_c = " ".join("-" if x is None else f"{x:.5f}" for x in c)
            print(
                f"{name} {index} {v1.n_points} {v2.settings.get('points_fitted')} | "
                f"{n[0]:.5f} {n[1]:.5f} {dn:+.2f} | {shown_c} {dc:+.2f} | {dt:+.2f} | "
                f"{s1:.1f} {s2:.1f} {'same' if v1.regimes == v2.regimes else 'DIFFERENT'} regimes",
                flush=True,
            )
    groups.MOST_POINTS = most
    return 0


if __name__ == "__main__":
    sys.exit(main())
