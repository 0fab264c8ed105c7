"""The local exponent's derivative filter, against scipy.signal (reference library).

dropkin computes the Savitzky–Golay first-derivative matrix with numpy alone
(importing scipy.signal costs over a second at start-up, issue 18); here it
is compared with ``scipy.signal.savgol_filter(np.eye(m), ..., deriv=1,
mode="interp")``, the filter the local exponent used before, on grids and
windows of every shape the local exponent meets.
"""

import numpy as np
import pytest
from scipy.signal import savgol_filter

from dropkin.fitting._local import local_exponent, savgol_derivative_matrix


@pytest.mark.parametrize(
    ("m", "window", "order", "delta"),
    [(5, 5, 2, 0.115), (7, 5, 2, 1.0), (40, 11, 2, 0.115), (101, 21, 3, 0.05), (400, 11, 2, 0.2)],
)
def test_derivative_matrix_is_scipys_savgol_filter(m, window, order, delta):
    ours = savgol_derivative_matrix(m, window, order, delta)
    reference = savgol_filter(
        np.eye(m), window, order, deriv=1, delta=delta, axis=0, mode="interp"
    )
    np.testing.assert_allclose(ours, reference, rtol=0, atol=1e-10 * np.abs(reference).max())


def test_local_exponent_of_a_noisy_series_is_the_one_scipys_filter_gives(monkeypatch):
    import dropkin.fitting._local as local

    rng = np.random.default_rng(3)
    t = np.geomspace(1e-5, 1e-2, 300)
    r = 0.02 * t**0.5 * (1 + 0.01 * rng.standard_normal(t.size))
    ours = local_exponent(t, r, radius_err=0.01 * r, t0=0.0, t0_bracket=(-2e-6, 2e-6))

    def scipy_matrix(m, window, order, delta):
        return savgol_filter(np.eye(m), window, order, deriv=1, delta=delta, axis=0, mode="interp")

    monkeypatch.setattr(local, "savgol_derivative_matrix", scipy_matrix)
    reference = local_exponent(t, r, radius_err=0.01 * r, t0=0.0, t0_bracket=(-2e-6, 2e-6))
    assert ours.success and reference.success
    np.testing.assert_allclose(ours.exponent, reference.exponent, rtol=1e-9)
    np.testing.assert_allclose(ours.stat_err, reference.stat_err, rtol=1e-9)
    np.testing.assert_allclose(ours.lower, reference.lower, rtol=1e-9)
