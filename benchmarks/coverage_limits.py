"""What any fit could know: limits that benchmarks/coverage.py prints beside its measurements.

Two quantities, both computed here with numpy and scipy only (never with
dropkin's fitting):

``apparent_exponent``
    A log law has no exponent. The number a power-law fit reports for it is
    the exponent of the best power law over the fitted window, and that
    depends on the contact instant the fit may choose. With t0 free in the
    frame bracket (as dropkin fits), the truth of the free fit's exponent is
    that same fit applied to the noise-free law at the same instants; with t0
    given, it is the fit with t0 fixed at the truth.

``information_ratio``
    The Cramér–Rao bound (e.g. Kay, *Fundamentals of Statistical Signal
    Processing: Estimation Theory*, 1993, ch. 3) of an exponent's standard
    error when t0 is known only to lie in the frame bracket, over the bound
    with t0 known. The bracket enters as a Gaussian prior of the uniform
    distribution's standard deviation, width/√12 (an approximation: the
    uniform prior is slightly more informative at its ends). A median width
    ratio near this number means the interval is as narrow as the bracket
    allows; a goal below it needs information on t0 finer than a frame.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.optimize import least_squares


def _power(theta, tau):
    log_a, n = theta
    return np.exp(log_a) * np.abs(tau) ** n


def _blend(theta, tau):
    r1, r2 = _power(theta[:2], tau), _power(theta[2:4], tau)
    return r1 * r2 / (r1 + r2)


def apparent_exponent(radius, times, t0_true, bracket=None) -> float:
    """Exponent of the best power law through noise-free `radius(τ)` at `times`.

    `bracket` ``(lo, hi)`` frees t0 inside it (equal weights, as for constant
    noise); None fixes t0 at `t0_true` (then a fit of ln r on ln τ weighted by
    r, the same least squares to first order).
    """
    times = np.asarray(times, dtype=float)
    r = radius(times - t0_true)
    n0, log_a0 = np.polyfit(np.log(times - t0_true), np.log(r), 1, w=r)
    if bracket is None:
        return float(n0)
    lo, hi = bracket
    hi = min(hi, times[0] * (1 - 1e-12))
    scale = float(np.max(r))

    def residual(p):
        log_a, n, t0 = p
        return (math.exp(log_a) * (times - t0) ** n - r) / scale

    start = (log_a0, n0, min(max(t0_true, lo), hi))
    fit = least_squares(residual, start, bounds=([-np.inf, 0.01, lo], [np.inf, 5.0, hi]))
    return float(fit.x[1])


def _jacobian(model, theta, tau, step=1e-6):
    """d r / d (θ, t0) at `tau`; t0 is the last column (r depends on t − t0)."""
    theta = np.asarray(theta, dtype=float)
    columns = []
    for i in range(len(theta)):
        h = step * max(1.0, abs(theta[i]))
        up, down = theta.copy(), theta.copy()
        up[i] += h
        down[i] -= h
        columns.append((model(up, tau) - model(down, tau)) / (2 * h))
    h = step * float(np.min(tau))
    columns.append(-(model(theta, tau + h) - model(theta, tau - h)) / (2 * h))
    return np.stack(columns, axis=1)


def information_ratio(theta, tau, sigma, bracket_width, index=1, free=None) -> float:
    """Cramér–Rao ratio of one parameter's standard error: t0 in its bracket over t0 known.

    `theta` is ``(ln A, n)`` of a power law or ``(ln A1, n1, ln A2, n2)`` of a
    harmonic blend (1/r = 1/r1 + 1/r2); `index` the parameter asked about
    (1: the exponent, 0: ln A, whose error is the prefactor's relative error);
    `free` which of `theta` the fit frees (default all; an exponent held at the
    law's value is not free); `tau` the resolved instants after the true
    contact; `sigma` the noise (same unit as r).
    """
    model = _power if len(theta) == 2 else _blend
    keep = list(free) if free is not None else [True] * len(theta)
    columns = [i for i, k in enumerate(keep) if k] + [len(theta)]
    jac = _jacobian(model, theta, np.asarray(tau, dtype=float))[:, columns] / sigma
    info = jac.T @ jac
    at = columns.index(index)
    known = np.linalg.inv(info[:-1, :-1])[at, at]
    info[-1, -1] += 12.0 / bracket_width**2
    return math.sqrt(np.linalg.inv(info)[at, at] / known)
