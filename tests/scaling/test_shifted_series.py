"""The points of r - r0 (a finite initial radius) weigh by the neighbours' radius, as the fits do.

Reference: the relative σ of ``r - r0`` written plainly, ``σ / (r - r0)`` for
noise-free radii (where the neighbours' median is the radius itself).
"""

import numpy as np

from dropkin.fitting._core import make_series
from dropkin.scaling.verdict._initial import shifted_series


def test_noise_free_radii_keep_the_plain_relative_sigma():
    t = np.linspace(1e-5, 1e-3, 200)
    r0, sigma = 2e-5, 1e-6
    r = r0 + 0.01 * t**0.5
    shifted = shifted_series(make_series(t, r, np.full(t.size, sigma)), r0)
    np.testing.assert_allclose(shifted.s, sigma / (r - r0), rtol=1e-12)
    np.testing.assert_allclose(shifted.y, np.log(r - r0), rtol=1e-12)


def test_a_point_raised_by_noise_does_not_weigh_more():
    # Raising one radius by 5 σ (about four steps between neighbouring frames):
    # taken at its own value, its relative σ would follow the whole rise; taken
    # at the neighbours' median, the radius it is taken at moves by at most one
    # step (the raised value becomes the largest of its window).
    t = np.linspace(1e-5, 1e-3, 200)
    r0, sigma = 2e-5, 2e-6
    r = r0 + 0.01 * t**0.5
    raised = r.copy()
    raised[20] += 5 * sigma
    err = np.full(t.size, sigma)
    at = [r0 + sigma / shifted_series(make_series(t, x, err), r0).s[20] for x in (r, raised)]
    assert abs(at[0] - r[20]) < 1e-9 * r[20]
    assert abs(at[1] - at[0]) <= (r[21] - r[20]) * (1 + 1e-9)
    assert raised[20] - r[20] > 3.5 * (r[21] - r[20])
