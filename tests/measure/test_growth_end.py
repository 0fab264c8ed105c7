"""The end of the growth phase, on radius series whose truth is known.

The series are sampled from laws of :mod:`dropkin.synth` (in pixels, one
frame per unit of time) with Gaussian noise of 0.05 px (numpy's generator):
the t^(1/2) law (J. Fluid Mech. 401, 293 (1999)) and the linear-to-t^(1/2)
crossover by the harmonic blend (Phys. Rev. Lett. 106, 114501 (2011)) must
give no end while the neck stays below 0.9 R; a ringing tail
(``synth.ringing_tail``) must give an end no earlier than the truth's and
within 0.1 decades of time after it (a factor 1.25).
"""

import numpy as np
import pytest

from dropkin import synth
from dropkin.measure._growth import GrowthEnd, growth_end, mark_after_growth

R = 40.0
T = np.arange(400.0)
T0 = 3.4


def _noisy(law, seed=1):
    r = law(T - T0)
    rng = np.random.default_rng(seed)
    r = np.where(r > 0, r + rng.normal(0.0, 0.05, T.size), np.nan)
    status = np.where(T > T0, "ok", "before-contact")
    return r, np.full(T.size, 0.05), list(status)


def test_a_growing_neck_has_no_end():
    law = synth.power_law(prefactor=1.7, exponent=0.5)  # 34 px at the last frame
    r, err, status = _noisy(law)
    assert growth_end(T, r, err, status, T0, drop_radius=R) is None


def test_a_crossover_is_not_an_end():
    linear = synth.power_law(prefactor=2.0, exponent=1.0)
    half = synth.power_law(prefactor=1.7, exponent=0.5)
    r, err, status = _noisy(synth.harmonic_blend(linear, half))
    assert growth_end(T, r, err, status, T0, drop_radius=R) is None


def test_the_neck_near_the_drop_radius_ends_the_growth():
    law = synth.power_law(prefactor=2.0, exponent=0.5)  # 0.9 R = 36 px at t = 324
    r, err, status = _noisy(law)
    end = growth_end(T, r, err, status, T0, drop_radius=R)
    assert end.method.startswith("the neck passes 0.9 of the drop radius")
    assert abs(T[end.index] - T0 - 324.0) <= 3
    # Footprints seen from below (no drop radius given): no such sign.
    assert growth_end(T, r, err, status, T0) is None


@pytest.mark.parametrize("rest", [0.8, 0.9, 1.0])
def test_a_ringing_tail_ends_the_growth(rest):
    base = synth.power_law(prefactor=1.7, exponent=0.5)
    end_time = 100.0
    r, err, status = _noisy(synth.ringing_tail(base, end_time=end_time, rest_ratio=rest))
    end = growth_end(T, r, err, status, T0, drop_radius=R)
    assert end.method.startswith("the neck rings")
    assert end_time <= T[end.index] - T0 <= 1.25 * end_time  # within 0.1 decades
    marked = mark_after_growth(status, end)
    assert marked[end.index] == "after-growth" and marked[end.index - 1] == "ok"
    assert marked.count("ok") == end.index - int(np.ceil(T0))


def test_one_misread_frame_is_not_ringing():
    law = synth.power_law(prefactor=1.7, exponent=0.5)
    r, err, status = _noisy(law)
    r[150] -= 3.0
    r[152] -= 3.0
    assert growth_end(T, r, err, status, T0, drop_radius=R) is None
    # Without a contact instant there is no growth phase to end.
    assert growth_end(T, r, err, status, None) is None
    assert mark_after_growth(status, None) == tuple(status)
    assert isinstance(GrowthEnd(3, "x"), GrowthEnd)
