"""Uncertainty: a seeded residual bootstrap that refits t0 in every resample.

Residual bootstrap, not pairs, so that the frame times stay those of the
camera: the normalised residuals of the best fit are resampled with
replacement (scaled up to the stated σ when they scatter less than it:
:func:`resampled_residuals`), put back onto the fitted curve with each
point's own σ, and
the law is fitted again — the contact instant t0 included, inside the same
bracket as the fit, whenever the fit had it free. Intervals are the 2.5 and
97.5 percentiles of the refitted values, as they come: when an estimate lies
outside its own interval (the resamples disagree with the fit), the record
names it in ``outside_ci`` instead of widening the interval to hide it.

Fits that are linear at a given origin (power laws, the log law) are
refitted in blocks of resamples, batched in numpy (:func:`._linear.profile_many`:
a grid of origins across the bracket ranked at once, then Newton steps in the
law's parameters and t0 together, for every resample of a block in step; a
block holds at most :data:`_BLOCK_VALUES` values per array, so memory does
not grow with the number of points times the resamples); blends are refitted
one by one with scipy, t0 one of the parameters of the least-squares refit.
"""

from __future__ import annotations

import dataclasses
import math
import os

import numpy as np

from ._core import Series, point_scales, safe_exp, solve_linear
from ._linear import SETTLE_PASSES, SETTLED, LinearModel, profile_many
from ._records import BlendFit, LawFit
from ._two_laws import TwoLawModel, build_model, least_squares_fit

__all__ = [
    "bootstrap_linear",
    "bootstrap_blend",
    "percentile_interval",
    "outside",
    "resampled_residuals",
    "resample_chunks",
]

_PERCENTILES = (2.5, 97.5)


def percentile_interval(values) -> tuple[float, float]:
    """The 2.5–97.5 percentile interval of the finite values (NaNs for fewer than two)."""
    values = np.asarray(values, dtype=float)
    values = values[np.isfinite(values)]
    if len(values) < 2:
        return (math.nan, math.nan)
    lo, hi = np.percentile(values, _PERCENTILES)
    return (float(lo), float(hi))


def outside(**pairs) -> tuple[str, ...]:
    """Names of the ``name=(estimate, (lo, hi))`` pairs whose estimate lies outside (lo, hi)."""
    return tuple(
        name
        for name, (value, (lo, hi)) in pairs.items()
        if math.isfinite(lo) and math.isfinite(hi) and not lo <= value <= hi
    )


def resampled_residuals(y, fitted, s):
    """The normalised residuals a residual bootstrap draws from: centred, and never
    smaller on the whole than the stated uncertainties.

    When the residuals scatter less than the points' stated σ say (root mean
    square below 1: a Birge ratio below 1), they are scaled up to unit root
    mean square, so that the intervals carry at least the uncertainty the
    measurement states; larger scatter is kept as it is (the usual rule of
    weighted fits: the larger of the internal and the external error).
    """
    e = (np.asarray(y) - fitted) / s
    e = e - e.mean()
    rms = float(np.sqrt(np.mean(e**2))) if len(e) else 0.0
    return e / rms if 0.0 < rms < 1.0 else e


def _std(values) -> float:
    """Sample standard deviation of the finite values (NaN for fewer than two)."""
    values = np.asarray(values, dtype=float)
    values = values[np.isfinite(values)]
    if len(values) < 2:
        return math.nan
    with np.errstate(over="ignore"):
        return float(np.std(values, ddof=1))


#: Most values in one block of the batched refits: resamples x points x origins tried at
#: once by :func:`._linear.profile_many` (its grid). 2**22 doubles are 32 MB an array.
_BLOCK_VALUES = 1 << 22


def resample_chunks(n: int, points: int, threads: int = 1) -> list[int]:
    """Sizes of the blocks of resamples refitted together: at most :data:`_BLOCK_VALUES`
    values per array whatever the number of points (at least one resample a block)."""
    from ._linear import _T0_GRID

    per = max(1, _BLOCK_VALUES // max(1, points * _T0_GRID * threads))
    per = min(per, -(-n // threads))  # at least one block a thread
    return [min(per, n - start) for start in range(0, n, per)]


#: Fewest values (resamples × points) worth a second thread.
_THREADED_VALUES = 1 << 16
#: The environment variable that sets the bootstrap's threads (a campaign's workers set 1).
THREADS_VARIABLE = "DROPKIN_FIT_THREADS"


def fit_threads(values: int) -> int:
    """Threads for a bootstrap of `values` resamples × points: the whole number in
    ``$DROPKIN_FIT_THREADS``, else the usable cores, at most 2; 1 for small ones."""
    if values < _THREADED_VALUES:
        return 1
    given = os.environ.get(THREADS_VARIABLE, "").strip()
    if given.isdigit() and int(given) >= 1:
        return int(given)
    cores = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else 1
    return max(1, min(2, cores))


def _method(refitted) -> str:
    origin = "; t0 refitted in its bracket in every resample" if refitted else "; t0 fixed"
    return f"residual bootstrap, 2.5–97.5 percentiles{origin}"


def _refit_linear(data, fitted, e, model, fit, f_scale, n, rng):
    """t0 (n,) and β (n, p) refitted to `n` resamples, a block of them at a time.

    The residuals are drawn block by block: the same draws as one (n, N)
    array, so the result does not depend on the block size. The blocks are
    refitted on :func:`fit_threads` threads (numpy leaves the interpreter
    lock for its array work): each resample's refit is its own, so the
    threads change no number either.
    """
    lo, hi = fit.t0_bracket
    f_scale = point_scales(data, f_scale)
    threads = fit_threads(n * len(data))
    blocks = [
        rng.integers(0, len(data), size=(k, len(data)))
        for k in resample_chunks(n, len(data), threads)
    ]

    def refit(idx):
        y_star = fitted[None, :] + data.s[None, :] * e[idx]
        # Each resample's robust weights start from those of the residuals it drew.
        start = 1.0 / (data.s**2 * np.sqrt(1.0 + (e[idx] / f_scale) ** 2))
        if fit.t0_free:
            return profile_many(
                data.time, y_star, data.s, model, lo, hi, f_scale, fit.loss, start=start
            )
        xb, offb = model.design(np.broadcast_to(data.time - fit.t0, y_star.shape))
        beta, _, _ = solve_linear(
            xb, y_star - offb, data.s, f_scale, fit.loss, SETTLE_PASSES, start=start, tol=SETTLED
        )
        return np.full(len(idx), fit.t0), beta

    if threads > 1:
        from concurrent.futures import ThreadPoolExecutor

        with ThreadPoolExecutor(threads) as pool:
            done = list(pool.map(refit, blocks))
    else:
        done = [refit(idx) for idx in blocks]
    t0s = [np.zeros(0)] + [t0 for t0, _ in done]
    betas = [np.zeros((0, model.n_linear))] + [beta for _, beta in done]
    return np.concatenate(t0s), np.concatenate(betas)


def bootstrap_linear(series: Series, model: LinearModel, fit: LawFit, *, f_scale, n, seed):
    """The fit with bootstrap intervals for n, A, r_p and t0 (batched refits).

    t0 is refitted inside ``fit.t0_bracket`` in every resample when
    ``fit.t0_free``; otherwise it stays at ``fit.t0``.
    """
    rng = np.random.default_rng(seed)
    lo, hi = fit.t0_bracket
    data = series.subset(series.time > hi)
    x, off = model.design(data.time - fit.t0)
    unit = 1.0 if model.shape is None else model.shape.prefactor_unit_factor()
    beta = [math.log(fit.prefactor / unit)]
    if model.shape is None:
        beta.append(fit.exponent)
    fitted = x @ np.asarray(beta) + off
    e = resampled_residuals(data.y, fitted, data.s)
    t0s, beta_b = _refit_linear(data, fitted, e, model, fit, f_scale, n, rng)
    ln_a = beta_b[:, 0]
    tp = fit.pivot_time
    if model.shape is None:
        n_b = beta_b[:, 1]
        ln_rp = ln_a + n_b * math.log(tp)
        exponent_ci, exponent_err = percentile_interval(n_b), _std(n_b)
    else:
        ln_rp = ln_a + float(model.shape.log_shape(np.array([tp]))[0])
        exponent_ci, exponent_err = fit.exponent_ci, fit.exponent_err
    # Intervals of the positive A and r_p from the percentiles of their
    # logarithms (the same order statistics; exp of a resample may overflow).
    lo_a, hi_a = percentile_interval(ln_a)
    lo_p, hi_p = percentile_interval(ln_rp)
    prefactor_ci = (unit * safe_exp(lo_a), unit * safe_exp(hi_a))
    pivot_ci = (safe_exp(lo_p), safe_exp(hi_p))
    t0_ci = percentile_interval(t0s) if fit.t0_free else (fit.t0, fit.t0)
    return dataclasses.replace(
        fit,
        exponent_err=exponent_err,
        exponent_ci=exponent_ci,
        prefactor_err=fit.prefactor * _std(ln_a),
        prefactor_ci=prefactor_ci,
        pivot_radius_ci=pivot_ci,
        t0_err=_std(t0s) if fit.t0_free else 0.0,
        t0_ci=t0_ci,
        ci_method=_method(fit.t0_free),
        n_resamples=n,
        outside_ci=outside(
            exponent=(fit.exponent, exponent_ci),
            prefactor=(fit.prefactor, prefactor_ci),
            pivot_radius=(fit.pivot_radius, pivot_ci),
            t0=(fit.t0, t0_ci),
        ),
    )


def bootstrap_blend(series: Series, fit: BlendFit, *, f_scale, n, seed, **spec) -> BlendFit:
    """The blend with bootstrap intervals for its exponents, prefactors, crossover and t0.

    Each resample is refitted by least squares with every parameter of the
    fit free again — t0 inside ``fit.t0_bracket`` when ``fit.t0_free`` —
    starting from the best fit. `spec` is the model's specification as given
    to :func:`._two_laws.blend_fit` (kind, early, late, sharpness).
    """
    rng = np.random.default_rng(seed)
    lo, hi = fit.t0_bracket
    data = series.subset(series.time > hi)
    kind = spec.get("kind", "blend")
    early, late, sharpness = spec.get("early"), spec.get("late"), spec.get("sharpness")
    model, _, bounds = build_model(
        data, kind, early, late, sharpness, lo, hi, fit.t0, fit.direction
    )
    best = _theta_from_fit(model, fit)
    fitted = model.log_radius(best, data.time)
    e = resampled_residuals(data.y, fitted, data.s)
    idx = rng.integers(0, len(data), size=(n, len(data)))
    x0 = np.clip(best, bounds[0], bounds[1])
    rows = []
    for b in range(n):
        resampled = Series(
            data.time, fitted + data.s * e[idx[b]], data.s, data.weighted, data.rows
        )
        try:
            res = least_squares_fit(
                model, resampled, x0, bounds, loss=fit.loss, f_scale=f_scale, max_nfev=200
            )
        except ValueError:
            continue
        p = model.unpack(res.x)
        a1, a2, _ = model.prefactors(res.x)
        rows.append((*model.exponents(res.x), math.exp(p["lntc"]), p["t0"], a1, a2))
    n1s, n2s, tcs, t0s, a1s, a2s = np.array(rows, dtype=float).reshape(-1, 6).T
    cis = {
        "early_exponent": fit.early_exponent_ci if early is not None else percentile_interval(n1s),
        "late_exponent": fit.late_exponent_ci if late is not None else percentile_interval(n2s),
        "crossover_time": percentile_interval(tcs),
        "t0": percentile_interval(t0s) if fit.t0_free else (fit.t0, fit.t0),
        "early_prefactor": _positive_interval(a1s),
        "late_prefactor": _positive_interval(a2s),
    }
    return dataclasses.replace(
        fit,
        early_exponent_ci=cis["early_exponent"],
        late_exponent_ci=cis["late_exponent"],
        crossover_time_ci=cis["crossover_time"],
        t0_ci=cis["t0"],
        early_prefactor_ci=cis["early_prefactor"],
        late_prefactor_ci=cis["late_prefactor"],
        ci_method=_method(fit.t0_free),
        n_resamples=len(rows),
        outside_ci=outside(**{k: (getattr(fit, k), ci) for k, ci in cis.items()}),
    )


def _positive_interval(values) -> tuple[float, float]:
    """Percentile interval of positive values through their logarithms (NaN ones left out)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        lo, hi = percentile_interval(np.log(values))
    return (safe_exp(lo), safe_exp(hi))


def _theta_from_fit(model: TwoLawModel, fit: BlendFit):
    u1 = 1.0 if model.early is None else model.early.prefactor_unit_factor()
    values = {
        "lnA1": math.log(fit.early_prefactor / u1),
        "n1": fit.early_exponent,
        "n2": fit.late_exponent,
        "lntc": math.log(fit.crossover_time),
        "s": fit.sharpness,
        "t0": fit.t0,
    }
    return np.array([values[k] for k in model.names()], dtype=float)
