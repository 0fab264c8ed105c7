"""Issue 13: t0 a parameter of every fit, refitted in every bootstrap resample; r0 optional."""

import math
import re

import numpy as np
import pytest

from dropkin.contact import bracket_before_first_point, frames_bracket
from dropkin.fitting import INITIAL_RADIUS_AIC_GAIN, fit_blend, fit_power_law
from dropkin.fitting._core import ROBUST_SCALE, make_series
from dropkin.fitting._linear import LinearModel, profile_fit, profile_many


def _wilson(k, n, z=1.959963984540054):
    """Wilson score interval of a binomial proportion (Wilson, JASA 22, 209, 1927)."""
    p = k / n
    centre = (p + z * z / (2 * n)) / (1 + z * z / n)
    half = z * math.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / (1 + z * z / n)
    return centre - half, centre + half


def test_batched_profile_matches_scipy_bounded_search_per_series():
    # Reference: scipy.optimize.minimize_scalar (bounded Brent, to 1e-9 of the
    # bracket) over each series' robust cost with the linear parameters settled
    # at every origin (200 reweighting passes). The batched search finds the
    # same origin to 1e-6 of the bracket and the same exponent to 1e-8
    # (measured: 4e-8 and 2e-9), and the fit of one series, profile_fit, the
    # same as the batch.
    from scipy.optimize import minimize_scalar

    from dropkin.fitting._robust import rho, solve_linear

    rng = np.random.default_rng(4)
    t = np.arange(6, 200) * 1e-6
    y = np.stack([0.02 * (t - 5.3e-6) ** 0.5 * (1 + 0.01 * rng.normal(size=t.size))] * 1)
    ys = np.stack([np.log(y[0] * (1 + 0.01 * rng.normal(size=t.size))) for _ in range(12)])
    model, lo, hi = LinearModel(None), 5e-6, 5.99e-6
    series = make_series(t, y[0])
    f = ROBUST_SCALE * 0.01
    t0s, betas = profile_many(t, ys, series.s, model, lo, hi, f, "soft_l1")
    for k in range(len(ys)):

        def settled(v, k=k):
            x, off = model.design(t - v)
            beta, z, _ = solve_linear(x, ys[k] - off, series.s, f, "soft_l1", 200)
            return float(rho(z, f, "soft_l1").sum()), beta

        ref = minimize_scalar(
            lambda v: settled(v)[0],
            bounds=(lo, hi),
            method="bounded",
            options={"xatol": 1e-9 * (hi - lo)},
        )
        assert t0s[k] == pytest.approx(ref.x, abs=1e-6 * (hi - lo))
        assert betas[k, 1] == pytest.approx(settled(ref.x)[1][1], abs=1e-8)
        one = make_series(t, np.exp(ys[k]))
        t0, beta, _, _ = profile_fit(one, model, lo, hi, f, "soft_l1")
        assert t0 == pytest.approx(t0s[k], abs=1e-9 * (hi - lo))


@pytest.mark.slow
def test_bootstrap_with_t0_refitted_covers_the_exponent():
    # Seeded Monte Carlo: 200 series of r = 0.02 τ^0.5 (truth n = 0.5) with
    # 0.5-µm noise at 100 kfps, t0 uniform within its frame, the bracket from
    # the statuses (frames_bracket). The 95 % bootstrap interval must hold
    # 0.5 in at least 90 % of series; measured 188/200 = 94 % (Wilson 95 %
    # interval [0.90, 0.97]), and the estimate lay inside its own interval in
    # 200/200. The benchmark asks ≥ 93 % with more series.
    rng = np.random.default_rng(13)
    frame, sigma = 1e-5, 0.5e-6
    t = np.arange(80) * frame
    n_series, covered, inside = 200, 0, 0
    for i in range(n_series):
        t0 = (5 + rng.uniform()) * frame
        status = np.where(t < t0, "before-contact", "ok")
        r = np.where(t > t0, 0.02 * np.clip(t - t0, 0, None) ** 0.5, np.nan)
        r = r + rng.normal(0.0, sigma, t.size)
        lo, hi = frames_bracket(t, status)
        assert lo < t0 < hi
        lo, hi = bracket_before_first_point(lo, hi, t[status == "ok"], t)
        fit = fit_power_law(
            t, r, radius_err=np.full(t.size, sigma), t0_bracket=(lo, hi), bootstrap=100, seed=i
        )
        a, b = fit.exponent_ci
        covered += a <= 0.5 <= b
        inside += a <= fit.exponent <= b
        assert ("exponent" in fit.outside_ci) == (not a <= fit.exponent <= b)
        assert lo <= fit.t0_ci[0] <= fit.t0_ci[1] <= hi
    assert covered >= 0.90 * n_series, (covered, _wilson(covered, n_series))
    assert inside >= 0.95 * n_series, (inside, _wilson(inside, n_series))


def test_bootstrap_of_200_resamples_on_500_points_is_batched_and_quick():
    # The batched refit: 200 resamples with t0 refitted on 500 points in well
    # under the time of 200 scipy refits (measured ≈ 0.5 s of CPU; bound 3 s
    # for a shared machine).
    import time

    rng = np.random.default_rng(1)
    t = np.arange(520) * 1e-6
    r = np.where(t > 12.3e-6, 0.02 * np.clip(t - 12.3e-6, 0, None) ** 0.5, np.nan)
    r = r + rng.normal(0.0, 2e-6, t.size)
    kw = {"radius_err": np.full(t.size, 2e-6), "t0_bracket": (12e-6, 12.99e-6)}
    fit_power_law(t, r, **kw)
    start = time.process_time()
    fit = fit_power_law(t, r, bootstrap=200, **kw)
    assert time.process_time() - start < 3.0
    assert fit.n_resamples == 200 and abs(fit.exponent - 0.5) < 0.005  # synthetic n = 0.5
    assert fit.exponent_ci[0] < fit.exponent < fit.exponent_ci[1]


def _series_with_initial_radius(r0, seed=5):
    rng = np.random.default_rng(seed)
    t = np.arange(300) * 2e-6
    tau = t - 10.7e-6
    r = np.where(tau > 0, r0 + 0.02 * np.clip(tau, 0, None) ** 0.5, np.nan)
    err = np.where(np.isfinite(r), 0.5e-6, np.nan)
    return t, r + rng.normal(0.0, 0.5e-6, t.size), err


def test_finite_initial_radius_is_recovered_and_chosen():
    # Synthetic r = r0 + 0.02 τ^0.5 with r0 = 3 µm (truth): the law with r0
    # wins by the AIC, its interval holds r0 and the exponent's holds 0.5;
    # without r0 the exponent is pulled below 0.5 (the bend at early times).
    t, r, err = _series_with_initial_radius(3e-6)
    kw = {"radius_err": err, "t0_bracket": (10e-6, 11.99e-6)}
    fit = fit_power_law(t, r, initial_radius=True, bootstrap=100, **kw)
    assert fit.initial_radius_fitted
    assert fit.initial_radius_delta_aic > INITIAL_RADIUS_AIC_GAIN
    lo, hi = fit.initial_radius_ci
    assert 0.0 <= lo <= 3e-6 <= hi
    assert fit.exponent_ci[0] <= 0.5 <= fit.exponent_ci[1]
    assert 10e-6 <= fit.t0_ci[0] <= 10.7e-6 <= fit.t0_ci[1] <= 11.99e-6
    assert "r0 refitted" in fit.ci_method
    plain = fit_power_law(t, r, bootstrap=100, **kw)
    assert not plain.initial_radius_fitted and plain.exponent_ci[1] < 0.5


def test_zero_initial_radius_is_not_chosen():
    # Same series with r0 = 0: the extra parameter does not pay for itself.
    t, r, err = _series_with_initial_radius(0.0)
    kw = {"radius_err": err, "t0_bracket": (10e-6, 11.99e-6)}
    fit = fit_power_law(t, r, initial_radius=True, **kw)
    plain = fit_power_law(t, r, **kw)
    assert not fit.initial_radius_fitted and fit.initial_radius == 0.0
    assert fit.initial_radius_delta_aic <= INITIAL_RADIUS_AIC_GAIN
    assert fit.exponent == plain.exponent and fit.exponent_ci == plain.exponent_ci
    assert math.isnan(plain.initial_radius_delta_aic)  # not tried


def test_blend_bootstrap_refits_t0_and_reports_prefactor_intervals():
    # Synthetic harmonic blend 1/r = 1/(5 τ) + 1/(0.0188 τ^0.5) (docs/physics.md
    # §3), truth t0 = 0.4 µs inside a 1-µs frame, 1 % noise.
    rng = np.random.default_rng(7)
    t = np.geomspace(1.2e-6, 1e-3, 150)
    tau = t - 0.4e-6
    r = 1.0 / (1.0 / (5.0 * tau) + 1.0 / (0.0188 * tau**0.5))
    r = r * (1 + 0.01 * rng.normal(size=t.size))
    normal = fit_blend(t, r, early=1.0, late=0.5, sharpness=1.0, t0_bracket=(0.0, 1e-6))
    fit = fit_blend(t, r, early=1.0, late=0.5, sharpness=1.0, t0_bracket=(0.0, 1e-6), bootstrap=60)
    for record in (normal, fit):
        assert record.early_prefactor_ci[0] <= 5.0 <= record.early_prefactor_ci[1]
        assert record.late_prefactor_ci[0] <= 0.0188 <= record.late_prefactor_ci[1]
        assert 0.0 <= record.t0_ci[0] <= record.t0_ci[1] <= 1e-6
    assert "t0 refitted" in fit.ci_method and fit.n_resamples == 60
    assert fit.t0_ci[0] <= 0.4e-6 <= fit.t0_ci[1]


def test_a_fit_whose_origin_shortens_the_span_below_a_third_of_a_decade_is_refused():
    # The rule (dropkin.fitting.MIN_DECADES, 1/3 decade of time since contact) must hold
    # at the fitted t0, not only at the bracket's midpoint where it is first checked:
    # here the midpoint 59.4 gives 0.352 decades over the points after the bracket,
    # an origin near the bracket's start less than 0.333 (found by the fit property
    # test). The radius is constant, so every origin fits alike: the fit may rest
    # anywhere below about 33.5, each giving under a third of a decade.
    t = np.array([764.0, 386.0, *[373.0] * 6, 86.0, 82.0, 66.0, 66.0, 0.0, 0.0])
    fit = fit_power_law(t, np.ones(14), radius_err=np.full(14, 0.125), t0_bracket=(29.7, 89.1))
    assert not fit
    span = re.match(r"too short: the points span ([0-9.]+) decades", fit.message)
    assert span and float(span.group(1)) < 1 / 3
    assert "at the fitted t0" in fit.message
    assert np.log10((764.0 - 59.4) / (373.0 - 59.4)) > 1 / 3 + 0.01  # the midpoint passes
