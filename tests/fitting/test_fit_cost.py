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
