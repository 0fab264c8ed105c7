"""Uncertainty: a seeded residual bootstrap that can also re-draw t0.

Residual bootstrap, not pairs, so that the frame times stay those of the
camera: the normalised residuals of the best fit are resampled with
replacement, put back onto the fitted curve with each point's own σ, and
the law is fitted again. The caller says where t0 goes (`t0_redraw`): drawn
uniformly inside an interval for each resample and kept fixed there (the
contact bracket: the intervals then carry the contact-instant uncertainty in
full, a conservative choice), or None to keep the fitted t0. Intervals are
the 2.5 and 97.5 percentiles, widened where needed to contain the best
estimate (drawing t0 over the whole bracket can shift the resampled values
when the best t0 lies near one end). Fits that are linear at a given origin
(power laws, the log law) are refitted all at once, batched in numpy;
blends are refitted one by one with scipy.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from ._core import Series, safe_exp, solve_linear
from ._linear import LinearModel
from ._records import BlendFit, LawFit
from ._two_laws import TwoLawModel, build_model, least_squares_fit

__all__ = ["bootstrap_linear", "bootstrap_blend"]

_PERCENTILES = (2.5, 97.5)


def _interval(values, estimate) -> tuple[float, float]:
    """Percentile interval, widened where needed to contain the best estimate."""
    values = np.asarray(values, dtype=float)
    values = values[np.isfinite(values)]
    if len(values) < 2:
        return (math.nan, math.nan)
    lo, hi = np.percentile(values, _PERCENTILES)
    return (float(min(lo, estimate)), float(max(hi, estimate)))


def _std(values) -> float:
    """Sample standard deviation of the finite values (NaN for fewer than two)."""
    values = np.asarray(values, dtype=float)
    values = values[np.isfinite(values)]
    if len(values) < 2:
        return math.nan
    with np.errstate(over="ignore"):
        return float(np.std(values, ddof=1))


def _draws(n_points, fit_t0, t0_redraw, n, rng):
    """Indices of the resampled residuals, then the origin of each resample."""
    idx = rng.integers(0, n_points, size=(n, n_points))
    if t0_redraw is None:
        t0s = np.full(n, fit_t0)
    else:
        t0s = rng.uniform(t0_redraw[0], t0_redraw[1], n)
    return idx, t0s


def bootstrap_linear(
    series: Series, model: LinearModel, fit: LawFit, *, f_scale, n, seed, t0_redraw
):
    """The fit with bootstrap intervals for n, A and r_p (batched refits).

    `t0_redraw` is the interval (lo, hi) in which each resample draws its
    origin uniformly, or None to keep the fitted origin.
    """
    rng = np.random.default_rng(seed)
    data = series.subset(series.time > fit.t0_bracket[1])
    tau = data.time - fit.t0
    x, off = model.design(tau)
    unit = 1.0 if model.shape is None else model.shape.prefactor_unit_factor()
    beta = [math.log(fit.prefactor / unit)]
    if model.shape is None:
        beta.append(fit.exponent)
    fitted = x @ np.asarray(beta) + off
    e = (data.y - fitted) / data.s
    e = e - e.mean()
    idx, t0s = _draws(len(tau), fit.t0, t0_redraw, n, rng)
    y_star = fitted[None, :] + data.s[None, :] * e[idx]
    tau_b = data.time[None, :] - t0s[:, None]
    xb, offb = model.design(tau_b)
    beta_b, _, _ = solve_linear(xb, y_star - offb, data.s, f_scale, fit.loss)
    ln_a = beta_b[:, 0]
    tp = fit.pivot_time
    if model.shape is None:
        n_b = beta_b[:, 1]
        ln_rp = ln_a + n_b * math.log(tp)
        exponent_ci = _interval(n_b, fit.exponent)
        exponent_err = _std(n_b)
    else:
        ln_rp = ln_a + float(model.shape.log_shape(np.array([tp]))[0])
        exponent_ci, exponent_err = fit.exponent_ci, fit.exponent_err
    # Intervals of the positive A and r_p from the percentiles of their
    # logarithms (the same order statistics; exp of a resample may overflow).
    lo_a, hi_a = _interval(ln_a, beta[0])
    lo_p, hi_p = _interval(ln_rp, math.log(fit.pivot_radius))
    return dataclasses.replace(
        fit,
        exponent_err=exponent_err,
        exponent_ci=exponent_ci,
        prefactor_err=fit.prefactor * _std(ln_a),
        prefactor_ci=(unit * safe_exp(lo_a), unit * safe_exp(hi_a)),
        pivot_radius_ci=(safe_exp(lo_p), safe_exp(hi_p)),
        ci_method=_method(t0_redraw is not None),
        n_resamples=n,
    )


def _method(redrawn) -> str:
    redraw = "; t0 re-drawn uniformly in its bracket" if redrawn else "; t0 fixed"
    return f"residual bootstrap, 2.5–97.5 percentiles{redraw}"


def bootstrap_blend(
    series: Series, fit: BlendFit, *, f_scale, n, seed, t0_redraw, **spec
) -> BlendFit:
    """The blend with bootstrap intervals for its exponents and crossover time (one by one).

    `t0_redraw` as for :func:`bootstrap_linear`; `spec` is the model's
    specification as given to :func:`blend_fit` (kind, early, late, sharpness).
    """
    rng = np.random.default_rng(seed)
    lo, hi = fit.t0_bracket
    data = series.subset(series.time > hi)
    kind = spec.get("kind", "blend")
    early, late, sharpness = spec.get("early"), spec.get("late"), spec.get("sharpness")
    model, _, _ = build_model(data, kind, early, late, sharpness, lo, hi, fit.t0, fit.direction)
    # The best parameters, recovered from the record in the model's layout.
    best = _theta_from_fit(model, fit)
    fitted = model.log_radius(best, data.time)
    e = (data.y - fitted) / data.s
    e = e - e.mean()
    idx, t0s = _draws(len(data), fit.t0, t0_redraw, n, rng)
    fixed_names = [k for k in model.names() if k != "t0"]
    n1s, n2s, tcs = [], [], []
    for b in range(n):
        sub = dataclasses.replace(model, t0_fixed=float(t0s[b]))
        resampled = Series(data.time, fitted + data.s * e[idx[b]], data.s, data.weighted)
        _, x0, bounds = build_model(
            resampled, kind, early, late, sharpness, t0s[b], t0s[b], None, model.direction
        )
        x0 = np.array([best[model.names().index(k)] for k in fixed_names])
        x0 = np.clip(x0, bounds[0] + 1e-9, bounds[1] - 1e-9)
        try:
            res = least_squares_fit(
                sub, resampled, x0, bounds, loss=fit.loss, f_scale=f_scale, max_nfev=200
            )
        except ValueError:
            continue
        p = sub.unpack(res.x)
        n1, n2 = sub.exponents(res.x)
        n1s.append(n1)
        n2s.append(n2)
        tcs.append(math.exp(p["lntc"]))
    return dataclasses.replace(
        fit,
        early_exponent_ci=(
            fit.early_exponent_ci if early is not None else _interval(n1s, fit.early_exponent)
        ),
        late_exponent_ci=(
            fit.late_exponent_ci if late is not None else _interval(n2s, fit.late_exponent)
        ),
        crossover_time_ci=_interval(tcs, fit.crossover_time),
        ci_method=_method(t0_redraw is not None),
        n_resamples=len(tcs),
    )


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
