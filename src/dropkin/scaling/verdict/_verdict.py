"""The regime verdict: which catalogue law governs a radius series, and why, in one sentence.

:func:`analyze_series` takes the measured series (``ok`` frames only), the
contact instant and its bracket, and the sample's numbers. It fits the
one- and two-regime models (:mod:`._windows`), computes the local exponent
(:mod:`._local`), confronts every candidate regime of the catalogue with
the data (checks a–d of :mod:`._judge`) and ranks them. All times it
reports count from the fitted contact instant t0.

Examples
--------
>>> import numpy as np
>>> from dropkin.scaling import sample_numbers
>>> water = sample_numbers(surface_tension=0.07274, viscosity=1.0016e-3, density=998.2,
...                        radius=1e-3, outer_viscosity=1.81e-5, outer_density=1.204)
>>> t = np.arange(400) * 2e-6                             # 500 kfps
>>> tau = t - 1.3e-5                                      # contact between frames 6 and 7
>>> r = 1.2 * 0.01642 * np.sqrt(np.clip(tau, 0, None))    # inertial law, D0 = 1.2
>>> status = np.where(tau > 0, "ok", "before-contact")
>>> v = analyze_series(t, r, np.full(400, 1e-6), status, contact_time=1.3e-5,
...                    contact_bracket=(1.2e-5, 1.4e-5), numbers=water,
...                    geometry="coalescence", bootstrap=20)
>>> v.regimes, v.decidable
(('inertial',), True)
>>> round(v.dominant.exponent_fit, 3)
0.5
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping
from dataclasses import dataclass, field

from ...contact._bracket import bracket_before_first_point
from ...fitting._core import (
    ROBUST_SCALE,
    LawShape,
    data_problem,
    make_series,
    noise_scale,
)
from ...fitting._groups import points_to_fit
from ...fitting._local import LocalExponent
from ...fitting._windows import AIC_THRESHOLD, EXPONENT_TOLERANCE, ModelScore, search_crossover
from ..regimes._catalogue import candidates
from ..regimes._numbers import SampleNumbers
from ._evidence import CrossoverFit, evaluate_one_regime, evaluate_two_regimes
from ._inputs import check_call, check_levels, finite, t0_bracket
from ._judge import PREFACTOR_BAND, CandidateFit, decide
from ._materials import resolve_material_uncertainty
from ._systematics import Z95
from ._text import verdict_sentence
from ._validity import validity_limit, within_validity
from ._warnings import VerdictWarning, verdict_warnings

__all__ = ["RegimeVerdict", "CrossoverFit", "CandidateFit", "analyze_series"]


@dataclass(frozen=True)
class RegimeVerdict:
    """Which regime governs a series, with the evidence.

    Attributes
    ----------
    success : bool
        False (and the record falsy) when the data cannot support a fit.
    reason : str
        Why not, in one sentence (``""`` on success).
    decidable : bool
        Whether one regime (per side of a crossover) is clearly preferred.
    sentence : str
        The verdict and its deciding evidence, in one line.
    regimes : tuple of str
        The best-ranked regime of each segment, in time order (one, or two
        across a crossover); see `decidable` for whether the data settle them.
    dominant : CandidateFit or None
        The regime that governs the longest stretch (decades) of the series.
    candidates : tuple of CandidateFit
        Every candidate, ranked within its segment (``all``, or ``early``
        then ``late``).
    crossovers : tuple of CrossoverFit
        Crossovers found (empty for one regime).
    two_regime : bool
        Whether two regimes were kept.
    delta_aic : float
        AIC of the best one-regime model minus that of the best two-regime model.
    models : tuple of ModelScore
        Every model fitted to the whole series.
    model_reason : str
        Why one or two regimes, in words.
    local : LocalExponent or None
        The local exponent along the series.
    t0 : float
        The contact instant used (s from the first frame).
    t0_ci : tuple of float
        Its 95 % interval (s from the first frame): the percentiles of t0
        refitted in every bootstrap resample (the normal approximation cut to
        the bracket without a bootstrap); ``(t0, t0)`` when fixed.
    t0_bracket : tuple of float
        The bracket t0 was fitted in (equal ends when fixed), cut to end just
        before the first ``ok`` frame.
    t0_fixed : bool
        Whether t0 was given by the user.
    n_points : int
        Points after contact used.
    time_range : tuple of float
        First and last time since contact of those points (s).
    numbers : SampleNumbers
        The sample.
    geometry, view : str
        As given.
    settings : Mapping
        Tolerances and thresholds used (``exponent_tolerance``, stated
        in the sentence whenever a verdict needs it,
        ``prefactor_band``, ``aic_threshold``, ``bootstrap``, ``seed``,
        ``material_uncertainty``, ``material_z``, ``loss``, ``robust_scale``,
        ``interval_combination``).
    edge_levels : tuple of float
        The other edge levels whose radii gave the systematic intervals
        (empty when only the main level was measured).
    validity_ratio : float or None
        The r/R bound the series was cut at (:mod:`._validity`); None: no cut.
    validity_regime : str
        The regime whose bound it is.
    n_beyond_validity : int
        Measured points after contact left out because r > validity_ratio × R.
    warnings : tuple of VerdictWarning
        What a reader of the numbers must know (:mod:`._warnings`).
    """

    success: bool
    reason: str
    decidable: bool = False
    sentence: str = ""
    regimes: tuple[str, ...] = ()
    dominant: CandidateFit | None = None
    candidates: tuple[CandidateFit, ...] = ()
    crossovers: tuple[CrossoverFit, ...] = ()
    two_regime: bool = False
    delta_aic: float = math.nan
    models: tuple[ModelScore, ...] = ()
    model_reason: str = ""
    local: LocalExponent | None = None
    t0: float = math.nan
    t0_ci: tuple[float, float] = (math.nan, math.nan)
    t0_bracket: tuple[float, float] = (math.nan, math.nan)
    t0_fixed: bool = False
    n_points: int = 0
    time_range: tuple[float, float] = (math.nan, math.nan)
    numbers: SampleNumbers | None = None
    geometry: str = ""
    view: str = ""
    settings: Mapping = field(default_factory=dict)
    edge_levels: tuple[float, ...] = ()
    validity_ratio: float | None = None
    validity_regime: str = ""
    n_beyond_validity: int = 0
    warnings: tuple[VerdictWarning, ...] = ()

    def __bool__(self) -> bool:
        return self.success


def _sources(relative, given) -> dict:
    """Where each relative uncertainty comes from; the stated default where none is named."""
    given = dict(given or {})
    return {name: given.get(name, "stated default") for name in relative}


def analyze_series(
    time,
    radius,
    radius_err,
    status,
    *,
    contact_time,
    contact_time_err=None,
    contact_bracket=None,
    numbers,
    geometry,
    view="side",
    t0=None,
    material_uncertainty=None,
    material_uncertainty_sources=None,
    seed=0,
    bootstrap=200,
    radius_levels=None,
    initial_radius=False,
) -> RegimeVerdict:
    # Over 80 lines only by its signature and numpydoc docstring; the body is 67 lines.
    """Decide which scaling regime governs a radius series.

    Parameters
    ----------
    time : (F,) array_like
        Frame times from the first frame (s), as radius.csv ``time_s``.
    radius, radius_err : (F,) array_like
        Radius and its standard uncertainty (m); NaN where none. `radius_err`
        may be None (all points then weigh the same in ``ln r``).
    status : (F,) sequence of str
        Per-frame status; only ``"ok"`` frames are used.
    contact_time : float or None
        The contact instant from ``measure.json`` (s from the first frame);
        may be None when `t0` is given.
    contact_time_err : float, optional
        Its standard uncertainty (s).
    contact_bracket : (float, float), optional
        Interval that holds the contact instant (s). Default: the bracket the
        frames prove, from the last ``before-contact`` frame to the first frame
        in contact, or else the frame interval that holds `contact_time`
        (:func:`dropkin.contact.default_bracket`).
        t0 is fitted inside it, and no later than just before the first
        ``ok`` frame after its start (a measured bridge means contact has
        happened); ``ok`` frames before its start are left out.
    numbers : SampleNumbers
        The sample's material values and numbers.
    geometry : str
        ``coalescence``, ``sessile-coalescence`` or ``spreading``.
    view : str
        ``side`` or ``bottom``.
    t0 : float, optional
        Fix the contact instant (s from the first frame) instead of fitting it.
    material_uncertainty : Mapping[str, float], optional
        Relative uncertainties of the material values (default 2 % each;
        see :data:`DEFAULT_MATERIAL_UNCERTAINTY`).
    material_uncertainty_sources : Mapping[str, str], optional
        Where each of them comes from (the liquid library, the experiment
        file, the stated default), recorded beside them in ``settings``.
    seed : int
        Seed of the bootstrap.
    bootstrap : int
        Bootstrap resamples (default 200; 0 gives normal-approximation intervals).
    radius_levels : Mapping[float, (F,) array_like], optional
        Radii of the same frames measured at other edge levels (level → radii,
        NaN where not measured). The fits are repeated on each (point
        estimates, same window and bracket); the range of the estimates is
        the systematic interval (:mod:`._systematics`).
    initial_radius : bool
        Also try ``r = r0 + A (t - t0)**n`` (r0 ≥ 0) for each candidate's
        free-exponent fit of a one-regime series, kept only where the AIC
        prefers it (:func:`dropkin.fitting.fit_power_law`, ``initial_radius``).

    Returns
    -------
    RegimeVerdict
        Falsy, with the reason, when fewer than 8 ``ok`` points follow
        contact, when they span less than a third of a decade, or when all lie
        before contact.

    Raises
    ------
    FitError
        For a bad call: arrays of different lengths, an unknown geometry or
        view, a bad bracket, bootstrap count or material uncertainty.
    """
    t, r, e, ok = check_call(
        time, radius, radius_err, status, numbers, geometry, view, seed, bootstrap
    )
    levels = check_levels(radius_levels, len(t))
    t0 = finite("t0", t0, allow_none=True)
    if t0 is None:
        contact_time = finite("contact_time", contact_time)
    contact_time_err = finite("contact_time_err", contact_time_err, allow_none=True, positive=True)
    relative = resolve_material_uncertainty(material_uncertainty)
    lo, hi = t0_bracket(t, status, contact_time, contact_bracket, t0)
    settings = {
        "exponent_tolerance": EXPONENT_TOLERANCE,
        "interval_combination": "statistical ⊕ systematic: each side's distance in quadrature",
        "material_z": Z95,
        "prefactor_band": PREFACTOR_BAND,
        "aic_threshold": AIC_THRESHOLD,
        "bootstrap": bootstrap,
        "initial_radius": bool(initial_radius),
        "seed": seed,
        "material_uncertainty": dict(relative),
        "material_uncertainty_sources": _sources(relative, material_uncertainty_sources),
        "loss": "soft_l1",
        "robust_scale": ROBUST_SCALE,
    }
    base = {
        "t0_bracket": (lo, hi),
        "t0_fixed": t0 is not None,
        "numbers": numbers,
        "geometry": geometry,
        "view": view,
        "settings": settings,
        "edge_levels": tuple(level for level, _ in levels),
    }
    series = make_series(t[ok], r[ok], e[ok])
    level_series = tuple(make_series(t[ok], radii[ok], e[ok]) for _, radii in levels)
    lo, hi = bracket_before_first_point(lo, hi, series.time, t)
    base["t0_bracket"] = (lo, hi)
    problem = data_problem(series, lo, hi, reference=t0 if t0 is not None else contact_time)
    if problem:
        return RegimeVerdict(False, problem[0].upper() + problem[1:] + ".", **base)
    cands = candidates(numbers, geometry, view)
    ratio, which = validity_limit(cands)
    keep = within_validity(series, ratio, numbers.radius)
    base.update(
        validity_ratio=ratio,
        validity_regime=which,
        n_beyond_validity=int((~keep & (series.time > hi)).sum()),
    )
    if not keep.all():
        last = series.time[keep].max() if keep.any() else -math.inf
        series = series.subset(keep)
        level_series = tuple(s.subset(s.time <= last) for s in level_series)
        problem = data_problem(series, lo, hi, reference=t0 if t0 is not None else contact_time)
        if problem:
            why = f"after leaving out the {base['n_beyond_validity']} points beyond r/R = "
            return RegimeVerdict(
                False, f"{problem[0].upper()}{problem[1:]} ({why}{ratio:.2g}).", **base
            )
    verdict, decisions = _judged(
        series, level_series, lo, hi, relative, bootstrap, seed, cands, base, initial_radius
    )
    if not verdict:
        return verdict
    return dataclasses.replace(
        verdict,
        sentence=verdict_sentence(verdict, decisions),
        warnings=verdict_warnings(verdict, decisions, [str(x) for x in status], t),
    )


def _judged(series, levels, lo, hi, relative, bootstrap, seed, cands, base, initial_radius):
    """(verdict, decisions) on points that can support a fit, t0 in (lo, hi); `base` as given."""
    numbers, geometry = base["numbers"], base["geometry"]
    rows, data, levels, spread = points_to_fit(series, levels, lo, hi)
    base = {
        **base,
        "settings": {**base["settings"], "points_fitted": len(data), "group_spread": spread},
    }
    f_scale = ROBUST_SCALE * noise_scale(data)
    shapes = {c.regime.key: _shape(c, numbers) for c in cands}
    search = search_crossover(
        data,
        list(dict.fromkeys(shapes.values())),
        lo,
        hi,
        loss="soft_l1",
        f_scale=f_scale,
        initial_radius=bool(initial_radius),
    )
    if not search.free:
        return RegimeVerdict(False, search.free.message, **base), ()
    context = dict(
        data=data,
        lo=lo,
        hi=hi,
        f_scale=f_scale,
        cands=cands,
        shapes=shapes,
        search=search,
        relative=relative,
        bootstrap=bootstrap,
        seed=seed,
        numbers=numbers,
        geometry=geometry,
        levels=levels,
    )
    if search.two_regime:
        result = evaluate_two_regimes(**context)
    else:
        result = evaluate_one_regime(**context)
    ranked_sides = result["sides"]
    decisions = [decide(side, AIC_THRESHOLD) for side in ranked_sides]
    regimes = tuple(side[0].key for side in ranked_sides if side)
    decidable = all(d[0] for d in decisions)
    tops = [side[0] for side in ranked_sides if side]
    dominant = max(tops, key=lambda c: c.window_decades) if tops else None
    verdict = RegimeVerdict(
        success=True,
        reason="",
        decidable=decidable,
        regimes=regimes,
        dominant=dominant,
        candidates=tuple(c for side in ranked_sides for c in side),
        crossovers=result["crossovers"],
        two_regime=search.two_regime,
        delta_aic=search.delta_aic,
        models=search.models,
        model_reason=search.reason,
        local=result["local"],
        t0=result["t0"],
        t0_ci=result["t0_ci"],
        n_points=rows.n_rows,
        time_range=(float(rows.time[0] - result["t0"]), float(rows.time[-1] - result["t0"])),
        **base,
    )
    return verdict, decisions


def _shape(candidate, numbers) -> LawShape:
    reg = candidate.regime
    if reg.logarithmic:
        return LawShape(1.0, True, numbers.capillary_speed, numbers.radius)
    return LawShape(float(reg.exponent))
