"""A finite initial radius in the verdict: ``r = r0 + A (t - t0)**n`` on one-regime series.

When the caller asks for it (``analyze_series(initial_radius=True)``), the
crossover search offers the power law with r0 as one more one-regime model
(:func:`dropkin.fitting._windows.search_crossover`); when the information
criterion keeps it, the candidates are judged on the series with r0 taken
away (their windows, local exponent and fixed-exponent prefactors), and each
candidate's free-exponent fit keeps r0 as a parameter, so that n's interval
carries r0's uncertainty (its bootstrap refits r0 and t0 in every resample).
The fixed-exponent prefactor is fitted on ``r - r0`` at the fitted r0; its
interval gets r0's uncertainty added (:func:`widened_for_initial_radius`).

Examples
--------
>>> import numpy as np
>>> from dropkin.fitting._core import make_series
>>> s = make_series([1.0, 2.0], [3e-6, 5e-6], [1e-7, 1e-7])
>>> v = shifted_series(s, 1e-6)
>>> np.round(np.exp(v.y) * 1e6, 6).tolist(), np.round(v.s, 4).tolist()
([2.0, 4.0], [0.05, 0.025])
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from ...fitting._bootstrap import bootstrap_linear
from ...fitting._core import Series, running_median
from ...fitting._initial import bootstrap_initial_radius, fit_initial_radius
from ...fitting._linear import LinearModel, linear_fit
from ...fitting._records import LawFit

__all__ = ["shifted_series", "free_fit", "initial_radius_fields", "widened_for_initial_radius"]


def shifted_series(series: Series, r0: float) -> Series:
    """The points of ``r - r0`` (σ unchanged in metres): ln of it and its relative σ.

    Points with ``r ≤ r0`` are left out. The relative σ is taken at the
    neighbours' median ``r̃ - r0``, as the fits take it at ``r̃``
    (:func:`dropkin.fitting._core.running_median`), not at a point's own value.
    """
    r = np.exp(series.y)
    keep = r > r0
    grow = r[keep] - r0
    typical = running_median(r)[keep]
    rel = series.s[keep] * typical / np.where(typical > r0, typical - r0, grow)
    rows = None if series.rows is None else series.rows[keep]
    return Series(series.time[keep], np.log(grow), rel, series.weighted, rows)


def free_fit(pts, data, lo, hi, search, fit_kw, bootstrap, seed):
    """The free-exponent fit on a window's points (`pts`, of the series `data`).

    With r0 as a parameter when the search kept the law with r0 for the whole
    series; bootstrapped when `bootstrap` > 0.
    """
    whole = len(pts) == len(data)
    free = search.free if whole else linear_fit(pts, LinearModel(None), lo, hi, **fit_kw)
    if free and search.initial is not None:
        with_r0 = search.initial if whole else fit_initial_radius(pts, free, **fit_kw)
        free = with_r0 if with_r0 is not None else free
    if free and bootstrap:
        boot = {"f_scale": fit_kw["f_scale"], "n": bootstrap, "seed": seed}
        if free.initial_radius_fitted:
            free = bootstrap_initial_radius(pts, free, **boot)
        else:
            free = bootstrap_linear(pts, LinearModel(None), free, **boot)
    return free


def initial_radius_fields(fit) -> dict:
    """The r0 fields of a CandidateFit from its free fit (none kept: r0 = 0)."""
    if not (isinstance(fit, LawFit) and fit.initial_radius_fitted):
        return {}
    lo, hi = fit.initial_radius_ci
    return {
        "initial_radius": float(fit.initial_radius),
        "initial_radius_ci": (float(lo), float(hi)),
        "initial_radius_fitted": True,
    }


def widened_for_initial_radius(fixed, data, on, shape, initial, bracket, fit_kw):
    """A law fit on ``r - r0`` with r0's uncertainty added to its prefactor interval.

    `fixed` was fitted on the points `on` (a window of ``r - r0``) of the
    series `data`; `initial` is the fit that kept r0 (None: no r0, `fixed`
    is returned as it is). The prefactor is refitted on ``r - r0`` at both
    ends of r0's interval; on each side the larger move is added in
    quadrature to the statistical half-width (first-order propagation of r0
    as an independent nuisance parameter).
    """
    if not fixed or initial is None:
        return fixed
    moves = []
    for r0 in initial.initial_radius_ci:
        if not math.isfinite(r0):
            continue
        view = shifted_series(data, r0)
        pts = view.subset(np.isin(view.time, on.time))
        enough = len(pts.time) >= 3
        fit = linear_fit(pts, LinearModel(shape), *bracket, **fit_kw) if enough else None
        if fit:
            moves.append(fit.prefactor - fixed.prefactor)
    if not moves:
        return fixed
    a, (a_lo, a_hi) = fixed.prefactor, fixed.prefactor_ci
    down, up = max([-m for m in moves] + [0.0]), max(moves + [0.0])
    ci = (a - math.hypot(a - a_lo, down), a + math.hypot(a_hi - a, up))
    return dataclasses.replace(fixed, prefactor_ci=ci)
