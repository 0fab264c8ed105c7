"""The collective prefactor of a master curve against statsmodels' meta-analysis."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest

from dropkin.campaign._pooling import pool_log_prefactors
from dropkin.errors import DropkinError

meta = pytest.importorskip("statsmodels.stats.meta_analysis")

# statsmodels warns that per-sample intervals use the normal law; those rows
# are not compared here.
pytestmark = pytest.mark.filterwarnings(
    "ignore::statsmodels.tools.sm_exceptions.InvalidTestWarning"
)


@pytest.mark.parametrize(
    ("prefactors", "se"),
    [
        # Spread larger than the errors: Hartung-Knapp's interval is the wider.
        ([0.99, 1.0, 0.997, 1.01, 0.985], [0.005, 0.003, 0.003, 0.004, 0.006]),
        # Spread smaller than the errors: DerSimonian-Laird's is the wider.
        ([0.998, 0.9985, 0.9979, 0.9981], [0.01, 0.02, 0.015, 0.012]),
        ([1.3, 1.1, 1.6], [0.05, 0.08, 0.1]),
    ],
)
def test_pooling_matches_statsmodels_combine_effects(prefactors, se):
    y, s = np.log(prefactors), np.asarray(se)
    ours = pool_log_prefactors(y, s)
    # Reference: statsmodels.stats.meta_analysis.combine_effects, DerSimonian-
    # Laird tau^2; its "random effect wls" row is the Hartung-Knapp estimate.
    with warnings.catch_warnings():
        # When Q < k - 1 it takes the root of a negative tau^2 in its
        # unclipped "random effect" variant first; the rows compared are clipped.
        warnings.simplefilter("ignore", RuntimeWarning)
        ref = meta.combine_effects(y, s**2, method_re="dl", use_t=True)
        frame = ref.summary_frame()
    assert ours.q == pytest.approx(ref.q, rel=1e-9)
    if ref.tau2 > 0:
        assert ours.tau2 == pytest.approx(ref.tau2, rel=1e-9)
        dl, hk = frame.loc["random effect"], frame.loc["random effect wls"]
    else:
        # statsmodels leaves a negative tau^2 as it is; DerSimonian & Laird
        # (1986) truncate it at 0, which makes the random-effects estimate the
        # fixed-effect one.
        assert ours.tau2 == 0.0
        dl, hk = frame.loc["fixed effect"], frame.loc["fixed effect wls"]
    assert ours.log_value == pytest.approx(dl["eff"], abs=1e-12)
    wider = hk if hk["sd_eff"] >= dl["sd_eff"] else dl
    assert ours.log_se == pytest.approx(wider["sd_eff"], rel=1e-9)
    assert ours.log_ci[0] == pytest.approx(wider["ci_low"], rel=1e-9, abs=1e-12)
    assert ours.log_ci[1] == pytest.approx(wider["ci_upp"], rel=1e-9, abs=1e-12)


def test_one_recording_keeps_its_own_interval():
    p = pool_log_prefactors([math.log(1.2)], [0.05])
    assert p.value == pytest.approx(1.2)
    # Normal 95 % interval, z = 1.959964 (scipy.stats.norm.ppf(0.975)).
    assert p.log_ci[1] - p.log_value == pytest.approx(1.959964 * 0.05, rel=1e-6)


@pytest.mark.parametrize(
    ("y", "se"),
    [([], []), ([0.1, 0.2], [0.1]), ([0.1], [0.0]), ([float("nan")], [0.1]), ([0.1], [-1])],
)
def test_pooling_refuses_unusable_input(y, se):
    with pytest.raises(DropkinError):
        pool_log_prefactors(y, se)
