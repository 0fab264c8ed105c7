"""The evidence for each candidate: its window and fits, for one regime or a crossover's sides.

One regime: for each law form among the candidates, the window where the
local exponent agrees with it, a power law with n free over that window
(bootstrap interval), and the law itself with its prefactor free (over the
window, or the whole series when there is no window). Two regimes: the
blend of two catalogue laws with the lowest AIC fixes the crossover; for
each side, that blend refitted with this side's exponent free (the other
law and the sharpness kept) gives the exponent and its interval; each
candidate's prefactor and AIC come from the blend of its law with the
other side's law.

Examples
--------
>>> from dropkin.scaling import regime, sample_numbers
>>> water = sample_numbers(surface_tension=0.0727, viscosity=1e-3, density=998.0, radius=1e-3)
>>> t, how = predicted_crossover(water, "spreading", regime("inertial-spreading"),
...                              regime("tanner"))
>>> round(t * 1e3, 1), how.split(" = ")[0]
(17.5, 'C (γR/ρ)^(1/4) t^(1/2)')
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np

from ...errors import ExperimentError
from ...fitting._bootstrap import bootstrap_blend, bootstrap_linear
from ...fitting._core import apparent_exponent
from ...fitting._linear import LinearModel, linear_fit
from ...fitting._local import local_from_series
from ...fitting._two_laws import blend_fit
from ...fitting._windows import consistent_window, points_in
from ..regimes._crossovers import crossovers, power_law_crossing
from ._initial import free_fit, shifted_series, widened_for_initial_radius
from ._judge import EXPONENT_TOLERANCE, judge, rank
from ._materials import group_relative_uncertainty
from ._systematics import edge_interval, level_estimates

__all__ = ["CrossoverFit", "predicted_crossover", "evaluate_one_regime", "evaluate_two_regimes"]

_NAN2 = (math.nan, math.nan)


@dataclass(frozen=True)
class CrossoverFit:
    """A crossover found in the data.

    Attributes
    ----------
    early, late : str
        Keys of the regimes before and after.
    time : float
        Time since contact at which their laws meet (s).
    time_ci : tuple of float
        Its 95 % interval (bootstrap, or normal approximation when bootstrap = 0).
    radius : float
        The laws' common radius there (m).
    predicted_time : float or None
        The catalogue's estimate for the sample (s), when it has one.
    predicted_formula : str
        How the prediction was made.
    sharpness : float
        Sharpness s of the blend (1 is the harmonic form).
    delta_aic : float
        How much the two-regime model beats the best one-regime model.
    model : str
        The two-regime model that located it.
    """

    early: str
    late: str
    time: float
    time_ci: tuple[float, float]
    radius: float
    predicted_time: float | None
    predicted_formula: str
    sharpness: float
    delta_aic: float
    model: str


def predicted_crossover(numbers, geometry, early, late):
    """The catalogue's crossover time for two regimes, and how it was made.

    The crossovers of :func:`crossovers` first (the phase diagram's: they
    leave the ILV stage, whose linear law ``C_v (γ/η) t`` also stands for a
    viscous side fitted with the log law); else
    the crossing of the two published laws (C = 1 where none is published).
    Returns ``(None, "")`` when neither applies.
    """
    try:
        known = crossovers(numbers, geometry)
    except ExperimentError:
        known = ()
    linear_like = {"viscous", "inertially-limited-viscous"}
    for x in known:
        if x.late == late.key and (
            x.early == early.key or (x.early in linear_like and early.key in linear_like)
        ):
            return x.time, x.formula
    if early.logarithmic or late.logarithmic or early.exponent == late.exponent:
        return None, ""
    g1, g2 = early.group(numbers), late.group(numbers)
    if g1 is None or g2 is None:
        return None, ""
    c1 = 1.0 if early.prefactor is None else early.prefactor
    c2 = 1.0 if late.prefactor is None else late.prefactor
    t, _ = power_law_crossing(c1 * g1, early.exponent, c2 * g2, late.exponent)
    return t, "crossing of the two published laws"


def _expected_exponent(shape, points, t0, f_scale):
    """What the free power-law fit reports if the law holds exactly on these points.

    For a power law, n. For the log law, the same robust weighted fit (t0
    fixed) applied to the law's own values, so that the weights the robust
    loss gives to the law's curvature are reproduced.
    """
    if not shape.logarithmic:
        return float(shape.exponent)
    exact = dataclasses.replace(points, y=shape.log_shape(points.time - t0))
    fit = linear_fit(exact, LinearModel(None), t0, t0, loss="soft_l1", f_scale=f_scale)
    return fit.exponent if fit else apparent_exponent(shape, points.time - t0, 1.0 / points.s**2)


def _shape_evidence(
    data, view, shape, local, t0, lo, hi, f_scale, search, bootstrap, seed, levels
):
    # Over 80 lines only by the evidence dict it returns (one key a line).
    # `view` is `data`, or its points with a finite initial radius taken away.
    window = consistent_window(local, shape, tolerance=EXPONENT_TOLERANCE)
    seen = points_in(view, t0, window) if window is not None else None
    pts = None if seen is None else data.subset(np.isin(data.time, seen.time))
    fit_kw = {"loss": "soft_l1", "f_scale": f_scale}
    if pts is not None:
        free = free_fit(pts, data, lo, hi, search, fit_kw, bootstrap, seed)
    if pts is None or not free:
        pts, seen, free = None, None, None
    whole = (seen is None or len(seen) == len(view)) and view is data
    on = view if seen is None else seen
    fixed = (
        search.singles[shape] if whole else linear_fit(on, LinearModel(shape), lo, hi, **fit_kw)
    )
    if fixed and bootstrap:
        fixed = bootstrap_linear(
            on, LinearModel(shape), fixed, f_scale=f_scale, n=bootstrap, seed=seed
        )
    fixed = widened_for_initial_radius(fixed, data, on, shape, search.initial, (lo, hi), fit_kw)
    expected = _expected_exponent(shape, on, free.t0 if free else t0, f_scale)
    n_sys = a_sys = _NAN2
    if levels:
        ns, prefactors = level_estimates(
            levels, on.time[0], on.time[-1], shape, bool(free), lo, hi, fit_kw
        )
        n_sys = edge_interval(free.exponent, ns) if free else _NAN2
        a_sys = edge_interval(fixed.prefactor, prefactors) if fixed else _NAN2
    return {
        "exponent_expected": expected,
        "exponent_fit": free.exponent if free else math.nan,
        "exponent_ci": free.exponent_ci if free else _NAN2,
        "window": None if pts is None else (float(pts.time[0] - t0), float(pts.time[-1] - t0)),
        "prefactor_fit": fixed.prefactor if fixed else math.nan,
        "prefactor_fit_ci": fixed.prefactor_ci if fixed else _NAN2,
        "exponent_sys_ci": n_sys,
        "prefactor_sys_ci": a_sys,
        "aic": search.singles[shape].aic,
        "fit": free,
        "law_fit": fixed,
    }


def evaluate_one_regime(
    *,
    data,
    lo,
    hi,
    f_scale,
    cands,
    shapes,
    search,
    relative,
    bootstrap,
    seed,
    numbers,
    geometry,
    levels=(),
):
    """Ranked candidates of a one-regime series (on ``r - r0`` when the search kept r0)."""
    initial = search.initial
    t0 = search.free.t0 if initial is None else initial.t0
    view = data if initial is None else shifted_series(data, initial.initial_radius)
    local = local_from_series(view, t0, (lo, hi))
    evidence = {}
    for shape in dict.fromkeys(shapes.values()):
        evidence[shape] = _shape_evidence(
            data, view, shape, local, t0, lo, hi, f_scale, search, bootstrap, seed, levels
        )
    fits = [
        judge(
            c,
            segment="all",
            shape=shapes[c.regime.key],
            group_rel_err=group_relative_uncertainty(c.regime, relative),
            **evidence[shapes[c.regime.key]],
        )
        for c in cands
    ]
    whole = search.free if initial is None else initial
    if bootstrap and whole.t0_free:
        # A candidate whose window held every point has this very fit, bootstrapped
        # with the same seed already; otherwise it is made here.
        done = [e["fit"] for e in evidence.values() if e["fit"] and e["fit"].n_points == len(data)]
        fit_kw = {"loss": "soft_l1", "f_scale": f_scale}
        whole = done[0] if done else free_fit(data, data, lo, hi, search, fit_kw, bootstrap, seed)
    return {
        "sides": (rank(fits),),
        "crossovers": (),
        "local": local,
        "t0": t0,
        "t0_ci": tuple(whole.t0_ci),
    }


def _side_exponent(data, lo, hi, side, context, pair_key, f_scale, bootstrap, seed):
    """This side's exponent: the blend refitted with it free, the other law and s kept."""
    early, late = (None, pair_key[1]) if side == "early" else (pair_key[0], None)
    spec = {
        "kind": "blend",
        "early": early,
        "late": late,
        "sharpness": context.sharpness,
        "direction": context.direction,
    }
    tc = context.crossover_time
    tau = data.time - context.t0
    if side == "early":
        n = apparent_exponent(pair_key[0], tau[tau < tc])
        first = {"n1": n, "lnA1": math.log(context.crossover_radius) - n * math.log(tc)}
    else:
        u1 = pair_key[0].prefactor_unit_factor()
        first = {
            "n2": apparent_exponent(pair_key[1], tau[tau > tc]),
            "lnA1": math.log(context.early_prefactor / u1),
        }
    first.update({"lntc": math.log(tc), "t0": context.t0})
    fit = blend_fit(
        data, lo, hi, loss="soft_l1", f_scale=f_scale, t0_start=context.t0, start=first, **spec
    )
    if fit and bootstrap:
        fit = bootstrap_blend(data, fit, f_scale=f_scale, n=bootstrap, seed=seed, **spec)
    return fit


def _side_levels(levels, lo, hi, context, pair_key, f_scale, seed):
    """Per side, the edge levels' point estimates: ([n], [A of the context pair's law])."""
    out = {"early": ([], []), "late": ([], [])}
    if pair_key is None:
        return out
    for level in levels:
        pair = blend_fit(
            level,
            lo,
            hi,
            kind="blend",
            early=pair_key[0],
            late=pair_key[1],
            sharpness=context.sharpness,
            direction=context.direction,
            loss="soft_l1",
            f_scale=f_scale,
            t0_start=context.t0,
        )
        for side in ("early", "late"):
            free = _side_exponent(level, lo, hi, side, context, pair_key, f_scale, 0, seed)
            n = free.early_exponent if side == "early" else free.late_exponent
            a = pair.early_prefactor if side == "early" else pair.late_prefactor
            out[side][0].append(n if free else math.nan)
            out[side][1].append(a if pair else math.nan)
    return out


def evaluate_two_regimes(
    *,
    data,
    lo,
    hi,
    f_scale,
    cands,
    shapes,
    search,
    relative,
    bootstrap,
    seed,
    numbers,
    geometry,
    levels=(),
):
    """Ranked candidates on each side of the crossover, and the crossover itself."""
    pair_key, context = search.context, search.context_fit
    if context is None:
        context = search.best_two.fit
    t0 = context.t0
    local = local_from_series(data, t0, (lo, hi))
    if pair_key is not None and bootstrap:
        context = bootstrap_blend(
            data,
            context,
            f_scale=f_scale,
            n=bootstrap,
            seed=seed,
            kind="blend",
            early=pair_key[0],
            late=pair_key[1],
            sharpness=context.sharpness if context.sharpness_fixed else None,
        )
    tc = context.crossover_time
    tau = data.time - t0
    at_levels = _side_levels(levels, lo, hi, context, pair_key, f_scale, seed)
    sides = []
    for side in ("early", "late"):
        taus = tau[tau < tc] if side == "early" else tau[tau > tc]
        window = (float(tau[0]), tc) if side == "early" else (tc, float(tau[-1]))
        if pair_key is not None:
            free = _side_exponent(data, lo, hi, side, context, pair_key, f_scale, bootstrap, seed)
        else:
            free = context
        if free:
            n_fit = free.early_exponent if side == "early" else free.late_exponent
            ci = free.early_exponent_ci if side == "early" else free.late_exponent_ci
        else:
            n_fit, ci = math.nan, _NAN2
        n_sys = edge_interval(n_fit, at_levels[side][0]) if levels else _NAN2
        side_fit = {"n_fit": n_fit, "ci": ci, "n_sys": n_sys, "taus": taus, "window": window}
        fits = [
            _side_candidate(
                c, side, side_fit, free, context, pair_key, search, shapes, at_levels, relative
            )  # fmt: skip
            for c in cands
        ]
        sides.append(rank(fits))
    early, late = sides[0][0].regime, sides[1][0].regime
    predicted, how = predicted_crossover(numbers, geometry, early, late)
    crossover = CrossoverFit(
        early=early.key,
        late=late.key,
        time=tc,
        time_ci=context.crossover_time_ci,
        radius=context.crossover_radius,
        predicted_time=predicted,
        predicted_formula=how,
        sharpness=context.sharpness,
        delta_aic=search.delta_aic,
        model=context.model,
    )
    return {
        "sides": tuple(sides),
        "crossovers": (crossover,),
        "local": local,
        "t0": t0,
        "t0_ci": tuple(context.t0_ci),
    }


def _side_candidate(
    c, side, side_fit, free, context, pair_key, search, shapes, at_levels, relative
):
    """One candidate judged on one side of the crossover (its pair's prefactor, if fitted)."""
    shape = shapes[c.regime.key]
    pf = key = None
    if pair_key is not None:
        key = (shape, pair_key[1]) if side == "early" else (pair_key[0], shape)
        pf = context if key == pair_key else search.pairs.get(key)
    prefactor, a_ci, a_sys = math.nan, _NAN2, _NAN2
    if pf:
        prefactor = pf.early_prefactor if side == "early" else pf.late_prefactor
        a_ci = pf.early_prefactor_ci if side == "early" else pf.late_prefactor_ci
    if pf and at_levels[side][1] and key == pair_key:
        a_sys = edge_interval(prefactor, at_levels[side][1])
    return judge(
        c,
        segment=side,
        shape=shape,
        exponent_expected=apparent_exponent(shape, side_fit["taus"]),
        exponent_fit=side_fit["n_fit"],
        exponent_ci=side_fit["ci"],
        window=side_fit["window"],
        prefactor_fit=prefactor,
        prefactor_fit_ci=a_ci,
        exponent_sys_ci=side_fit["n_sys"],
        prefactor_sys_ci=a_sys,
        aic=pf.aic if pf else math.nan,
        group_rel_err=group_relative_uncertainty(c.regime, relative),
        fit=free,
        law_fit=pf,
    )
