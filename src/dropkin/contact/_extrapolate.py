"""The two estimates of the contact instant inside its bracket: radius extrapolation, gap closure.

- :func:`from_radius`: a power law ``r = A (t - t0)**n`` fitted by weighted
  least squares on ``ln r`` with ``n`` free between 0.1 and 1.5 and ``t0``
  bounded to the bracket; ``t0`` is where the fitted law reaches zero.
- :func:`from_gap`: a straight line through the last gaps, extrapolated to
  zero (the drops approach at a steady speed over the last few frames).

The power-law profile here is deliberately its own, not
:func:`dropkin.fitting.fit_power_law`: it clamps the exponent into the range
of the catalogue's regimes, searches t0 over the whole bracket in one bounded
scalar search and takes the error of t0 from the curvature of the profile,
which :mod:`dropkin.fitting` does differently (a grid, then a local search;
a robust loss; the error from the covariance). Built on the generic fit, the
contact instants written to ``measure.json`` would change.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["from_radius", "from_gap"]


def from_radius(t, r, err, lo, hi):
    """t0 and its error from a power law with free exponent, or (None, None).

    ``ln r = ln A + n ln(t - t0)`` is linear in (ln A, n) for a given t0, so
    the weighted least squares (weights r / err: relative errors) is solved
    in closed form for each t0 and the sum of squares minimised over t0
    alone (a profile). The error of t0 comes from the profile's curvature,
    scaled by the reduced chi-square when it exceeds one.
    """
    from scipy.optimize import minimize_scalar  # here: keeps the command line quick

    if np.any(r <= 0):
        return None, None
    ln_r = np.log(r)
    w2 = (r / err) ** 2
    top = min(hi, float(t[0])) - 1e-9 * max(float(t[-1] - lo), 1e-300)
    if not top > lo:
        return None, None

    def chi2(t0):
        x = np.log(t - t0)
        sw, sx, sy = w2.sum(), (w2 * x).sum(), (w2 * ln_r).sum()
        sxx, sxy = (w2 * x * x).sum(), (w2 * x * ln_r).sum()
        denom = sw * sxx - sx * sx
        n = (sw * sxy - sx * sy) / denom if denom > 0 else 0.5
        n = min(max(n, 0.1), 1.5)
        a = (sy - n * sx) / sw
        return float((w2 * (ln_r - a - n * x) ** 2).sum())

    span = top - lo
    best = minimize_scalar(
        chi2, bounds=(lo, top), method="bounded", options={"xatol": 1e-6 * span}
    )
    t0 = float(best.x)
    h = 1e-3 * span
    a, b = max(t0 - h, lo), min(t0 + h, top)
    mid = 0.5 * (a + b)
    curv = (chi2(b) - 2.0 * chi2(mid) + chi2(a)) / (0.5 * (b - a)) ** 2
    dof = len(t) - 3
    if dof <= 0 or not curv > 0:
        return t0, None
    scale = max(chi2(t0) / dof, 1.0)
    return t0, math.sqrt(2.0 / curv * scale)


def from_gap(t, gap):
    """t0 where a straight line through the gaps reaches zero, or (None, None)."""
    if len(t) < 3:
        return None, None
    (slope, intercept), cov = np.polyfit(t, gap, 1, cov="unscaled")
    if not slope < 0:
        return None, None
    resid = gap - (slope * t + intercept)
    scale = max(float(resid @ resid) / max(len(t) - 2, 1), 1e-30)
    cov = cov * scale
    t0 = -intercept / slope
    # Propagate the line's covariance to its root.
    grad = np.array([intercept / slope**2, -1.0 / slope])
    var = float(grad @ cov @ grad)
    return float(t0), math.sqrt(var) if var >= 0 else None
