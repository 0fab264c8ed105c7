"""Long series fitted on averaged points (fitting._groups): the same law, a bounded cost.

References: statsmodels' WLS (the weighted least-squares line through every
row) and scipy's ``least_squares`` with the ``soft_l1`` loss on every row.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import dropkin.fitting._robust as robust
from dropkin.fitting._core import Series, make_series
from dropkin.fitting._groups import MOST_POINTS, WIDEST_SPREAD, group_close_points, spread_for
from dropkin.fitting._linear import LinearModel, linear_fit
from dropkin.fitting._two_laws import blend_fit
from dropkin.scaling import analyze_series, sample_numbers
from dropkin.scaling.verdict._text import format_verdict

sm = pytest.importorskip("statsmodels.api")

WATER = {"surface_tension": 0.07274, "viscosity": 1.0016e-3, "density": 998.207}
AIR = {"outer_viscosity": 1.8e-5, "outer_density": 1.2}


def power_rows(rows, rng, t0=12.5e-9, dt=5e-9, noise=0.01, n=0.5):
    """`rows` frames of ``r = 0.0164 τ**n`` (m) with relative Gaussian noise (synthetic)."""
    time = np.arange(rows) * dt
    tau = time - t0
    r = np.where(tau > 0, 0.0164 * np.abs(tau) ** n, np.nan)
    radius = r * (1.0 + noise * rng.standard_normal(rows))
    return time, radius, noise * r


def test_the_spread_is_the_narrowest_that_leaves_at_most_the_most_points():
    t = np.linspace(1e-6, 1e-2, 10**5)
    s = Series(t, 0.5 * np.log(t), np.full(t.size, 0.01), True)
    spread = spread_for(s, 0.0)
    assert 0.0 < spread < WIDEST_SPREAD
    assert len(group_close_points(s, 0.0, 0.0, spread)) <= MOST_POINTS
    assert len(group_close_points(s, 0.0, 0.0, 0.99 * spread)) > MOST_POINTS
    assert spread_for(s.subset(slice(0, MOST_POINTS)), 0.0) == 0.0
    grouped = group_close_points(s, 0.0, 0.0, spread)
    assert grouped.n_rows == 10**5 and int(grouped.rows.min()) >= 1
    # No point spans more than the spread of ln t.
    edges = np.append(np.flatnonzero(np.diff(np.floor(np.log(t / t[0]) / spread))) + 1, t.size)
    starts = np.insert(edges[:-1], 0, 0)
    assert np.all(np.log(t[edges - 1] / t[starts]) <= spread)


def test_the_line_through_the_points_is_the_line_through_every_row():
    # statsmodels WLS of ln r on ln τ through all 10^5 rows against the same
    # through the averaged points: the slopes agree to a small part of its error.
    rng = np.random.default_rng(7)
    time, radius, err = power_rows(10**5, rng)
    t0 = 12.5e-9
    s = make_series(time, radius, err)
    s = s.subset(s.time > t0)
    spread = spread_for(s, t0)
    g = group_close_points(s, t0, t0, spread)
    rows = sm.WLS(s.y, sm.add_constant(np.log(s.time - t0)), weights=1 / s.s**2).fit()
    points = sm.WLS(g.y, sm.add_constant(np.log(g.time - t0)), weights=1 / g.s**2).fit()
    assert len(g) <= MOST_POINTS
    assert abs(points.params[1] - rows.params[1]) < 0.05 * rows.bse[1]
    # The information on the slope (the inverse of X'WX) is kept to 1 %.
    unscaled = [math.sqrt(f.normalized_cov_params[1, 1]) for f in (rows, points)]
    assert unscaled[1] == pytest.approx(unscaled[0], rel=0.01)


def test_a_point_of_k_equal_rows_weighs_in_the_robust_loss_as_its_rows():
    # Each frame measured three times with the same value: the rows and their
    # points are the same data; the robust fits (one law, and a blend through
    # scipy's least_squares) must agree, outliers included.
    rng = np.random.default_rng(3)
    t = np.geomspace(1e-5, 1e-2, 120)
    y = 0.5 * np.log(t) + np.log(0.0164) + 0.01 * rng.standard_normal(t.size)
    y[[30, 70]] += 0.2  # two outliers, 20 noise units
    s = np.full(t.size, 0.01)
    rows = Series(np.repeat(t, 3), np.repeat(y, 3), np.repeat(s, 3), True)
    points = Series(t, y, s / math.sqrt(3), True, np.full(t.size, 3))
    kw = {"loss": "soft_l1", "f_scale": 0.03}
    a, b = (linear_fit(x, LinearModel(None), 0.0, 0.0, **kw) for x in (rows, points))
    assert b.exponent == pytest.approx(a.exponent, abs=1e-10)
    assert b.prefactor == pytest.approx(a.prefactor, rel=1e-9)
    assert b.chi2 == pytest.approx(a.chi2, rel=1e-9)
    a, b = (blend_fit(x, 0.0, 0.0, kind="broken", **kw) for x in (rows, points))
    assert a and b
    assert b.early_exponent == pytest.approx(a.early_exponent, abs=1e-5)
    assert b.late_exponent == pytest.approx(a.late_exponent, abs=1e-5)


def test_a_verdict_on_a_hundred_thousand_rows_fits_a_bounded_number_of_points(monkeypatch):
    # The cost of a fit grows with the points it sees; a 10^5-row series is
    # fitted on at most MOST_POINTS of them, and the free exponent agrees with
    # statsmodels' WLS through every row (t0 fixed at the truth, as here).
    seen = []
    solve = robust.solve_linear

    def counting(x, y, *args, **kwargs):
        seen.append(np.shape(y)[-1])
        return solve(x, y, *args, **kwargs)

    monkeypatch.setattr(robust, "solve_linear", counting)
    for module in ("_core", "_linear", "_bootstrap"):
        monkeypatch.setattr(f"dropkin.fitting.{module}.solve_linear", counting)
    rng = np.random.default_rng(11)
    t0 = 12.5e-9
    time, radius, err = power_rows(10**5, rng, t0=t0)
    status = np.where(time > t0, "ok", "before-contact")
    numbers = sample_numbers(**WATER, **AIR, radius=1e-3)
    v = analyze_series(
        time, radius, err, status, contact_time=t0, t0=t0, numbers=numbers,
        geometry="coalescence", bootstrap=20,
    )  # fmt: skip
    assert v, v.reason
    assert seen and max(seen) <= MOST_POINTS
    assert v.n_points == int(np.sum(time > t0)) and v.settings["points_fitted"] <= MOST_POINTS
    assert 0.0 < v.settings["group_spread"] <= WIDEST_SPREAD
    shown = format_verdict(v)
    assert f"{v.n_points} points (fitted as {v.settings['points_fitted']} averaged points" in shown
    ok = time > t0
    ref = sm.WLS(np.log(radius[ok]), sm.add_constant(np.log(time[ok] - t0)), weights=1 / 0.01**2)
    ref = ref.fit()
    best = max(v.candidates, key=lambda c: c.window_decades if c.window else 0)
    assert abs(best.exponent_fit - ref.params[1]) < 0.5 * ref.bse[1]
    assert best.exponent_ci[0] <= 0.5 <= best.exponent_ci[1]
