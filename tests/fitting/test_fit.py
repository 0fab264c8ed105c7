"""Power-law and log-law fits with an unknown origin, against numpy, scipy and real orbits."""

import math

import numpy as np
import pytest

from dropkin.errors import FitError
from dropkin.fitting import (
    MIN_POINTS,
    LawShape,
    fit_log_law,
    fit_power_law,
    guess_power_law,
    viscous_log_law,
)

# Eight planets: semi-major axis (10^6 km, the "older" column) and orbital
# period (days). Source: NASA Planetary Fact Sheet, via the two third-party copies
# named in docs/physics.md §6 (status V there).
PLANETS = {
    "Mercury": (57.9, 88.0),
    "Venus": (108.2, 224.7),
    "Earth": (149.6, 365.2),
    "Mars": (227.9, 687.0),
    "Jupiter": (778.6, 4331.0),
    "Saturn": (1433.5, 10747.0),
    "Uranus": (2872.5, 30589.0),
    "Neptune": (4495.1, 59800.0),
}
# The newer distance column of the same fact sheet (docs/physics.md §6).
NEWER_A = {"Mars": 228.0, "Jupiter": 778.5, "Saturn": 1432.0, "Uranus": 2867.0, "Neptune": 4515.0}


def orbits(newer=False):
    a = np.array([NEWER_A.get(p, v[0]) if newer else v[0] for p, v in PLANETS.items()])
    period = np.array([v[1] for v in PLANETS.values()])
    return period * 86400.0, a * 1e9  # s, m


def test_kepler_third_law_from_the_planets():
    # Source: docs/physics.md §6 — suggested assertions |n - 2/3| < 0.002 and, at
    # fixed n = 2/3, K within 0.5 % of 1.50e6 m s^-2/3 (the 0.2–0.3 % spread
    # is the table's rounding). t0 is fixed at 0 (periods count from zero).
    for newer in (False, True):
        period, a = orbits(newer)
        free = fit_power_law(period, a, t0=0.0)
        assert free, free.message
        assert abs(free.exponent - 2.0 / 3.0) < 0.002
        fixed = fit_power_law(period, a, t0=0.0, exponent=2.0 / 3.0)
        assert fixed.prefactor == pytest.approx(1.50e6, rel=0.005)
        # The free-fit prefactor moves with the exponent (docs/physics.md §4.8):
        # within 3 % of 1.50e6 as §6 suggests, and strongly correlated.
        assert free.prefactor == pytest.approx(1.50e6, rel=0.03)
        assert abs(free.correlation_raw) > 0.9
        # Physics check: K = (GM_sun / 4π²)^(1/3) = 1.4980e6 with GM_sun =
        # 1.32712440018e20 m³ s⁻² — a value from memory (M), so a wide 1 %.
        k_kepler = (1.32712440018e20 / (4.0 * math.pi**2)) ** (1.0 / 3.0)
        assert fixed.prefactor == pytest.approx(k_kepler, rel=0.01)


def test_planets_least_squares_is_numpys_log_log_polyfit():
    # Reference: numpy.polyfit of ln a on ln T; docs/physics.md §6 computed
    # n = 0.66746 (older column) this way (C, printed to 5 digits: 5e-6).
    period, a = orbits()
    fit = fit_power_law(period, a, t0=0.0, loss="linear")
    n_ref, lna_ref = np.polyfit(np.log(period), np.log(a), 1)
    assert fit.exponent == pytest.approx(n_ref, rel=1e-9)
    assert fit.prefactor == pytest.approx(math.exp(lna_ref), rel=1e-9)
    assert abs(n_ref - 0.66746) < 5e-6


def test_exact_power_law_with_known_origin_equals_numpy_polyfit():
    # Reference: numpy.polyfit(log(t - t0), log r, 1) on an exact power law;
    # the issue asks for agreement to 1e-6 (both are exact up to rounding).
    t0 = 2.7e-5
    t = np.linspace(3e-5, 5e-3, 300)
    r = 0.0197 * (t - t0) ** 0.5
    fit = fit_power_law(t, r, t0=t0)
    n_ref, lna_ref = np.polyfit(np.log(t - t0), np.log(r), 1)
    assert fit.exponent == pytest.approx(n_ref, abs=1e-6)
    assert math.log(fit.prefactor) == pytest.approx(lna_ref, abs=1e-6)
    assert fit.t0 == t0 and not fit.t0_free


def centred_median(r, half=4):
    """Reference for the weights' radius: the median of each value and up to `half`
    neighbours on each side, as many on both (docs/physics.md §4.8), written plainly."""
    n = len(r)
    return np.array(
        [
            np.median(r[i - min(half, i, n - 1 - i) : i + min(half, i, n - 1 - i) + 1])
            for i in range(n)
        ]
    )


def test_weighted_least_squares_equals_weighted_polyfit():
    # Reference: numpy.polyfit with w = 1/σ(ln r) = r̃/σ_r on noisy seeded data, r̃ the
    # centred running median of r (loss="linear" is plain weighted least squares;
    # agreement to rounding, 1e-9).
    rng = np.random.default_rng(11)
    t = np.linspace(1e-4, 1e-2, 400)
    sigma = 2e-6
    r = 0.01 * t**0.5 + rng.normal(0.0, sigma, t.size)
    fit = fit_power_law(t, r, radius_err=np.full(t.size, sigma), loss="linear")
    n_ref, lna_ref = np.polyfit(np.log(t), np.log(r), 1, w=centred_median(r) / sigma)
    assert fit.exponent == pytest.approx(n_ref, rel=1e-9)
    assert math.log(fit.prefactor) == pytest.approx(lna_ref, rel=1e-9)


def test_free_origin_matches_scipy_least_squares_on_all_three_parameters():
    # Reference: scipy.optimize.least_squares fitting (ln A, n, t0) directly;
    # our fit profiles t0 out. Same minimum: n to 1e-6, t0 to 1e-4 of a frame.
    from scipy.optimize import least_squares

    rng = np.random.default_rng(5)
    frame = 1e-6
    t = np.arange(8, 600) * frame
    t0_true = 4.4 * frame
    r = 0.02 * (t - t0_true) ** 0.5 * (1.0 + 0.01 * rng.normal(size=t.size))
    lo, hi = 4.0 * frame, 5.0 * frame
    fit = fit_power_law(t, r, t0_bracket=(lo, hi), loss="linear")

    def residuals(p):
        return np.log(r) - (p[0] + p[1] * np.log(t - p[2]))

    ref = least_squares(
        residuals,
        [math.log(0.02), 0.5, 4.5 * frame],
        bounds=([-np.inf, 0, lo], [np.inf, 2, hi]),
        x_scale=[1.0, 1.0, frame],
        xtol=1e-14,
        ftol=1e-14,
        gtol=1e-14,
    )
    assert fit.exponent == pytest.approx(ref.x[1], abs=1e-6)
    assert fit.t0 == pytest.approx(ref.x[2], abs=1e-4 * frame)


def test_origin_inside_its_bracket_is_recovered_from_an_exact_law():
    # Analytic: r = A (t - t0)^n with t0 anywhere inside the frame; the fit
    # must find it (1e-6 of a frame) and n (1e-8), well past rounding.
    frame = 1e-5
    t = np.arange(1, 500) * frame
    for u in (0.1, 0.5, 0.93):
        t0 = u * frame
        r = 3.0 * (t - t0) ** (1.0 / 3.0)
        fit = fit_power_law(t, r, t0_bracket=(0.0, frame))
        assert fit.t0 == pytest.approx(t0, abs=1e-6 * frame)
        assert fit.exponent == pytest.approx(1.0 / 3.0, abs=1e-8)


def test_pivot_decorrelates_prefactor_and_exponent():
    # docs/physics.md §4.8: at t_p = exp(weighted mean ln τ) the errors of ln r_p
    # and n are uncorrelated by construction (t0 fixed: exact, 1e-9), while
    # ln A and n are correlated (0.7 here: the times sit far from t = 1 s).
    rng = np.random.default_rng(3)
    t = np.linspace(1e-3, 1.0, 300)
    r = 2.0 * t**0.4 * (1.0 + 0.02 * rng.normal(size=t.size))
    fit = fit_power_law(t, r, radius_err=0.02 * r, loss="linear")
    assert abs(fit.correlation_pivot) < 1e-9
    assert abs(fit.correlation_raw) > 0.5
    assert fit.pivot_radius == pytest.approx(fit.prefactor * fit.pivot_time**fit.exponent)
    w = (centred_median(r) / (0.02 * r)) ** 2
    assert fit.pivot_time == pytest.approx(math.exp(np.sum(w * np.log(t)) / np.sum(w)))


def test_robust_loss_resists_outliers():
    # Seeded synthetic: 5 % of the points off by +30 %. The robust fit stays
    # within 0.01 of n = 0.5 (a few standard errors of 0.001); plain least
    # squares is pulled further than that.
    rng = np.random.default_rng(8)
    t = np.linspace(1e-4, 1e-2, 500)
    r = 0.02 * t**0.5 * (1.0 + 0.005 * rng.normal(size=t.size))
    bad = rng.random(t.size) < 0.05
    r[bad] *= 1.3
    err = 0.005 * 0.02 * t**0.5
    robust = fit_power_law(t, r, radius_err=err)
    plain = fit_power_law(t, r, radius_err=err, loss="linear")
    assert abs(robust.exponent - 0.5) < 0.01
    assert abs(plain.exponent - 0.5) > abs(robust.exponent - 0.5)


def test_bootstrap_interval_covers_the_truth():
    # Seeded synthetic bank of 40 noisy power laws, t0 fixed: the 95 %
    # residual-bootstrap interval should contain n = 0.5 about 95 % of the
    # time; at least 34 of 40 (binomial, p = 0.95: P(X < 34) ≈ 1.4 %).
    rng = np.random.default_rng(21)
    t = np.linspace(1e-4, 1e-2, 200)
    covered = 0
    for i in range(40):
        sigma = 1e-5
        r = 0.02 * t**0.5 + rng.normal(0.0, sigma, t.size)
        fit = fit_power_law(t, r, radius_err=np.full(t.size, sigma), bootstrap=200, seed=i)
        lo, hi = fit.exponent_ci
        covered += lo <= 0.5 <= hi
        assert fit.n_resamples == 200 and "bootstrap" in fit.ci_method
    assert covered >= 34, covered


def test_bootstrap_refits_the_origin_and_reports_its_interval():
    # Issue 13: every resample refits t0 inside the bracket. Truth t0 = 0.6
    # frame (synthetic); the free-t0 interval of n is wider than with t0
    # fixed (the contact uncertainty is carried), t0's interval lies in the
    # bracket and holds the truth, and nothing is widened to hold the estimate.
    rng = np.random.default_rng(2)
    frame = 1e-6
    t = np.arange(2, 300) * frame
    r = 0.02 * (t - 0.6 * frame) ** 0.5 * (1.0 + 0.005 * rng.normal(size=t.size))
    free = fit_power_law(t, r, t0_bracket=(0.0, frame), bootstrap=100, seed=1)
    fixed = fit_power_law(t, r, t0=free.t0, bootstrap=100, seed=1)
    assert np.diff(free.exponent_ci)[0] > np.diff(fixed.exponent_ci)[0]
    assert "t0 refitted" in free.ci_method and "t0 fixed" in fixed.ci_method
    assert 0.0 <= free.t0_ci[0] <= 0.6 * frame <= free.t0_ci[1] <= frame
    assert fixed.t0_ci == (free.t0, free.t0)
    # Normal approximation: t0 ± 1.96 σ cut to the bracket.
    normal = fit_power_law(t, r, t0_bracket=(0.0, frame))
    lo, hi = normal.t0 - 1.959964 * normal.t0_err, normal.t0 + 1.959964 * normal.t0_err
    assert normal.t0_ci == pytest.approx((max(lo, 0.0), min(hi, frame)), rel=1e-6)


def test_log_law_recovers_its_prefactor_and_reports_the_apparent_exponent():
    # Analytic: ELS law r = -(1/π) u τ ln(uτ/R) (Eggers, Lister & Stone 1999;
    # docs/physics.md §2 A1) with glycerol-like u = 0.045 m/s, R = 1 mm. C to 1e-6;
    # the reported exponent is the slope numpy.polyfit finds for the same
    # exact law (1e-9), inside the range of the law's local exponent.
    t = np.geomspace(1e-4, 5e-3, 80)
    r = viscous_log_law(t, 1.0 / math.pi, capillary_speed=0.045, radius=1e-3)
    fit = fit_log_law(t, r, capillary_speed=0.045, drop_radius=1e-3)
    assert fit.prefactor / 0.045 == pytest.approx(1.0 / math.pi, rel=1e-6)
    slope = np.polyfit(np.log(t), np.log(r), 1)[0]
    assert fit.exponent == pytest.approx(slope, rel=1e-9)
    local = 1.0 + 1.0 / np.log(0.045 * t[[-1, 0]] / 1e-3)
    assert local[0] < fit.exponent < local[1]
    assert fit.law == "log" and fit.exponent_fixed


def test_log_law_shape_local_exponent_is_the_analytic_one():
    # docs/physics.md §2 A1: d ln r / d ln t = 1 + 1/ln(γt/(ηR)); 0.89, 0.86,
    # 0.78 at γt/(ηR) = 1e-4, 1e-3, 1e-2 (C, printed to 2 digits: 0.005).
    shape = LawShape(1.0, True, capillary_speed=1.0, drop_radius=1.0)
    got = shape.slope(np.array([1e-4, 1e-3, 1e-2]))
    assert got == pytest.approx([0.89, 0.86, 0.78], abs=0.005)


def test_first_guess_is_the_unweighted_log_log_polyfit():
    # Reference: numpy.polyfit on ln r vs ln(t - t0) (the project's style: the first
    # guess is separate from the fit).
    rng = np.random.default_rng(4)
    t = np.geomspace(1.0, 100.0, 30)
    r = 2.0 * (t - 0.5) ** 0.7 * (1.0 + 0.01 * rng.normal(size=t.size))
    a, n = guess_power_law(t, r, t0=0.5)
    n_ref, lna_ref = np.polyfit(np.log(t - 0.5), np.log(r), 1)
    assert n == pytest.approx(n_ref, rel=1e-12) and a == pytest.approx(math.exp(lna_ref))


def test_fits_the_data_cannot_support_are_falsy_and_say_why():
    t = np.linspace(1.0, 100.0, 50)
    r = t**0.5
    few = fit_power_law(t[: MIN_POINTS - 1], r[: MIN_POINTS - 1])
    assert not few and few.message == "too few points: 7 after contact, at least 8 needed"
    short = fit_power_law(np.linspace(10.0, 20.0, 30), np.linspace(10.0, 20.0, 30) ** 0.5)
    # log10(20/10) = 0.30103, shown rounded down to 4 digits
    assert (
        not short and "at least 1/3 decade" in short.message and "0.3010 decades" in short.message
    )
    before = fit_power_law(t, r, t0_bracket=(200.0, 210.0))
    assert not before and before.message.startswith("all 50 usable points lie before contact")
    logged = fit_log_law(t[:3], r[:3], capillary_speed=1.0, drop_radius=1e3)
    assert not logged and "too few points" in logged.message


def test_bad_calls_raise_fit_error():
    t = np.linspace(1.0, 10.0, 6)
    with pytest.raises(FitError, match="radius: has 5 values, time has 6"):
        fit_power_law(t, t[:5])
    with pytest.raises(FitError, match="radius_err: has 2 values, time has 6"):
        fit_power_law(t, t, radius_err=[1.0, 2.0])
    with pytest.raises(FitError, match="lo <= hi"):
        fit_power_law(t, t, t0_bracket=(2.0, 1.0))
    with pytest.raises(FitError, match="not both"):
        fit_power_law(t, t, t0=0.0, t0_bracket=(0.0, 1.0))
    with pytest.raises(FitError, match="loss = 'huber': is not a known loss"):
        fit_power_law(t, t, loss="huber")
    with pytest.raises(FitError, match="bootstrap = -1"):
        fit_power_law(t, t, bootstrap=-1)
    with pytest.raises(FitError, match="capillary_speed"):
        fit_log_law(t, t, capillary_speed=-1.0, drop_radius=1e-3)
    with pytest.raises(FitError, match="one-dimensional"):
        fit_power_law(np.ones((2, 3)), np.ones((2, 3)))


def test_weights_from_the_neighbours_radius_keep_small_noisy_radii_from_biasing_n():
    # Synthetic τ^½ law (invented): 40 series whose first frames are resolved at
    # 3 px with 0.3–1 px of noise, t0 known. Weighting each point by σ/r of its
    # own measured r favoured the points the noise made larger and put the mean
    # exponent 0.0034 low (3.4 times one series' standard error); with r the
    # median of its neighbours it is 0.0007 high (0.66 of it), below one.
    errors, se = [], []
    for seed in range(40):
        rng = np.random.default_rng(seed)
        pixel = 20e-6
        sigma = rng.uniform(0.3, 1.0) * pixel
        tau = np.arange(1, 5001) * 1.25e-7
        r_true = 0.0197 * np.sqrt(tau)
        ok = r_true >= 3 * pixel
        r = r_true + rng.normal(0.0, sigma, tau.size)
        fit = fit_power_law(tau[ok], r[ok], radius_err=np.full(ok.sum(), sigma), t0=0.0)
        errors.append(fit.exponent - 0.5)
        se.append(fit.exponent_err)
    assert abs(np.mean(errors)) < np.mean(se)
