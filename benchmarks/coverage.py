"""Do dropkin's 95 % intervals cover the truth? A seeded bank of synthetic series (issue 13).

Each case is a published law written out here with numpy, its source beside it;
the data never pass through dropkin's fitting, catalogue or synth. A series is
what ``dropkin measure`` writes for an ideal recording: t0 uniform between frame
k and k+1; ``before-contact`` frames (radius NaN) up to k; ``unresolved`` while
the optics cannot show the neck (side view: the gap r²/R narrower than three
edge blurs of 1.3 px, README.md under ``dropkin measure``; spreading: a < 3 px);
then ``ok`` until the law stops holding (r = R/2; r ≈ 0.09 R for the ELS law;
Tanner's law is written from contact on, 20 ms). Gaussian noise σ = 0.3–1 px
(uniform per series), ``radius_err = σ``.

Each series is fitted through the public API twice: ``contact_time`` the middle
of the frame bracket and ``contact_bracket`` = (last before-contact frame, first
in-contact frame); then ``t0`` fixed at the truth, the "(t0)" columns. Printed
per case: verdict right (dominant regime; crossover: regimes == (early, late)
and two regimes), coverage of the exponent's and coefficient's 95 % intervals
(the candidate of the true regime; a log law's true exponent is the apparent
exponent of the exact law over the fitted window, with t0 free in the frame
bracket for the free fit and fixed at the truth for "(t0)": coverage_limits.py),
the share with the estimate at an interval end, median widths, their ratio,
and "limit": the Cramér–Rao ratio the frame bracket allows (coverage_limits.py;
a ratio goal below it needs knowledge of t0 finer than a frame). A missing
interval (failed fit, no such candidate, none reported) counts as not
covering, and in ``noCI``. The laws are in published_laws.py.

    python benchmarks/coverage.py [--series 40] [--bootstrap 200] [--jobs 2] [--seed 0]
      [--csv rows.csv] [--case inertial|ilv|els|viscous-outer|inertial-spreading|tanner|crossover]
      [--rate-factor 40]

``--rate-factor K`` films every case at K times its frame rate: the same laws
in K times as many rows (the long series that are fitted on averaged points,
docs/physics.md §4.8, "Long series").
"""

from __future__ import annotations

import argparse
import csv
import dataclasses
import math
import os
import sys
import time
from concurrent.futures import ProcessPoolExecutor, as_completed
from dataclasses import dataclass
from functools import partial

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # coverage_limits.py beside it

from coverage_limits import apparent_exponent, information_ratio
from dropkin.scaling import analyze_series, sample_numbers  # the fit only, never the data
from published_laws import (
    crossover_ilv_inertial,
    els_log_law,
    inertial_coalescence,
    inertial_spreading,
    linear_viscous,
    outer_viscous,
    tanner,
)

BLUR_PX = 1.3  # edge blur of the measurement (README.md, `dropkin measure`)
GAP_BLURS = 3.0  # a neck is resolved once the gap r²/R spans three blurs
SPREAD_PX = 3.0  # a contact radius below this many pixels is unresolved

# -- the cases ------------------------------------------------------------------------

_AIR = {"outer_viscosity": 1.813e-5, "outer_density": 1.204}  # dry air, 20 °C (physics §5.6)


@dataclass(frozen=True)
class Side:
    """The truth of one regime: key, exponent n, coefficient C and its group (m s^-n)."""

    key: str
    n: float
    C: float
    group: float
    logarithmic: bool = False


@dataclass(frozen=True)
class Case:
    """One case of the bank: sample, camera, law, where it stops, and its truth."""

    name: str
    geometry: str
    sample: dict  # keyword arguments of dropkin.scaling.sample_numbers (SI)
    fps: float
    pixel: float  # m
    law: object  # r(τ) in m, noise free
    r_end: float | None  # stop at this radius (m); None: at `duration`
    duration: float  # s after contact (upper bound)
    sides: tuple[Side, ...]

    def radius(self, tau):
        return self.law(np.asarray(tau, dtype=float))


def _case(name, geometry, sample, fps, pixel, r_end, duration, sides, law, **values):
    return Case(name, geometry, sample, fps, pixel, partial(law, **values), r_end, duration, sides)


def build_cases() -> dict[str, Case]:
    """The seven cases: water-like, glycerol-like, very viscous, outer fluid, spreading, blend."""
    # C: the catalogue's (docs/physics.md §2): 1.2 for A3 and C1 (M, range 1.0–1.7), 1 for A2 (M),
    # 1/π for A1 (V), 1.2 for A4v (V), 0.83 for C4 (D, Λ = 15).
    w = {"gamma": 0.07274, "rho": 998.2, "R": 1e-3}  # water 20 °C (physics §5.1)
    water = {"surface_tension": 0.07274, "viscosity": 1.0016e-3, "density": 998.2, **_AIR}
    gly = {"surface_tension": 0.0634, "viscosity": 1.414, "density": 1261.0, **_AIR}  # §5.2
    oil = {"surface_tension": 0.0209, "viscosity": 0.0965, "density": 964.5, **_AIR}  # 100 cSt
    bubble = {"surface_tension": 0.0212, "viscosity": 1.813e-5, "density": 1.204,
              "outer_viscosity": 0.970, "outer_density": 970.5}  # air in 1000 cSt oil  # fmt: skip
    mix = {"surface_tension": 0.0658, "viscosity": 0.1002, "density": 1221.0, **_AIR}  # 85 wt %
    g_i, g_m = (0.07274 * 1e-3 / 998.2) ** 0.25, (0.0658 * 2e-3 / 1221.0) ** 0.25
    g_o, g_t = (0.0212 * 1e-3 / 0.970) ** 0.5, (0.0209 * (math.pi / 6e9) ** 3 / 0.0965) ** 0.1
    return {
        "inertial": _case("inertial", "coalescence", {**water, "radius": 1e-3}, 1e5, 5e-6,
                          0.5e-3, 1.0, (Side("inertial", 0.5, 1.2, g_i),),
                          inertial_coalescence, D0=1.2, **w),
        "ilv": _case("ilv", "coalescence", {**gly, "radius": 1e-3}, 1e4, 2e-6, 0.5e-3, 1.0,
                     (Side("inertially-limited-viscous", 1.0, 1.0, 0.0634 / 1.414),),
                     linear_viscous, gamma=0.0634, eta=1.414, C=1.0),
        "els": _case("els", "coalescence", {**gly, "radius": 10e-3}, 1e4, 2e-6,
                     -0.15 * math.log(0.15) / math.pi * 10e-3, 0.05,
                     (Side("viscous", 1.0, 1 / math.pi, 0.0634 / 1.414, True),),
                     els_log_law, gamma=0.0634, eta=1.414, R=10e-3, C=1 / math.pi),
        "viscous-outer": _case("viscous-outer", "coalescence", {**bubble, "radius": 1e-3}, 2e4,
                               5e-6, 0.5e-3, 1.0, (Side("viscous-outer", 0.5, 1.2, g_o),),
                               outer_viscous, gamma=0.0212, eta_out=0.970, R=1e-3, C1=1.2),
        "inertial-spreading": _case("inertial-spreading", "spreading", {**water, "radius": 1e-3},
                                    2e5, 20e-6, 0.5e-3, 1.0,
                                    (Side("inertial-spreading", 0.5, 1.2, g_i),),
                                    inertial_spreading, gamma=0.07274, rho=998.2, R=1e-3, C=1.2),
        "tanner": _case("tanner", "spreading", {**oil, "radius": 0.5e-3}, 1e4, 5e-6, None, 0.02,
                        (Side("tanner", 0.1, 0.83, g_t),),
                        tanner, gamma=0.0209, eta=0.0965, R=0.5e-3, C=0.83),
        "crossover": _case("crossover", "coalescence", {**mix, "radius": 2e-3}, 4e4, 2e-6, 1e-3,
                           1.0, (Side("inertially-limited-viscous", 1.0, 1.0, 0.0658 / 0.1002),
                                 Side("inertial", 0.5, 1.2, g_m)),
                           crossover_ilv_inertial, gamma=0.0658, eta=0.1002, rho=1221.0,
                           R=2e-3, C=1.0, D0=1.2),
    }  # fmt: skip


@dataclass(frozen=True)
class SyntheticSeries:
    """A measured series as radius.csv holds it, with its truth."""

    time: np.ndarray
    radius: np.ndarray
    radius_err: np.ndarray
    status: tuple[str, ...]
    t0: float
    sigma: float  # m
    bracket: tuple[float, float]


def _end_time(case: Case) -> float:
    if case.r_end is None:
        return case.duration
    lo, hi = 0.0, case.duration  # every law grows monotonically up to `duration`
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if case.radius(mid) < case.r_end else (lo, mid)
    return hi


def _resolved(case: Case, r_true):
    if case.geometry == "spreading":
        return r_true >= SPREAD_PX * case.pixel
    return r_true**2 / case.sample["radius"] >= GAP_BLURS * BLUR_PX * case.pixel


def generate(case: Case, rng: np.random.Generator) -> SyntheticSeries:
    """One series of `case`: t0 uniform in frame k's interval, noise σ of 0.3–1 px."""
    dt, end = 1.0 / case.fps, _end_time(case)
    k = int(rng.integers(3, 8))
    t0 = (k + rng.uniform(0.0, 1.0)) * dt
    time_ = np.arange(int(math.floor((t0 + end) / dt)) + 1) * dt
    sigma = rng.uniform(0.3, 1.0) * case.pixel
    tau = time_ - t0
    r_true = np.where(tau > 0, case.radius(np.clip(tau, 0.0, None)), np.nan)
    radius = np.where(tau > 0, r_true + rng.normal(0.0, sigma, len(time_)), np.nan)
    status = np.select([tau <= 0, _resolved(case, r_true)], ["before-contact", "ok"], "unresolved")
    err = np.where(tau > 0, sigma, np.nan)
    return SyntheticSeries(time_, radius, err, tuple(status), t0, sigma, (k * dt, (k + 1) * dt))


def series_rng(seed: int, case_index: int, series_index: int) -> np.random.Generator:
    return np.random.default_rng([seed, case_index, series_index])


def bank(case: Case, count: int, seed: int) -> list[SyntheticSeries]:
    """`count` series of `case`, reproducible from `seed`."""
    index = list(build_cases()).index(case.name)
    return [generate(case, series_rng(seed, index, i)) for i in range(count)]


def true_exponent(case: Case, side: Side, times, t0_true, bracket) -> float:
    """n; for a log law the apparent exponent (coverage_limits.py), t0 free in `bracket`."""
    return apparent_exponent(case.radius, times, t0_true, bracket) if side.logarithmic else side.n


def limits(case: Case, s: SyntheticSeries, j: int) -> dict:
    """Cramér–Rao width ratios (coverage_limits.py) of side j's exponent and coefficient."""
    if any(side.logarithmic for side in case.sides):
        return {"n_limit": math.nan, "C_limit": math.nan}
    theta = [v for side in case.sides for v in (math.log(side.C * side.group), side.n)]
    tau = s.time[np.array(s.status) == "ok"] - s.t0
    args = (theta, tau, s.sigma, s.bracket[1] - s.bracket[0])
    # As the fit frees them: this side's prefactor and exponent (the other law kept,
    # as the verdict refits a side); for C the exponent held at the law's.
    side = [i // 2 == j for i in range(len(theta))]
    prefactor_only = [i == 2 * j for i in range(len(theta))]
    return {"n_limit": information_ratio(*args, index=2 * j + 1, free=side),
            "C_limit": information_ratio(*args, index=2 * j, free=prefactor_only)}  # fmt: skip


# -- fitting through the public API, and the rows --------------------------------------


def _pick(verdict, side_key, segment):
    """The candidate of the true regime: its segment's, else the longest window's."""
    same = [c for c in verdict.candidates if c.key == side_key]
    pool = [c for c in same if c.segment == segment] or same
    return max(pool, key=lambda c: c.window_decades) if pool else None


def _at_end(est, lo, hi) -> bool:
    tol = 1e-9 * max(abs(est), 1e-300)
    return abs(est - lo) <= tol or abs(est - hi) <= tol


def _interval_row(prefix, est, lo, hi, truth):
    ok = all(math.isfinite(v) for v in (est, lo, hi))
    keys = ("fit", "lo", "hi", "true", "ci", "cover", "end", "width")
    values = (est, lo, hi, truth, ok, ok and lo <= truth <= hi, ok and _at_end(est, lo, hi),
              hi - lo if ok else math.nan)  # fmt: skip
    return {f"{prefix}_{k}": v for k, v in zip(keys, values, strict=True)}


def _evaluate(case, series, verdict, side, segment, tag):
    """The columns of one fit for one side: exponent and coefficient intervals."""
    nan = math.nan
    cand = _pick(verdict, side.key, segment) if verdict else None
    times = series.time[np.array(series.status) == "ok"]
    if cand is not None and cand.window is not None and verdict:
        tau_fit, (w0, w1) = times - verdict.t0, cand.window
        inside = (tau_fit >= w0 * (1 - 1e-9)) & (tau_fit <= w1 * (1 + 1e-9))
        times = times[inside] if inside.sum() >= 2 else times
    bracket = series.bracket if tag == "free" else None
    n_true = true_exponent(case, side, times, series.t0, bracket)
    n = (cand.exponent_fit, *cand.exponent_ci) if cand else (nan, nan, nan)
    a = (cand.prefactor_fit, *cand.prefactor_fit_ci) if cand else (nan, nan, nan)
    c = tuple(v / side.group for v in a)
    row = {**_interval_row("n", *n, n_true), **_interval_row("C", *c, side.C)}
    row["C_width"] = row["C_width"] / side.C  # relative width
    row["t0_fit"] = verdict.t0 if verdict else nan
    return {f"{tag}_{k}": v for k, v in row.items()}


def _verdict_right(case, verdict) -> bool:
    if not verdict:
        return False
    if len(case.sides) == 2:
        return verdict.two_regime and verdict.regimes == tuple(s.key for s in case.sides)
    return verdict.dominant is not None and verdict.dominant.key == case.sides[0].key


def run_one(case_name: str, index: int, seed: int, bootstrap: int, rate=1.0) -> list[dict]:
    """Generate series `index` of a case (its frame rate times `rate`), fit it twice,
    and return one row per side."""
    case = build_cases()[case_name]
    case = dataclasses.replace(case, fps=case.fps * rate)
    case_index = list(build_cases()).index(case_name)
    s = generate(case, series_rng(seed, case_index, index))
    numbers = sample_numbers(**case.sample)
    common = {"numbers": numbers, "geometry": case.geometry, "seed": index, "bootstrap": bootstrap}
    start, data = time.perf_counter(), (s.time, s.radius, s.radius_err, s.status)
    free = analyze_series(
        *data, contact_time=sum(s.bracket) / 2, contact_bracket=s.bracket, **common
    )
    known = analyze_series(*data, contact_time=None, t0=s.t0, **common)
    seconds = time.perf_counter() - start
    rows = []
    for j, side in enumerate(case.sides):
        segment = "all" if len(case.sides) == 1 else ("early", "late")[j]
        label = side.key if segment == "all" else f"{segment}:{side.key}"
        row = {"case": case_name, "side": label,
               "series": index, "t0_true": s.t0, "t0_in_frame": (s.t0 - s.bracket[0]) * case.fps,
               "sigma_px": s.sigma / case.pixel, "ok_frames": s.status.count("ok"),
               "unresolved": s.status.count("unresolved"), "success": bool(free),
               "regimes": " > ".join(free.regimes) if free else free.reason,
               "verdict_right": _verdict_right(case, free), "seconds": seconds}  # fmt: skip
        row.update(_evaluate(case, s, free, side, segment, "free"))
        row.update(_evaluate(case, s, known, side, segment, "t0"))
        row.update(limits(case, s, j))
        rows.append(row)
    return rows


def _share(rows, key):
    return sum(bool(r[key]) for r in rows) / len(rows)


def _median(rows, key):
    values = [r[key] for r in rows if math.isfinite(r[key])]
    return float(np.median(values)) if values else math.nan


_STATS = (  # column, per-series key, statistic
    ("cover", "free_{}_cover", _share),
    ("cover_t0", "t0_{}_cover", _share),
    ("end", "free_{}_end", _share),
    ("width", "free_{}_width", _median),
    ("width_t0", "t0_{}_width", _median),
)


def summarise(rows) -> list[dict]:
    """Per case and side: the shares and medians the issue's goals are stated on."""
    out = []
    for case, side in dict.fromkeys((r["case"], r["side"]) for r in rows):
        sub = [r for r in rows if (r["case"], r["side"]) == (case, side)]
        e = {"case": case, "side": side, "N": len(sub), "verdict": _share(sub, "verdict_right")}
        for q in ("n", "C"):
            e.update({f"{q}_{col}": stat(sub, key.format(q)) for col, key, stat in _STATS})
            e[f"{q}_noci"] = sum(not r[f"free_{q}_ci"] for r in sub)
            e[f"{q}_ratio"] = e[f"{q}_width"] / e[f"{q}_width_t0"]
            e[f"{q}_limit"] = _median(sub, f"{q}_limit")
        out.append(e)
    return out


_ROW = "{:34s} {:>3} {:>7} | {:>5} {:>5} {:>4} {:>5} {:>8} {:>8} {:>5} {:>5}"


def format_table(summary) -> str:
    """Two lines per case and side: the exponent, then the coefficient (relative widths)."""
    head = ("case / side", "N", "verdict", "cover", "(t0)", "noCI", "end", "width", "(t0)")
    lines = [_ROW.format(*head, "ratio", "limit"), _ROW.format(
        "goals", "", "≥0.95", "≥0.93", "", "", "≤0.05", "", "", "≤1.5", "")]  # fmt: skip
    for e in summary:
        for q in ("n", "C"):
            first = q == "n"
            lines.append(_ROW.format(
                f"{e['case']} / {e['side']}"[:34] if first else "  coefficient C",
                e["N"] if first else "", f"{e['verdict']:.2f}" if first else "",
                *(f"{e[q + k]:.2f}" for k in ("_cover", "_cover_t0")), e[q + "_noci"],
                f"{e[q + '_end']:.2f}", *(f"{e[q + k]:.3g}" for k in ("_width", "_width_t0")),
                f"{e[q + '_ratio']:.2f}", f"{e[q + '_limit']:.2f}"))  # fmt: skip
    return "\n".join(lines)


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--series", type=int, default=40)
    parser.add_argument("--bootstrap", type=int, default=200)
    parser.add_argument("--case", action="append", choices=list(build_cases()))
    parser.add_argument("--jobs", type=int, default=1)
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument("--csv", help="write the per-series rows here")
    parser.add_argument("--rate-factor", type=float, default=1.0, help="frame rate times this")
    args = parser.parse_args(argv)
    names = args.case or list(build_cases())
    tasks = [
        (name, i, args.seed, args.bootstrap, args.rate_factor)
        for name in names
        for i in range(args.series)
    ]
    start, rows = time.perf_counter(), []
    with ProcessPoolExecutor(max_workers=args.jobs) as pool:
        futures = [pool.submit(run_one, *task) for task in tasks]
        for done, future in enumerate(as_completed(futures), 1):
            rows.extend(future.result())
            print(f"\r{done}/{len(tasks)} series fitted", end="", file=sys.stderr, flush=True)
    print(file=sys.stderr)
    rows.sort(key=lambda r: (names.index(r["case"]), r["series"], r["side"]))
    if args.csv:
        with open(args.csv, "w", newline="", encoding="utf-8") as handle:
            (writer := csv.DictWriter(handle, fieldnames=list(rows[0]))).writeheader()
            writer.writerows(rows)
    ok_rows = [r["ok_frames"] for r in rows]
    print(
        f"{args.series} series per case, bootstrap {args.bootstrap}, seed {args.seed}, "
        f"frame rate x {args.rate_factor:g}; ok rows per series: median "
        f"{np.median(ok_rows):.0f}, most {max(ok_rows)}"
    )
    print("width: exponent, absolute; coefficient, relative to the true C. (t0): true t0 given.")
    print(format_table(summarise(rows)))
    print(f"total time {time.perf_counter() - start:.0f} s with {args.jobs} job(s)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
