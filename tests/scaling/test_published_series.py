"""Published neck series of coalescing bubbles through ``dropkin fit``.

Two digitised series (tests/data/published/, each file's header names the paper,
the figure, where the values come from and which units are inferred) are written
as a ``radius.csv`` with an experiment file giving the experiment's liquid and
bubble size, and run through the command itself. The verdict's regime, exponent
and coefficient are compared with the published ones:

- the regime: gas bubbles in a low-viscosity liquid are governed by the outer
  liquid's inertia, ``inertial-outer`` (docs/physics.md §2 A4i/A5; Nat. Commun.
  5, 3182, 2014), with the liquid as the medium; the prefactor must single it
  out from the other n = 1/2 laws;
- the exponent: 1/2, the capillary/inertial balance both papers model the neck
  with (Phys. Fluids 17, 071703, 2005, abstract; the t^(1/2) law of the same
  Nat. Commun. paper for bubbles);
- the coefficient: D1 = 1.4 on (γR/ρ_o)^(1/4), the published bubble value of
  Nat. Commun. 5, 3182 (2014), Fig. 2 (docs/physics.md §2 A4). Neither series'
  own paper could be read beyond its abstract here, so their own fitted
  prefactors (if they state one) are not used.

Noise model of digitised data: a digitised point is off by about the same
*length on the plot* wherever it lies, so each radius gets the same absolute
uncertainty, estimated from the series itself without a model (successive
second differences, 1.4826 × MAD / √6), not a relative one.
"""

import json
import math
from pathlib import Path

import numpy as np
from click.testing import CliRunner

from dropkin.cli import main

DATA = Path(__file__).parents[1] / "data" / "published"

EXPERIMENT = """\
[setup]
geometry = "coalescence"
view = "side"
[liquid]
name = "air"
temperature = "20 degC"
surface_tension = "{gamma} mN/m"
[medium]
name = "{medium}"
temperature = "20 degC"
density = "{rho} kg/m^3"
viscosity = "{eta} mPa*s"
[drops]
radius = "{radius_mm} mm"
"""

#: The published bubble coefficient of inertial-outer (Nat. Commun. 5, 3182, 2014).
D1 = 1.4


def model_free_sigma(values):
    """Noise of a smooth series from its second differences (1.4826 × MAD / √6)."""
    dd = np.diff(np.asarray(values, dtype=float), 2)
    return 1.4826 * float(np.median(np.abs(dd - np.median(dd)))) / math.sqrt(6.0)


def write_radius_csv(path, time_s, radius_m, sigma_m, before_s):
    """A radius.csv: one frame before contact at `before_s`, then the series (all ok)."""
    lines = ["frame,time_s,since_contact_s,radius_m,radius_err_m,status"]
    lines.append(f"0,{float(before_s)!r},,,,before-contact")
    for i, (t, r) in enumerate(zip(time_s, radius_m, strict=True), start=1):
        t, r = float(t), float(r)
        lines.append(f"{i},{t!r},{t!r},{r!r},{float(sigma_m)!r},ok")
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def fit(tmp_path, time_s, radius_m, sigma_m, before_s, *, extra=(), **sample):
    tmp_path.mkdir(parents=True, exist_ok=True)
    write_radius_csv(tmp_path / "radius.csv", time_s, radius_m, sigma_m, before_s)
    (tmp_path / "experiment.toml").write_text(EXPERIMENT.format(**sample), encoding="utf-8")
    args = ["fit", tmp_path / "radius.csv", "--experiment", tmp_path / "experiment.toml"]
    args += ["-o", tmp_path / "out", "--bootstrap", "100", *extra]
    result = CliRunner().invoke(main, [str(a) for a in args])
    assert result.exit_code == 0, result.output
    return json.loads((tmp_path / "out" / "fit.json").read_text(encoding="utf-8"))


def candidate(fit_json, key):
    (found,) = [c for c in fit_json["candidates"] if c["regime"] == key]
    return found


def read_published(name):
    """The columns of a data file: '#' lines are its header block, then a names line."""
    lines = [
        line
        for line in (DATA / name).read_text(encoding="utf-8").splitlines()
        if line.strip() and not line.startswith("#")
    ]
    names = lines[0].split(",")
    values = np.array([[float(x) for x in line.split(",")] for line in lines[1:]])
    return {n: values[:, i] for i, n in enumerate(names)}


def ethanol_series():
    cols = read_published("bubbles_in_ethanol_pof_2005.csv")
    return cols["t_ms"] * 1e-3, cols["neck"]


#: Coefficient tolerance, relative: the published D1 is given to two digits (1.4 ± 0.05
#: by rounding, 3.6 %); the runs of the 2018 figure scatter by 2.6 % in C (standard
#: deviation of the per-run coefficient, checked in the test below), 5 % at two
#: deviations; digitisation adds well under 1 % (the series' own noise, 0.2–0.8 % of r).
#: 10 % covers the sum.
C_TOLERANCE = 0.10
#: Exponent tolerance of the verdict's check (a) (docs/physics.md §4.8).
N_TOLERANCE = 0.02


def ethanol_fit(tmp_path, *, scale, radius, t0=None):
    """Series 1 through `dropkin fit`: r = neck × `scale` (m), bubble radius `radius` (m)."""
    t, neck = ethanol_series()
    step = float(np.median(np.diff(t)))
    extra = () if t0 is None else ("--t0", f"{t0} s")
    return fit(tmp_path, t, neck * scale, model_free_sigma(neck) * scale, -step, extra=extra,
               gamma=21.5, medium="ethanol", rho=789, eta=1.2, radius_mm=radius * 1e3)  # fmt: skip


def test_air_bubbles_in_ethanol_whole_series_is_one_regime(tmp_path):
    # Issue 14: the whole series (all 55 points within r/R = 0.5: the neck read in mm,
    # R = 1.59 mm, the top bubble's radius, which the source's time2.py uses) gave two
    # regimes, inertial-outer → inertially-limited-viscous at 0.9 ms, ΔAIC = 10.5, from
    # a broken power law whose exponents were 0.477 and 0.458: a bend as the neck nears
    # the bubble size, not a change of regime.
    out = ethanol_fit(tmp_path, scale=1e-3, radius=1.59e-3)
    assert out["n_points"] == 55
    assert not out["two_regime"] and out["regimes"] == ["inertial-outer"], out["sentence"]
    assert "a bend within one law" in out["model_reason"]


def test_air_bubbles_in_ethanol_against_the_published_law(tmp_path):
    # The header's reading: r = neck × R_avg, R_avg = 1.30 mm. Contact: the series starts
    # at 3 µs on the figure's axis and the frame before contact is not in it, so t0 may
    # lie up to one digitised interval (50 µs) before the axis' origin.
    out = ethanol_fit(tmp_path, scale=1.30e-3, radius=1.30e-3)
    assert out["success"] and not out["two_regime"], out["sentence"]
    top = candidate(out, out["regimes"][0])
    # Regime: the outer liquid's inertia; its rivals of the same n fail on C or the numbers.
    assert top["regime"] == "inertial-outer"
    assert top["checks"]["prefactor"] and top["checks"]["numbers"]
    for rival in ("inertial", "viscous-outer", "diffusive"):
        checks = candidate(out, rival)["checks"]
        assert not (checks["prefactor"] and checks["numbers"]), rival
    # Coefficient against the published bubble value.
    assert abs(top["coefficient_fit"] / D1 - 1) <= C_TOLERANCE, top["coefficient_fit"]
    # Exponent: 0.473 [0.469, 0.478] here, below 1/2 by 0.027, more than check (a)
    # allows, and the verdict says so (undecidable, not a wrong regime). The local
    # exponent falls over the late frames, where the neck nears the smaller bubble
    # (r reaches 0.64 of its 1.01 mm). No published tolerance applies: 0.03 bounds the
    # gap seen, so that a change of the fit that widens it fails here.
    assert not top["checks"]["exponent"] and not out["decidable"]
    assert abs(top["exponent_fit"] - 0.5) <= 0.03, top["exponent_fit"]


def co2_runs():
    cols = read_published("co2_bubbles_in_water_jfm_2018.csv")
    return cols["run"], cols["t_over_tau"], cols["r_over_R"]


def test_co2_bubbles_in_water_against_the_published_law(tmp_path):
    # Figure 5's dots of all runs pooled into one series: dots at the same time on the
    # figure (t/τ equal to 1e-4) are averaged. Capillary time τ = 0.683 ms, R = 300 µm.
    # The axes start at contact; t0 is fitted between 0 and the first dot.
    run, x, y = co2_runs()
    key = np.round(x, 4)
    times = np.unique(key)
    mean = np.array([y[key == k].mean() for k in times])
    tau, radius = 0.683e-3, 300e-6
    out = fit(tmp_path, times * tau, mean * radius, model_free_sigma(mean) * radius, 0.0,
              gamma=58.7, medium="water", rho=1014.5, eta=0.964, radius_mm=0.3)  # fmt: skip
    assert out["success"] and out["decidable"] and not out["two_regime"], out["sentence"]
    assert out["regimes"] == ["inertial-outer"]
    top = candidate(out, "inertial-outer")
    assert all(top["checks"].values())
    # Exponent: 1/2 inside the combined interval widened by check (a)'s tolerance.
    lo, hi = top["exponent_combined_ci"]
    assert lo - N_TOLERANCE <= 0.5 <= hi + N_TOLERANCE
    # Coefficient against the published bubble value, and the tolerance's own basis:
    # the run-to-run scatter of C (n = 1/2, r/R ≤ 0.5, runs with two dots or more).
    assert abs(top["coefficient_fit"] / D1 - 1) <= C_TOLERANCE, top["coefficient_fit"]
    per_run = [
        np.median(y[m] / np.sqrt(x[m]))
        for m in ((run == k) & (y <= 0.5) for k in np.unique(run))
        if m.sum() >= 2
    ]
    spread = np.std(per_run, ddof=1) / np.mean(per_run)
    assert 0.05 / 1.4 + 2 * spread <= C_TOLERANCE, spread
