"""The laws' curves the figures draw: a candidate's r(τ) and the dominant free fit.

Each is evaluated from its formula, on a grid of τ or at the rows' τ, never
drawn row by row.
"""

from __future__ import annotations

import math

import numpy as np

from ._origin import time_origin
from ._style import _finite, _num

__all__ = ["dominant_curve", "fit_times"]


def _window(candidate):
    """A candidate's window as a pair of positive floats, or None."""
    w = candidate.window if candidate else None
    w = None if w is None or len(w) != 2 else [_num(v) for v in w]
    if not w or not all(_finite(v) for v in w) or not 0 < w[0] < w[1]:
        return None
    return float(w[0]), float(w[1])


def _dominant(verdict):
    """The dominant candidate of a successful verdict, or None."""
    return verdict.dominant if verdict else None


def fit_times(series, verdict) -> np.ndarray:
    """τ of every frame (s), from the outputs' one origin; NaN where unknown.

    The origin is the fitted contact instant ``verdict.t0``, whose windows the
    laws count from, or the measured contact when the fit has none (see
    :func:`dropkin.report._origin.time_origin`).
    """
    return time_origin(series, verdict).tau(series.time)


def _law_radius(tau, *, exponent, prefactor, logarithmic=False, speed=None, drop_radius=None):
    """r(τ) of one law: ``C τ^n``, or the ELS law ``-(C/u) uτ ln(uτ/R)`` held at its peak."""
    tau = np.asarray(tau, dtype=float)
    if logarithmic:
        if not (_finite(speed) and _finite(drop_radius) and speed > 0 and drop_radius > 0):
            return np.full(tau.shape, np.nan)
        x = np.minimum(speed * tau / drop_radius, math.exp(-1.0))
        return prefactor / speed * x * drop_radius * -np.log(x)
    return prefactor * tau**exponent


def _candidate_curve(cand, verdict, series, tau):
    numbers = verdict.numbers
    return _law_radius(
        tau,
        exponent=_num(cand.exponent_theory),
        prefactor=_num(cand.prefactor_fit),
        logarithmic=bool(cand.regime.logarithmic),
        speed=None if numbers is None else _num(numbers.capillary_speed),
        drop_radius=_num(series.drop_radius),
    )


def dominant_curve(verdict, tau) -> np.ndarray | None:
    """The dominant regime's free fit ``r(τ)`` (m), or None without one.

    The free fit passes through its pivot point with slope ``exponent_fit``;
    without a pivot, the law at its theoretical exponent with the fitted
    prefactor is used.
    """
    dom = _dominant(verdict)
    if not dom:
        return None
    tau = np.asarray(tau, dtype=float)
    fit = getattr(dom, "fit", None)
    pivot = fit if fit is not None and hasattr(fit, "pivot_time") else None
    n = _num(dom.exponent_fit if pivot is None else pivot.exponent)
    time, radius = (None, None) if pivot is None else (pivot.pivot_time, pivot.pivot_radius)
    time, radius = _num(time), _num(radius)
    if time is not None and radius is not None and n is not None:
        return radius * (tau / time) ** n
    theory, prefactor = _num(dom.exponent_theory), _num(dom.prefactor_fit)
    if theory is not None and prefactor is not None:
        return prefactor * tau**theory
    return None
