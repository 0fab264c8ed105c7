"""Uncertainty: a seeded residual bootstrap that also re-draws t0, and material uncertainty.

Bootstrap (residual, not pairs, so that the frame times stay those of the
camera): the normalised residuals of the best fit are resampled with
replacement, put back onto the fitted curve with each point's own σ, and
the law is fitted again; when t0 was free, each resample also draws t0
uniformly inside the contact bracket and keeps it fixed there, so the
intervals carry the contact-instant uncertainty in full (a conservative
choice). Intervals are the 2.5 and 97.5 percentiles, widened where needed
to contain the best estimate (drawing t0 over the whole bracket can shift
the resampled values when the best t0 lies near one end). Fits that are linear
at a given origin (power laws, the log law) are refitted all at once,
batched in numpy; blends are refitted one by one with scipy.

Material uncertainty: the published prefactor times the group, ``C · Π q_i^p_i``,
has the relative uncertainty ``sqrt(Σ (p_i u_i)²)`` for relative
uncertainties u_i of the material values (first-order propagation; the
volume counts as ``R³``). Defaults: 2 % for every material value, 0 for
gravity (:data:`DEFAULT_MATERIAL_UNCERTAINTY`).

Examples
--------
>>> from dropkin.scaling import regime
>>> round(group_relative_uncertainty(regime("inertial"), resolve_material_uncertainty()), 5)
0.00866
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping
from types import MappingProxyType

import numpy as np

from ..errors import FitError
from ._blends import BlendFit, TwoLawModel, least_squares_fit
from ._core import Series, safe_exp, solve_linear
from ._power import LawFit, LinearModel

__all__ = [
    "DEFAULT_MATERIAL_UNCERTAINTY",
    "resolve_material_uncertainty",
    "group_relative_uncertainty",
]

#: Relative standard uncertainties assumed for the material values (2 % each, stated default).
DEFAULT_MATERIAL_UNCERTAINTY = MappingProxyType(
    {
        "surface_tension": 0.02,
        "viscosity": 0.02,
        "density": 0.02,
        "radius": 0.02,
        "outer_viscosity": 0.02,
        "outer_density": 0.02,
        "contact_angle": 0.02,
        "gravity": 0.0,
    }
)

_PERCENTILES = (2.5, 97.5)


def resolve_material_uncertainty(given: Mapping[str, float] | None = None) -> Mapping[str, float]:
    """The relative uncertainties to use: the defaults, updated with `given`.

    Raises
    ------
    FitError
        For an unknown name or a value that is not a finite number ≥ 0.
    """
    out = dict(DEFAULT_MATERIAL_UNCERTAINTY)
    for name, value in (given or {}).items():
        if name not in out:
            raise FitError(
                "is not a material value",
                key="material_uncertainty",
                value=name,
                expected=", ".join(out),
            )
        ok = isinstance(value, int | float) and not isinstance(value, bool)
        if not (ok and math.isfinite(value) and value >= 0):
            raise FitError(
                "must be a relative uncertainty ≥ 0 (0.02 for 2 %)",
                key=f"material_uncertainty.{name}",
                value=value,
            )
        out[name] = float(value)
    return MappingProxyType(out)


def group_relative_uncertainty(regime, relative: Mapping[str, float]) -> float:
    """Relative uncertainty of a regime's group from those of the material values."""
    total = 0.0
    for name, power in regime.group_powers.items():
        if name == "volume":
            total += (3.0 * float(power) * relative["radius"]) ** 2
        else:
            total += (float(power) * relative.get(name, 0.0)) ** 2
    if regime.angle_power:
        total += (regime.angle_power * relative["contact_angle"]) ** 2
    return math.sqrt(total)


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


def _draws(n_points, fit_t0, free, bracket, n, rng):
    idx = rng.integers(0, n_points, size=(n, n_points))
    t0s = rng.uniform(bracket[0], bracket[1], n) if free else np.full(n, fit_t0)
    return idx, t0s


def bootstrap_linear(series: Series, model: LinearModel, fit: LawFit, *, f_scale, n, seed):
    """The fit with bootstrap intervals for n, A and r_p (batched refits)."""
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
    idx, t0s = _draws(len(tau), fit.t0, fit.t0_free, fit.t0_bracket, n, rng)
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
        ci_method=_method(fit.t0_free),
        n_resamples=n,
    )


def _method(free) -> str:
    redraw = "; t0 re-drawn uniformly in its bracket" if free else "; t0 fixed"
    return f"residual bootstrap, 2.5–97.5 percentiles{redraw}"


def bootstrap_blend(series: Series, fit: BlendFit, *, f_scale, n, seed, **spec) -> BlendFit:
    """The blend with bootstrap intervals for its exponents and crossover time (one by one)."""
    from ._blends import build_model

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
    idx, t0s = _draws(len(data), fit.t0, fit.t0_free, fit.t0_bracket, n, rng)
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
        ci_method=_method(fit.t0_free),
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
