"""What the fit's bootstrap costs as the series grows (issue 17, finding 12; issue 18).

Not timed: these tests check the algorithm. The linear laws' bootstrap refits
its resamples in blocks whose arrays hold at most ``_BLOCK_VALUES`` values
whatever the number of rows, so its memory does not grow with rows times
resamples; and the blocks change no number (the same draws, the same refits).
"""

import numpy as np
import pytest

import dropkin.fitting._bootstrap as bootstrap
from dropkin.fitting import fit_power_law
from dropkin.fitting._linear import _T0_GRID


def _series(n, seed=4):
    rng = np.random.default_rng(seed)
    frame = 1e-6
    t = np.arange(2, n + 2) * frame
    r = 0.02 * (t - 0.6 * frame) ** 0.5 * (1.0 + 0.005 * rng.normal(size=t.size))
    return t, r, frame


def test_blocks_of_resamples_change_no_number(monkeypatch):
    t, r, frame = _series(300)
    whole = fit_power_law(t, r, t0_bracket=(0.0, frame), bootstrap=60, seed=3)
    # about 7 resamples a block instead of all 60 at once
    monkeypatch.setattr(bootstrap, "_BLOCK_VALUES", 7 * 299 * _T0_GRID)
    assert len(bootstrap.resample_chunks(60, 299)) == 9
    blocks = fit_power_law(t, r, t0_bracket=(0.0, frame), bootstrap=60, seed=3)
    assert blocks.exponent_ci == whole.exponent_ci
    assert blocks.prefactor_ci == whole.prefactor_ci
    assert blocks.t0_ci == whole.t0_ci
    fixed = fit_power_law(t, r, t0=whole.t0, bootstrap=60, seed=3)
    monkeypatch.setattr(bootstrap, "_BLOCK_VALUES", 10**9)
    assert fit_power_law(t, r, t0=whole.t0, bootstrap=60, seed=3).exponent_ci == fixed.exponent_ci


def test_a_hundred_thousand_rows_are_refitted_in_bounded_blocks(monkeypatch):
    t, r, frame = _series(100_000)
    seen = []

    def recording_profile(time, y, s, model, lo, hi, f, loss, **options):
        seen.append(y.shape)
        k = y.shape[0]
        return np.full(k, 0.5 * (lo + hi)), np.zeros((k, model.n_linear))

    monkeypatch.setattr(bootstrap, "profile_many", recording_profile)
    fit = fit_power_law(t, r, t0_bracket=(0.0, frame), bootstrap=200, seed=0)
    assert fit.n_resamples == 200
    assert sum(k for k, _ in seen) == 200
    rows = {n for _, n in seen}
    assert len(rows) == 1 and rows.pop() > 99_000
    # every block's grid of origins holds at most _BLOCK_VALUES values
    assert max(k * n * _T0_GRID for k, n in seen) <= bootstrap._BLOCK_VALUES


@pytest.mark.parametrize("rows", [10, 1_000, 10**6])
def test_blocks_cover_every_resample_once(rows):
    sizes = bootstrap.resample_chunks(200, rows)
    assert sum(sizes) == 200 and min(sizes) >= 1
    assert all(k * rows * _T0_GRID <= bootstrap._BLOCK_VALUES for k in sizes if k > 1)


@pytest.mark.parametrize("rows", [1_000, 100_000])
def test_origin_search_costs_a_bounded_number_of_evaluations_whatever_the_rows(rows):
    # The bootstrap's batched origin search: the grid of _T0_GRID origins
    # ranked at once, then Newton steps in (β, t0), each a pass over the
    # points (and one per halving). Each series costs at most 30 passes,
    # counting the grid as _T0_GRID of them (measured: 29.7 at 10^3 rows,
    # 25.0 at 10^5; the golden section of the first version took 41
    # evaluations of 8 passes each), the same bound at 10^3 and 10^5 rows;
    # and the fit of each series alone (profile_fit) finds the origin the
    # batch found, to 1e-4 of the bracket. The search's minimum is checked
    # against scipy in test_fit_t0.py and test_origin_refit.py.
    from dropkin.fitting._core import ROBUST_SCALE, make_series
    from dropkin.fitting._linear import LinearModel, profile_fit, profile_many

    t, r, frame = _series(rows, seed=7)
    rng = np.random.default_rng(8)
    series = make_series(t, r)
    ys = np.stack([series.y + 0.005 * rng.normal(size=rows) for _ in range(6)])
    model, lo, hi, f = LinearModel(None), 0.0, frame, ROBUST_SCALE * 0.005
    counted = []
    t0s, _ = profile_many(t, ys, series.s, model, lo, hi, f, "soft_l1", counter=counted)
    per_series = sum(counted) / len(ys)
    assert _T0_GRID < per_series <= 30
    for k in (0, 5):
        one = make_series(t, np.exp(ys[k]))
        t0, _, _, _ = profile_fit(one, model, lo, hi, f, "soft_l1")
        assert t0s[k] == pytest.approx(t0, abs=1e-4 * (hi - lo))


def test_threads_change_no_number(monkeypatch):
    # The blocks of resamples are refitted on several threads; each resample's
    # refit is its own, so the intervals are the same to the last digit.
    import threading

    t, r, frame = _series(2000)
    threads = set()
    profile = bootstrap.profile_many

    def noting_thread(*args, **kwargs):
        threads.add(threading.get_ident())
        return profile(*args, **kwargs)

    monkeypatch.setattr(bootstrap, "profile_many", noting_thread)
    fits = []
    for given in ("1", "3"):
        monkeypatch.setenv(bootstrap.THREADS_VARIABLE, given)
        threads.clear()
        fits.append(fit_power_law(t, r, t0_bracket=(0.0, frame), bootstrap=60, seed=3))
        assert len(threads) == int(given)
    one, three = fits
    assert three.exponent_ci == one.exponent_ci
    assert three.prefactor_ci == one.prefactor_ci
    assert three.t0_ci == one.t0_ci


def test_the_threads_are_the_environments_or_at_most_two_cores(monkeypatch):
    import os

    monkeypatch.delenv(bootstrap.THREADS_VARIABLE, raising=False)
    cores = len(os.sched_getaffinity(0))
    assert bootstrap.fit_threads(10**7) == min(2, cores)
    assert bootstrap.fit_threads(100) == 1  # too small to share
    monkeypatch.setenv(bootstrap.THREADS_VARIABLE, "4")
    assert bootstrap.fit_threads(10**7) == 4
    monkeypatch.setenv(bootstrap.THREADS_VARIABLE, "none")
    assert bootstrap.fit_threads(10**7) == min(2, cores)
