"""Systematic and combined intervals (docs/physics.md §4.8, "Intervals").

Three kinds of interval are reported for the exponent n, the dimensional
prefactor A and the dimensionless coefficient C = A / group:

- **statistical**: the fit's 95 % interval (bootstrap or normal approximation);
- **systematic**: for n and A, the range spanned by the point estimates of
  the same fit (same window, same t0 bracket) on the radii measured at the
  other edge levels, together with the main estimate (:func:`edge_interval`);
  for C, that range (relative, as for A) and the material uncertainty of the
  group, ±1.96 u (95 %, u its relative standard uncertainty), added side by
  side in quadrature (:func:`coefficient_systematic`);
- **combined**: statistical ⊕ systematic, the distances from the estimate
  to each end added in quadrature, side by side (:func:`combine`). The two
  sources are independent, and each distance is read as a 95 % bound, so
  the quadrature sum is the 95 % bound of their sum for normal errors and
  keeps the asymmetry of both.

Examples
--------
>>> edge_interval(0.487, [0.481, 0.495])
(0.481, 0.495)
>>> [round(v, 4) for v in combine(0.5, (0.49, 0.51), (0.5, 0.53))]
[0.49, 0.5316]
"""

from __future__ import annotations

import math
from collections.abc import Iterable

from ...fitting._linear import LinearModel, linear_fit

__all__ = [
    "edge_interval",
    "combine",
    "coefficient_systematic",
    "level_estimates",
    "Z95",
]

#: The normal quantile of a two-sided 95 % interval.
Z95 = 1.959963984540054


def edge_interval(main: float, estimates: Iterable[float]) -> tuple[float, float]:
    """The range of `main` and the finite `estimates` (NaN, NaN when `main` is not finite).

    With no other edge level measured the interval is ``(main, main)``: no
    systematic is known, and none is added.
    """
    if main is None or not math.isfinite(main):
        return (math.nan, math.nan)
    values = [main, *(v for v in estimates if v is not None and math.isfinite(v))]
    return (min(values), max(values))


def _sides(value, interval) -> tuple[float, float]:
    lo, hi = interval
    if not (math.isfinite(lo) and math.isfinite(hi)):
        return (math.nan, math.nan)
    return (max(value - lo, 0.0), max(hi - value, 0.0))


def combine(value, statistical, systematic) -> tuple[float, float]:
    """Statistical ⊕ systematic: each side's distance from `value`, in quadrature.

    A systematic interval that is not known (NaN) adds nothing; a statistical
    one that is not known leaves the combination unknown.
    """
    if value is None or not math.isfinite(value):
        return (math.nan, math.nan)
    s_lo, s_hi = _sides(value, statistical)
    if not (math.isfinite(s_lo) and math.isfinite(s_hi)):
        return (math.nan, math.nan)
    y_lo, y_hi = _sides(value, systematic)
    y_lo = 0.0 if not math.isfinite(y_lo) else y_lo
    y_hi = 0.0 if not math.isfinite(y_hi) else y_hi
    return (value - math.hypot(s_lo, y_lo), value + math.hypot(s_hi, y_hi))


def coefficient_systematic(
    coefficient, prefactor, prefactor_systematic, group_rel_err
) -> tuple[float, float]:
    """The systematic interval of C: A's edge-level range (relative) ⊕ 1.96 × the group's u."""
    if coefficient is None or not math.isfinite(coefficient) or not math.isfinite(prefactor):
        return (math.nan, math.nan)
    lo, hi = _sides(prefactor, prefactor_systematic)
    lo = 0.0 if not math.isfinite(lo) else lo / prefactor
    hi = 0.0 if not math.isfinite(hi) else hi / prefactor
    material = Z95 * (group_rel_err or 0.0)
    return (
        coefficient * (1.0 - math.hypot(lo, material)),
        coefficient * (1.0 + math.hypot(hi, material)),
    )


def level_estimates(levels, first, last, shape, with_free, lo, hi, fit_kw):
    """Point estimates (n free, A at the law's n) on each edge level's points in [first, last]."""
    ns, prefactors = [], []
    for level in levels:
        on = level.subset((level.time >= first) & (level.time <= last))
        if len(on) < 3:
            continue
        if with_free:
            free = linear_fit(on, LinearModel(None), lo, hi, **fit_kw)
            ns.append(free.exponent if free else math.nan)
        fixed = linear_fit(on, LinearModel(shape), lo, hi, **fit_kw)
        prefactors.append(fixed.prefactor if fixed else math.nan)
    return ns, prefactors
