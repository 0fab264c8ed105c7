"""Local exponent, windows and two-regime blends."""

import math

import numpy as np
import pytest

from dropkin.errors import FitError
from dropkin.fitting import (
    LawShape,
    consistent_window,
    exponent_plateaus,
    fit_blend,
    fit_broken_power_law,
    harmonic_blend,
    local_exponent,
    viscous_log_law,
)


def test_local_exponent_of_an_exact_power_law_is_flat():
    # Analytic: d ln r / d ln t = n everywhere; Savitzky–Golay of a straight
    # line is exact up to rounding (1e-9).
    t = np.linspace(1e-5, 1e-2, 3000)
    loc = local_exponent(t, 0.02 * t**0.4)
    assert loc and loc.exponent == pytest.approx(0.4, abs=1e-9)
    assert "savgol_filter" in loc.method
    assert exponent_plateaus(loc) == ((loc.time[0], loc.time[-1], pytest.approx(0.4)),)


def test_local_exponent_follows_the_log_law():
    # Analytic: ELS local exponent 1 + 1/ln(uτ/R) (docs/physics.md §2 A1), here for
    # uτ/R from 4.5e-4 to 0.045, where it falls by 0.15 per decade: a quadratic
    # Savitzky–Golay over half a decade follows it to within 0.002 inside; in
    # the last half window (and one point) scipy's "interp" edge mode
    # extrapolates one quadratic over a curve that bends ever faster: 0.07.
    t = np.geomspace(1e-5, 1e-3, 400)
    u, big_r = 0.045, 1e-3
    r = viscous_log_law(t, 1.0 / math.pi, capillary_speed=u, radius=big_r)
    loc = local_exponent(t, r)
    truth = 1.0 + 1.0 / np.log(u * loc.time / big_r)
    edge = int(round(loc.window_decades * loc.points_per_decade)) // 2 + 1
    assert loc.exponent[edge:-edge] == pytest.approx(truth[edge:-edge], abs=0.002)
    assert loc.exponent == pytest.approx(truth, abs=0.07)


def test_band_covers_the_truth_when_the_origin_is_only_bracketed():
    # Seeded synthetic: contact inside a one-frame bracket, t0 taken at the
    # bracket's middle (wrong by up to half a frame), noise 1 % of r. The band
    # (t0 at the bracket ends ± 2 s.e.) must hold the true apparent exponent
    # n τ/(τ + δ) (docs/physics.md §4.2) at ≥ 95 % of the grid points.
    rng = np.random.default_rng(9)
    frame = 1e-6
    t = np.arange(2, 2000) * frame
    t0_true = 0.83 * frame
    r_true = 0.02 * (t - t0_true) ** 0.5
    r = r_true * (1.0 + 0.01 * rng.normal(size=t.size))
    loc = local_exponent(t, r, radius_err=0.01 * r_true, t0_bracket=(0.0, frame))
    delta = loc.t0 - t0_true
    apparent = 0.5 * loc.time / (loc.time + delta)
    inside = (loc.lower <= apparent) & (apparent <= loc.upper)
    assert inside.mean() >= 0.95
    assert np.all(loc.upper - loc.lower > 0)


def test_window_of_the_right_law_spans_the_data_and_a_wrong_law_has_none():
    rng = np.random.default_rng(1)
    t = np.linspace(1e-5, 1e-2, 3000)
    r = 0.02 * t**0.5 * (1.0 + 0.002 * rng.normal(size=t.size))
    loc = local_exponent(t, r, radius_err=0.002 * r)
    lo, hi = consistent_window(loc, LawShape(0.5))
    assert math.log10(hi / lo) > 2.8  # the data span 3 decades
    assert consistent_window(loc, LawShape(1.0 / 3.0)) is None


def test_harmonic_blend_locates_its_crossover():
    # Analytic: 1/r = 1/(a1 t) + 1/(a2 t^½) (docs/physics.md §3) meets at
    # t_c = (a2/a1)². Exact data: t_c to 1e-6, exponents fixed.
    a1, a2 = 6.1, 0.0188
    t = np.geomspace(1e-7, 1e-3, 200)
    r = harmonic_blend(a1 * t, a2 * t**0.5)
    fit = fit_blend(t, r, early=1.0, late=0.5, sharpness=1.0)
    tc = (a2 / a1) ** 2
    assert fit.crossover_time == pytest.approx(tc, rel=1e-6)
    assert fit.crossover_radius == pytest.approx(a1 * tc, rel=1e-6)
    assert fit.model == "harmonic" and fit.exponents_fixed
    assert fit.late_prefactor == pytest.approx(a2, rel=1e-6)


def test_free_sharpness_and_free_exponents_come_back():
    # Synthetic blend with sharpness 3: r = (r1^-3 + r2^-3)^(-1/3); s to 1e-3,
    # and with exponents free both within 1e-3 of 1 and 1/2 (exact data).
    t = np.geomspace(1e-3, 1e3, 300)
    r1, r2 = 1.0 * t, 1.0 * t**0.5
    r = (r1**-3 + r2**-3) ** (-1.0 / 3.0)
    fit = fit_blend(t, r, early=1.0, late=0.5)
    assert fit.sharpness == pytest.approx(3.0, rel=1e-3)
    assert fit.crossover_time == pytest.approx(1.0, rel=1e-3)
    free = fit_blend(t, r, sharpness=3.0)
    assert free.early_exponent == pytest.approx(1.0, abs=1e-3)
    assert free.late_exponent == pytest.approx(0.5, abs=1e-3)


def test_rising_exponent_uses_the_larger_law():
    # Tanner t^1/10 → gravity t^1/8 (docs/physics.md §3): the late law is the
    # larger radius; blend (r1^s + r2^s)^(1/s), here s = 2; t_c = 1 s.
    t = np.geomspace(1e-2, 1e2, 200)
    r = np.sqrt((t**0.1) ** 2 + (t**0.125) ** 2)
    fit = fit_blend(t, r, early=0.1, late=0.125)
    assert fit.direction == 1
    assert fit.crossover_time == pytest.approx(1.0, rel=1e-3)
    assert fit.sharpness == pytest.approx(2.0, rel=1e-3)


def test_broken_power_law_finds_the_corner():
    # Analytic corner at t_c = 0.03 s between 2t and its t^½ continuation.
    t = np.geomspace(1e-3, 1.0, 90)
    r = np.where(t < 0.03, 2.0 * t, 2.0 * 0.03**0.5 * t**0.5)
    fit = fit_broken_power_law(t, r)
    assert fit.early_exponent == pytest.approx(1.0, abs=1e-6)
    assert fit.late_exponent == pytest.approx(0.5, abs=1e-6)
    assert fit.crossover_time == pytest.approx(0.03, rel=1e-3)


def test_blend_bootstrap_interval_holds_the_crossover():
    # Seeded noisy harmonic blend (1 % noise): the bootstrap interval of t_c
    # must contain the analytic crossover and stay within a factor 1.5.
    rng = np.random.default_rng(6)
    t = np.geomspace(1e-7, 1e-4, 300)
    r = harmonic_blend(5.0 * t, 0.0188 * t**0.5) * (1.0 + 0.01 * rng.normal(size=t.size))
    fit = fit_blend(t, r, radius_err=0.01 * r, early=1.0, late=0.5, bootstrap=40, seed=2)
    lo, hi = fit.crossover_time_ci
    tc = (0.0188 / 5.0) ** 2
    assert lo <= tc <= hi and hi / lo < 1.5
    assert fit.n_resamples > 30


def test_blends_the_data_cannot_support_are_falsy():
    t = np.geomspace(1.0, 100.0, 10)
    fit = fit_blend(t, t**0.5)
    assert not fit and fit.message == "too few points for two regimes: 10, at least 12 needed"
    with pytest.raises(FitError, match="early"):
        fit_blend(t, t, early="fast")
