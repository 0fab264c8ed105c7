"""The generator of benchmarks/coverage.py: published law values, statuses, t0, seeds.

References: the worked values of docs/physics.md (§2 A1 local exponents of the
ELS law, §2 A3 water neck radii, §3 the harmonic blend at the crossover) and
values computed by hand from the laws' formulas (each stated beside its check).
"""

import importlib.util
import math
import sys
from pathlib import Path

import numpy as np
import pytest

SCRIPT = Path(__file__).resolve().parents[2] / "benchmarks" / "coverage.py"


@pytest.fixture(scope="module")
def cov():
    spec = importlib.util.spec_from_file_location("coverage_benchmark", SCRIPT)
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # dataclasses look their module up by name
    spec.loader.exec_module(module)
    yield module
    sys.modules.pop(spec.name, None)


def test_inertial_neck_matches_the_worked_water_values(cov):
    # docs/physics.md §2 A3: water, R = 1 mm, D0 = 1: r = 164 µm at 100 µs, 520 µm at 1 ms.
    r = cov.inertial_coalescence(np.array([1e-4, 1e-3]), gamma=0.0727, rho=998.0, R=1e-3, D0=1)
    assert r == pytest.approx([164e-6, 520e-6], rel=3e-3)
    # Spreading has the same form (§2 C1); by hand with C = 1.2: 1.2 × 164.3 µm = 197.2 µm.
    a = cov.inertial_spreading(1e-4, gamma=0.0727, rho=998.0, R=1e-3, C=1.2)
    assert float(a) == pytest.approx(197.2e-6, rel=1e-3)


def test_els_law_values_and_local_exponents(cov):
    law = {"gamma": 0.0634, "eta": 1.414, "R": 1e-3, "C": 1 / math.pi}
    tau_v = 1.414 * 1e-3 / 0.0634
    # By hand: x = γτ/(ηR) = 0.01 → r/R = 0.01 ln(100)/π = 0.01 × 4.605170/3.141593 = 0.0146587.
    assert float(cov.els_log_law(0.01 * tau_v, **law)) / 1e-3 == pytest.approx(0.0146587, rel=1e-5)
    # docs/physics.md §2 A1: the law peaks at r/R = 1/(eπ) = 0.11709 at x = 1/e.
    x = np.linspace(0.2, 0.6, 4001)
    r = cov.els_log_law(x * tau_v, **law) / 1e-3
    assert r.max() == pytest.approx(1 / (math.e * math.pi), rel=1e-6)
    assert x[np.argmax(r)] == pytest.approx(1 / math.e, abs=1e-3)
    # §2 A1: local exponent 0.89, 0.86, 0.78, 0.57 at x = 1e-4 … 1e-1 (two digits).
    for x0, expected in ((1e-4, 0.89), (1e-3, 0.86), (1e-2, 0.78), (1e-1, 0.57)):
        pair = cov.els_log_law(np.array([x0, x0 * 1.0001]) * tau_v, **law)
        slope = math.log(pair[1] / pair[0]) / math.log(1.0001)
        assert slope == pytest.approx(expected, abs=0.006)


def test_linear_outer_and_tanner_values_by_hand(cov):
    # ILV, glycerol: γ/η = 0.0634/1.414 = 0.0448373 m/s; at 1 ms r = 44.8373 µm.
    r = cov.linear_viscous(1e-3, gamma=0.0634, eta=1.414, C=1.0)
    assert float(r) == pytest.approx(44.8373e-6, rel=1e-5)
    # Outer-viscous: 1.2 (0.0212 × 1e-3 × 1e-3 / 0.97)^½ = 1.2 × 1.47837e-4 = 1.77404e-4 m.
    r = cov.outer_viscous(1e-3, gamma=0.0212, eta_out=0.97, R=1e-3, C1=1.2)
    assert float(r) == pytest.approx(1.77404e-4, rel=1e-5)
    # Tanner, 100 cSt oil, R = 0.5 mm, t = 1 s: V = 5.235988e-10 m³, V³ = 1.435440e-28,
    # × γ/η = 0.216580 → 3.10887e-29; ^(1/10) = 1.41017e-3; × 0.83 = 1.17044e-3 m.
    a = cov.tanner(np.array([1.0, 10.0]), gamma=0.0209, eta=0.0965, R=0.5e-3, C=0.83)
    assert a[0] == pytest.approx(1.17044e-3, rel=1e-4)
    assert a[1] / a[0] == pytest.approx(10**0.1, rel=1e-12)  # a¹⁰ ∝ t


def test_blend_gives_half_the_common_radius_at_the_crossover(cov):
    # docs/physics.md §3: t_c = (D0/C_v)² Oh² τ_i, r_c = (D0²/C_v) Oh R; the blend gives r_c/2.
    g, eta, rho, R, d0 = 0.0658, 0.1002, 1221.0, 2e-3, 1.2
    oh = eta / math.sqrt(rho * g * R)
    t_c = d0**2 * oh**2 * math.sqrt(rho * R**3 / g)
    r_c = d0**2 * oh * R
    law = {"gamma": g, "eta": eta, "rho": rho, "R": R, "C": 1.0, "D0": d0}
    assert float(cov.crossover_ilv_inertial(t_c, **law)) == pytest.approx(r_c / 2, rel=1e-9)
    # Far before it the blend is the linear law, within r_v/r_i (§3).
    early = float(cov.crossover_ilv_inertial(1e-3 * t_c, **law))
    assert early == pytest.approx(g / eta * 1e-3 * t_c, rel=0.04)


@pytest.mark.parametrize("name", ["inertial", "ilv", "els", "inertial-spreading", "crossover"])
def test_series_statuses_t0_and_noise(cov, name):
    case = cov.build_cases()[name]
    for s in cov.bank(case, 4, seed=3):
        status = list(s.status)
        order = {"before-contact": 0, "unresolved": 1, "ok": 2}
        ranks = [order[x] for x in status]
        assert ranks == sorted(ranks)
        assert status.count("ok") >= 30
        lo, hi = s.bracket
        assert lo < s.t0 < hi and hi - lo == pytest.approx(1 / case.fps)
        before = s.time <= s.t0
        assert [x == "before-contact" for x in status] == list(before)
        assert s.time[before][-1] == pytest.approx(lo) and s.time[~before][0] == pytest.approx(hi)
        assert np.all(np.isnan(s.radius[before]))
        assert 0.3 <= s.sigma / case.pixel <= 1.0
        assert np.all(s.radius_err[~before] == s.sigma)
        # Resolved from the first ok frame on: gap r²/R ≥ 3 blurs of 1.3 px (README.md).
        ok = np.array(status) == "ok"
        r_true = case.radius(np.clip(s.time - s.t0, 0.0, None))
        if case.geometry == "coalescence":
            gap_px = r_true**2 / case.sample["radius"] / case.pixel
            assert gap_px[ok].min() >= 3.9 and np.all(gap_px[~ok & ~before] < 3.9)
        # The noise is the stated σ: normalised residuals have a standard deviation near 1.
        z = (s.radius[~before] - r_true[~before]) / s.sigma
        assert 0.6 < z.std() < 1.4


def test_t0_is_uniform_within_its_frame(cov):
    case = cov.build_cases()["inertial"]
    fractions = [(s.t0 - s.bracket[0]) * case.fps for s in cov.bank(case, 40, seed=1)]
    assert 0.0 < min(fractions) and max(fractions) < 1.0
    assert 0.25 < float(np.mean(fractions)) < 0.75  # uniform: mean ½, sd of mean 0.046


def test_bank_is_reproducible_from_its_seed(cov):
    case = cov.build_cases()["tanner"]
    first, again, other = (cov.bank(case, 3, seed=s) for s in (7, 7, 8))
    for a, b in zip(first, again, strict=True):
        assert a.t0 == b.t0 and a.status == b.status
        np.testing.assert_array_equal(a.radius, b.radius)
    assert [a.t0 for a in first] != [c.t0 for c in other]


def test_log_law_true_exponent_is_the_local_exponent_on_a_short_window(cov):
    # A polyfit over a narrow window around x = 1e-2 returns the local exponent 0.78 (§2 A1).
    case = cov.build_cases()["els"]
    side = case.sides[0]
    tau_v = 1.414 * case.sample["radius"] / 0.0634
    times = np.linspace(0.99e-2, 1.01e-2, 21) * tau_v
    assert cov.true_exponent(case, side, times, 0.0, None) == pytest.approx(0.78, abs=0.006)
    inertial = cov.build_cases()["inertial"]
    assert cov.true_exponent(inertial, inertial.sides[0], times, 0.0, None) == 0.5


def test_apparent_exponent_with_t0_free_in_the_bracket(cov):
    # A power law r = 2 τ^0.5 (exact): t0 free in a bracket around the truth is found again,
    # so the apparent exponent is the law's; a bracket of zero width is the fixed-t0 fit.
    times = np.linspace(1e-4, 1e-2, 50) + 3e-5
    law = lambda tau: 2.0 * tau**0.5  # noqa: E731
    free = cov.apparent_exponent(law, times, 3e-5, (0.0, 6e-5))
    assert free == pytest.approx(0.5, abs=1e-4)
    case = cov.build_cases()["els"]
    tau_v = 1.414 * case.sample["radius"] / 0.0634
    times = np.linspace(1e-3, 5e-3, 40) * tau_v + 1e-4
    fixed = cov.apparent_exponent(case.radius, times, 1e-4, None)
    pinned = cov.apparent_exponent(case.radius, times, 1e-4, (1e-4, 1e-4 * (1 + 1e-12)))
    assert pinned == pytest.approx(fixed, abs=2e-3)
    # With t0 free the fit can bend the power law toward the log law: never a worse fit,
    # and here a different exponent (the reason the free fit's truth is computed this way).
    assert cov.apparent_exponent(case.radius, times, 1e-4, (0.0, 2e-4)) != pytest.approx(fixed)


def test_information_ratio_limits(cov):
    # Cramér–Rao (Kay 1993, ch. 3): a bracket of (almost) zero width is a known t0, ratio 1;
    # a wider bracket can only lose information, so the ratio grows with its width.
    tau = np.arange(5, 65) * 1e-5 + 0.5e-5
    theta = (math.log(0.0197), 0.5)
    ratios = [cov.information_ratio(theta, tau, 3e-6, w) for w in (1e-9, 1e-5, 1e-4, 1e-2)]
    assert ratios[0] == pytest.approx(1.0, abs=1e-3)
    assert all(a < b for a, b in zip(ratios, ratios[1:], strict=False))
    # One frame's bracket at 1e5 fps for a water-like neck: well above 1.5 (the goal).
    assert ratios[1] > 1.5
