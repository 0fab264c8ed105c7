"""Windows and crossovers: where each law holds, and whether the series has two regimes.

A candidate's window is the longest stretch of the local exponent's grid
where the law's own local exponent (n, or ``1 + 1/ln(uτ/R)`` for the log
law) lies inside the band, widened by the exponent tolerance of check (a)
(:data:`EXPONENT_TOLERANCE`); isolated grid points
outside (up to `max_gap`, 0.1 decade by default) do not break a stretch.

Two regimes are kept only when the information criterion prefers them
clearly: the best two-regime model must have an AIC (Akaike's, with the
noise scale estimated: ``N ln(χ²/N) + 2k``) more than :data:`AIC_THRESHOLD`
= 10 below the best one-regime model (a power law with n free, or any
catalogue law, the log law included), and its crossover must leave at least
a third of a decade and :data:`MIN_POINTS` points on each side. A model
whose exponents are fitted (not a pair of catalogue laws) must also change
the exponent by more than :data:`MIN_EXPONENT_CHANGE`: a smaller bend (a
neck slowing as it nears the drop size, a contact instant slightly off) is
one law within the tolerance the verdict allows it, not two regimes. The
two-regime models are a harmonic blend with free exponents and a broken
power law; when they gain more than 5, also the harmonic blends of every
ordered pair of catalogue laws whose exponents change the way the data's
do (the sign of the curvature of ``ln r`` against ``ln τ``), and the best of
those again with a free sharpness (kept when it gains more than 10).

Examples
--------
>>> import numpy as np
>>> from dropkin.fitting import local_exponent
>>> t = np.linspace(1e-5, 1e-2, 3000)
>>> loc = local_exponent(t, 0.02 * t**0.5, radius_err=1e-6 + 0 * t)
>>> lo, hi = consistent_window(loc, LawShape(0.5))
>>> round(float(np.log10(hi / lo)), 1)
3.0
>>> consistent_window(loc, LawShape(1.0)) is None
True
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from ._core import MIN_DECADES, MIN_POINTS, LawShape, Series
from ._initial import with_initial_radius
from ._linear import LinearModel, linear_fit
from ._local import LocalExponent
from ._records import BlendFit, LawFit
from ._two_laws import blend_fit

__all__ = [
    "AIC_THRESHOLD",
    "EXPONENT_TOLERANCE",
    "MIN_EXPONENT_CHANGE",
    "ModelScore",
    "consistent_window",
]

#: Allowance added to each side of a local-exponent band (and, by the verdict,
#: of a fitted exponent interval): the accuracy asked of a fitted exponent.
EXPONENT_TOLERANCE = 0.02

#: A two-regime model is kept only when its AIC is this much below the best one-regime model.
AIC_THRESHOLD = 10.0
#: A two-regime model with fitted exponents counts only when they differ by more than this:
#: twice the tolerance, so that no single exponent lies within the tolerance of both sides
#: (one law would then pass check (a) on each side, and the verdict could not call them two).
MIN_EXPONENT_CHANGE = 2.0 * EXPONENT_TOLERANCE
#: The free two-regime models must already gain this much before catalogue pairs are tried.
_PAIR_GATE = 5.0


@dataclass(frozen=True)
class ModelScore:
    """One model fitted to the whole series, for the comparison of one and two regimes.

    Attributes
    ----------
    name : str
        E.g. ``"power law, n free"``, ``"t^0.5"``, ``"blend t^1 → t^0.5"``.
    regimes : int
        1 or 2.
    aic : float
        Its AIC (NaN when the fit failed).
    n_params : int
        Its fitted parameters.
    fit : LawFit or BlendFit
        The fit itself.
    """

    name: str
    regimes: int
    aic: float
    n_params: int
    fit: object = field(repr=False)


def consistent_window(
    local: LocalExponent, shape: LawShape, *, tolerance=EXPONENT_TOLERANCE, max_gap=2
):
    """The longest stretch (τ_start, τ_end) where the law's local exponent fits the band.

    Returns None when the local exponent failed or no grid point agrees.
    """
    if not local:
        return None
    theory = shape.slope(local.time)
    ok = (theory >= local.lower - tolerance) & (theory <= local.upper + tolerance)
    ok &= local.time <= shape.domain_end
    ok = _close_gaps(ok, max_gap)
    best, start = None, None
    for i, flag in enumerate(np.append(ok, False)):
        if flag and start is None:
            start = i
        elif not flag and start is not None:
            if best is None or i - start > best[1] - best[0]:
                best = (start, i)
            start = None
    if best is None:
        return None
    h = 0.5 * math.log(10.0) / local.points_per_decade
    i, j = best[0], best[1] - 1
    return float(local.time[i] * math.exp(-h)), float(local.time[j] * math.exp(h))


def _close_gaps(ok, max_gap):
    ok = ok.copy()
    idx = np.flatnonzero(ok)
    for a, b in zip(idx[:-1], idx[1:], strict=True):
        if 1 < b - a <= max_gap + 1:
            ok[a:b] = True
    return ok


def points_in(data: Series, t0, window) -> Series | None:
    """The points whose time since t0 lies in the window, or None if too few or too short."""
    tau = data.time - t0
    mask = (tau >= window[0]) & (tau <= window[1])
    if mask.sum() < MIN_POINTS:
        return None
    inside = tau[mask]
    if math.log10(inside[-1]) - math.log10(inside[0]) < MIN_DECADES:
        return None
    return data.subset(mask)


@dataclass(frozen=True)
class CrossoverSearch:
    """The comparison of one- and two-regime models over a whole series (private).

    Attributes
    ----------
    free : LawFit
        The power law with n free.
    singles : dict
        LawShape → LawFit of that law (prefactor free) over the series.
    models : tuple of ModelScore
        Every model fitted, one- and two-regime.
    pairs : dict
        (early LawShape, late LawShape) → harmonic BlendFit of the two laws.
    context : tuple or None
        The pair of laws whose blend fits best (with its crossover inside the data).
    context_fit : BlendFit or None
        That blend, with a free sharpness when this beats the harmonic form by
        more than :data:`AIC_THRESHOLD`.
    direction : int
        -1 when the local exponent falls along the series (curvature of ln r
        against ln τ below 0), +1 when it rises.
    best_single, best_two : ModelScore or None
    delta_aic : float
        AIC of the best one-regime model minus that of the best two-regime one.
    two_regime : bool
    reason : str
        Why two regimes were kept or not, in words.
    initial : LawFit or None
        The one-regime law with a finite initial radius, when it was tried and
        the information criterion kept it (it then competes with the others).
    """

    free: LawFit
    singles: dict
    models: tuple
    pairs: dict
    context: tuple | None
    context_fit: BlendFit | None
    direction: int
    best_single: ModelScore | None
    best_two: ModelScore | None
    delta_aic: float
    two_regime: bool
    reason: str
    initial: LawFit | None = None


def _best(models):
    good = [m for m in models if math.isfinite(m.aic)]
    return min(good, key=lambda m: m.aic) if good else None


def sides_ok(data: Series, fit: BlendFit) -> bool:
    """Whether a crossover leaves a third of a decade and 8 points on each side."""
    tau = data.time - fit.t0
    tc = fit.crossover_time
    early, late = tau[tau < tc], tau[tau > tc]
    if len(early) < MIN_POINTS or len(late) < MIN_POINTS:
        return False
    return (
        math.log10(tc) - math.log10(early[0]) >= MIN_DECADES
        and math.log10(late[-1]) - math.log10(tc) >= MIN_DECADES
    )


def exponents_differ(fit: BlendFit) -> bool:
    """Whether a two-regime fit changes the exponent by more than :data:`MIN_EXPONENT_CHANGE`.

    Always true for a blend of two catalogue laws (their exponents are the laws').
    """
    if fit.exponents_fixed:
        return True
    return bool(abs(fit.early_exponent - fit.late_exponent) > MIN_EXPONENT_CHANGE)


def _no_two_reason(two, data) -> str:
    """Why no two-regime model was kept although some were fitted."""
    bends = [m for m in two if sides_ok(data, m.fit) and not exponents_differ(m.fit)]
    if not bends:
        return "no two-regime model with a crossover inside the data"
    best = min(bends, key=lambda m: m.aic)
    change = abs(best.fit.early_exponent - best.fit.late_exponent)
    return (
        f"the best two-regime fit inside the data ({best.name}) changes the exponent by "
        f"only {change:.3f} (≤ {MIN_EXPONENT_CHANGE:g}): a bend within one law, not two regimes"
    )


def curvature_direction(data: Series, t0) -> int:
    """-1 if ``ln r`` bends down against ``ln τ`` (a weighted quadratic polyfit), else +1."""
    x = np.log(data.time - t0)
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error")  # times (nearly) equal: RankWarning
            c2 = np.polyfit(x - x.mean(), data.y, 2, w=1.0 / data.s)[0]
    except (Warning, TypeError, ValueError, np.linalg.LinAlgError):
        return 1  # too few distinct times to see a bend: as for c2 = 0
    return -1 if c2 < 0 else 1


def _pairs(shapes, tau, direction):
    """Ordered pairs of distinct laws whose exponents change the way the data do."""
    middle = float(np.exp(np.mean(np.log(tau))))
    out = []
    for a in shapes:
        for b in shapes:
            if a == b or a.domain_end < middle or b.domain_end < tau[-1]:
                continue
            ea, eb = float(np.mean(a.slope(tau))), float(np.mean(b.slope(tau)))
            if ea != eb and (ea > eb) == (direction < 0):
                out.append((a, b))
    return out


def _catalogue_pairs(data: Series, shapes, lo, hi, start, direction):
    """Harmonic blends of the catalogue pairs, and the best one inside the data.

    Returns the pairs' fits, the best pair inside the data and its fit (with
    a free sharpness when that beats the harmonic form by more than
    :data:`AIC_THRESHOLD`), and the scores of every model tried.
    """
    start = dict(start)
    pairs, context, context_fit, tried = {}, None, None, []
    for a, b in _pairs(shapes, data.time - start["t0_start"], direction):
        fit = blend_fit(data, lo, hi, kind="blend", early=a, late=b, sharpness=1.0, **start)
        if fit:
            pairs[(a, b)] = fit
            tried.append(
                ModelScore(f"harmonic {a.label} → {b.label}", 2, fit.aic, fit.n_params, fit)
            )
    inside = {k: f for k, f in pairs.items() if sides_ok(data, f)}
    if inside:
        context = min(inside, key=lambda k: inside[k].aic)
        context_fit = inside[context]
        start["t0_start"] = context_fit.t0
        sharp = blend_fit(data, lo, hi, kind="blend", early=context[0], late=context[1], **start)
        if sharp:
            tried.append(
                ModelScore(
                    f"blend {context[0].label} → {context[1].label}",
                    2,
                    sharp.aic,
                    sharp.n_params,
                    sharp,
                )
            )
            if sharp.aic < context_fit.aic - AIC_THRESHOLD and sides_ok(data, sharp):
                context_fit = sharp
    return pairs, context, context_fit, tried


def _single_models(data, shapes, lo, hi, kw, initial_radius):
    """The one-regime fits: n free, each law's shape, and (when asked and kept) r0 + n free."""
    free = linear_fit(data, LinearModel(None), lo, hi, **kw)
    singles = {s: linear_fit(data, LinearModel(s), lo, hi, **kw) for s in shapes}
    models = [ModelScore("power law, n free", 1, free.aic, free.n_params, free)]
    models += [ModelScore(s.label, 1, f.aic, f.n_params, f) for s, f in singles.items() if f]
    initial = with_initial_radius(data, free, **kw) if free and initial_radius else None
    initial = initial if initial is not None and initial.initial_radius_fitted else None
    if initial is not None:
        name = "power law with a finite initial radius, n free"
        models.append(ModelScore(name, 1, initial.aic, initial.n_params, initial))
    return free, singles, models, initial


def search_crossover(
    data: Series, shapes, lo, hi, *, loss, f_scale, initial_radius=False
) -> CrossoverSearch:
    """Fit the one- and two-regime models and decide whether two regimes are needed.

    With `initial_radius`, the power law with a finite initial radius r0 is one
    of the one-regime models when the AIC keeps it over the law without r0.
    """
    kw = {"loss": loss, "f_scale": f_scale}
    free, singles, models, initial = _single_models(data, shapes, lo, hi, kw, initial_radius)
    best_single = _best(models)
    one = {"free": free, "singles": singles, "best_single": best_single, "initial": initial}
    none = {"best_two": None, "delta_aic": 0.0, "two_regime": False}
    if len(data) < 2 * MIN_POINTS or not free:
        return CrossoverSearch(
            models=tuple(models), pairs={}, context=None, context_fit=None, direction=-1,
            reason="too few points for two regimes", **one, **none,
        )  # fmt: skip
    direction = curvature_direction(data, free.t0)
    start = {**kw, "t0_start": free.t0, "direction": direction}
    harmonic = blend_fit(data, lo, hi, kind="blend", sharpness=1.0, **start)
    broken = blend_fit(data, lo, hi, kind="broken", **start)
    two = [
        ModelScore("harmonic blend, exponents free", 2, harmonic.aic, harmonic.n_params, harmonic),
        ModelScore("broken power law", 2, broken.aic, broken.n_params, broken),
    ]
    two = [m for m in two if m.fit]
    free_two = _best(two)
    pairs, context, context_fit = {}, None, None
    if free_two is not None and best_single.aic - free_two.aic > _PAIR_GATE:
        start["t0_start"] = free_two.fit.t0
        pairs, context, context_fit, tried = _catalogue_pairs(
            data, shapes, lo, hi, start, direction
        )
        two += tried
    inside = [m for m in two if sides_ok(data, m.fit) and exponents_differ(m.fit)]
    best_two = _best(inside)
    models += two
    found = {"models": tuple(models), "pairs": pairs, "context": context,
             "context_fit": context_fit, "direction": direction}  # fmt: skip
    if best_two is None:
        return CrossoverSearch(reason=_no_two_reason(two, data), **found, **one, **none)
    delta = best_single.aic - best_two.aic
    keep = delta > AIC_THRESHOLD
    reason = (
        f"{best_two.name} beats {best_single.name} by ΔAIC = {delta:.1f}"
        if keep
        else f"two regimes gain only ΔAIC = {delta:.1f} (≤ {AIC_THRESHOLD:g}) "
        f"over {best_single.name}"
    )
    return CrossoverSearch(
        best_two=best_two, delta_aic=delta, two_regime=keep, reason=reason, **found, **one
    )
