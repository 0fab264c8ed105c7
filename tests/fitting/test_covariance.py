"""The normal-approximation covariance of the two-regime and r0 fits (issue 18, found
while timing them): ``σ² (JᵀJ)⁻¹`` of the Jacobian at the minimum.

Reference: statsmodels' OLS on the Jacobian as its design matrix, whose
``normalized_cov_params`` is that same ``(JᵀJ)⁻¹`` (through the
pseudo-inverse of J itself, whose singular values span the square root of
those of JᵀJ, so nothing a real fit determines is cut off).
"""

import math

import numpy as np
import pytest

from dropkin.fitting._core import jacobian_covariance
from dropkin.fitting._two_law_model import TwoLawModel

sm = pytest.importorskip("statsmodels.api")

T0 = 1e-7
TIME = T0 + np.geomspace(1e-6, 1e-3, 200)


def _jacobian(theta, sigma=0.01):
    """The normalised residuals' Jacobian of a broken power law whose two exponents
    almost agree (0.5 and 0.52): the crossover is barely determined, and the t0
    column (about n/τ/σ, up to 5e7) dwarfs the others (up to about 1400)."""
    model = TwoLawModel("broken", None, None, None, -1, None)
    _, grad = model.log_radius_and_gradient(np.asarray(theta, dtype=float), TIME)
    return grad / sigma


def test_the_covariance_is_statsmodels_ols_on_the_jacobian():
    jac = _jacobian([-1.0, 0.52, 0.5, math.log(3e-5), T0])
    ref = sm.OLS(np.zeros(len(TIME)), jac).fit().normalized_cov_params
    ours = jacobian_covariance(jac, 1.0)
    np.testing.assert_allclose(np.diag(ours), np.diag(ref), rtol=1e-6)
    np.testing.assert_allclose(ours, ref, rtol=1e-5, atol=1e-9 * np.abs(ref).max())


def test_a_poorly_determined_parameter_keeps_its_variance():
    # The unscaled pseudo-inverse of JᵀJ (what the fits used) drops the crossover's
    # direction with the small singular values and reports a variance far below
    # the reference; scaled, it is the reference's.
    jac = _jacobian([-1.0, 0.52, 0.5, math.log(3e-5), T0])
    ref = np.diag(sm.OLS(np.zeros(len(TIME)), jac).fit().normalized_cov_params)
    unscaled = np.diag(np.linalg.pinv(jac.T @ jac))
    assert unscaled[3] < 0.5 * ref[3]  # ln τc: the fixture shows the defect
    assert np.diag(jacobian_covariance(jac, 1.0))[3] == pytest.approx(ref[3], rel=1e-6)


def test_the_scale_multiplies_and_a_zero_column_keeps_variance_zero():
    jac = _jacobian([-1.0, 0.9, 0.5, math.log(3e-5), T0])
    np.testing.assert_allclose(jacobian_covariance(jac, 2.5), 2.5 * jacobian_covariance(jac, 1.0))
    jac[:, 2] = 0.0
    assert jacobian_covariance(jac, 1.0)[2, 2] == pytest.approx(0.0, abs=1e-20)
