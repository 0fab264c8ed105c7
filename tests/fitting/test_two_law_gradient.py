"""The two-regime models' exact derivatives against central differences.

Reference: the central difference ``(g(θ + h) - g(θ - h)) / 2h``, whose error
is ``h² g'''/6`` (common practice in numerical analysis): with h a millionth
of each parameter's natural scale it is good to about 1e-9 of a column's
size, so a tolerance of 1e-6 catches a wrong term (a sign, a missing factor,
a law's slope at the wrong time) and passes rounding.
"""

import math

import numpy as np
import pytest
from scipy.optimize import least_squares

from dropkin.fitting import LawShape, harmonic_blend
from dropkin.fitting._core import make_series
from dropkin.fitting._two_law_model import TwoLawModel

ELS = LawShape(1.0, True, capillary_speed=0.5, drop_radius=1e-3)  # peak at τ = 0.74 ms
T0 = 1e-7
TIME = T0 + np.geomspace(1e-6, 1e-3, 60)


def central_differences(model, theta, time):
    """(N, k) derivatives of ``model.log_radius`` by central differences."""
    out = np.empty((len(time), len(theta)))
    for j, name in enumerate(model.names()):
        # t0's scale is the earliest time since contact; the others' is 1.
        h = 1e-6 * ((time[0] - theta[j]) if name == "t0" else 1.0)
        up, down = theta.copy(), theta.copy()
        up[j] += h
        down[j] -= h
        out[:, j] = (model.log_radius(up, time) - model.log_radius(down, time)) / (2.0 * h)
    return out


def model(kind, early=None, late=None, sharpness=None, direction=-1, t0_fixed=None):
    return TwoLawModel(kind, early, late, sharpness, direction, t0_fixed)


CASES = {
    "blend, all free, falling": (model("blend"), [-1.0, 0.9, 0.5, math.log(3e-5), 2.0, T0]),
    "blend, all free, rising": (
        model("blend", direction=1),
        [-1.0, 0.5, 0.9, math.log(3e-5), 0.7, T0],
    ),
    "harmonic, t0 fixed": (model("blend", sharpness=1.0, t0_fixed=T0), [-1, 0.9, 0.5, -10.4]),
    "ELS log law → t^1/2": (
        model("blend", early=ELS, late=LawShape(0.5)),
        [-1.0, math.log(3e-5), 1.5, T0],
    ),
    "ELS log law, crossover beyond its peak": (
        model("blend", early=ELS, late=LawShape(0.5)),
        [-1.0, math.log(1e-3), 1.5, T0],
    ),
    "t^1/10 → t^1/8 rising, n1 fixed": (
        model("blend", early=LawShape(0.1), direction=1),
        [0.0, 0.125, math.log(1e-4), 2.0, T0],
    ),
    "broken power law": (model("broken"), [-1.0, 0.9, 0.5, math.log(3.1e-5), T0]),
    "broken power law, t0 fixed": (model("broken", t0_fixed=T0), [-1, 0.9, 0.5, -10.4]),
    # The origin a hair before the first point: the t0 column is ~1/τ there.
    "origin near the bracket end": (model("blend"), [-1, 0.9, 0.5, -10.4, 2.0, TIME[0] - 1e-9]),
}


@pytest.mark.parametrize("name", list(CASES))
def test_gradient_matches_central_differences(name):
    m, theta = CASES[name]
    theta = np.asarray(theta, dtype=float)
    lr, grad = m.log_radius_and_gradient(theta, TIME)
    assert grad.shape == (len(TIME), len(m.names()))
    np.testing.assert_array_equal(lr, m.log_radius(theta, TIME))
    numeric = central_differences(m, theta, TIME)
    scale = np.abs(numeric).max(axis=0)
    assert np.all(scale > 0)
    assert np.abs(grad - numeric).max(axis=0) / scale == pytest.approx(0.0, abs=1e-6)


def test_exact_jacobian_reaches_the_finite_difference_minimum_or_lower():
    # Seeded noisy harmonic blend 5τ → 0.0188 τ^½ (docs/physics.md §3), all six
    # parameters free, the first point 1e-7 s after contact. scipy's
    # least_squares with its own 2-point differences steps t0 by 1.5e-8 s, a
    # sixth of the first τ, and stops a little short of the minimum; with the
    # exact Jacobian it must reach a cost no higher, and parameters within a
    # twentieth of their standard errors of the finite-difference ones.
    rng = np.random.default_rng(4)
    t = np.geomspace(1e-7, 1e-4, 300) + T0
    r = harmonic_blend(5.0 * (t - T0), 0.0188 * (t - T0) ** 0.5)
    r *= 1.0 + 0.01 * rng.normal(size=t.size)
    data = make_series(t, r, 0.01 * r)
    m = model("blend")
    x0 = np.array([1.0, 0.8, 0.6, math.log(1e-5), 1.0, 0.7 * T0])
    lower = [-np.inf, -0.5, -0.5, -20.0, 0.25, 0.5 * T0]
    upper = [np.inf, 3.0, 3.0, -5.0, 10.0, 1.5 * T0]

    def residuals(theta):
        return (data.y - m.log_radius(theta, data.time)) / data.s

    def jacobian(theta):
        return -m.log_radius_and_gradient(theta, data.time)[1] / data.s[:, None]

    kw = {"bounds": (lower, upper), "loss": "soft_l1", "x_scale": "jac"}
    exact = least_squares(residuals, x0, jac=jacobian, **kw)
    differences = least_squares(residuals, x0, **kw)
    assert exact.status > 0 and differences.status > 0
    assert exact.cost <= differences.cost * (1.0 + 1e-9)
    j, z = jacobian(exact.x), residuals(exact.x)
    se = np.sqrt(np.diag(np.linalg.inv(j.T @ j)) * (z @ z) / (len(z) - len(x0)))
    assert np.abs(exact.x - differences.x) / se == pytest.approx(0.0, abs=0.05)
