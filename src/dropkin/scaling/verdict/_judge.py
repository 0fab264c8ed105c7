"""The checks that rank candidate regimes, and the ranking itself (issue 6, criteria a–d).

For each candidate regime of the sample:

- (a) exponent: the law's exponent (for the log law, what a power-law fit
  of that law over the same points reports) lies inside the combined 95 %
  interval of the fitted exponent (statistical ⊕ systematic,
  :mod:`._systematics`); no tolerance is added (:data:`EXPONENT_TOLERANCE`
  only sets how far the local exponent may stray inside a window);
- (b) prefactor: the fitted prefactor divided by the published one (C times
  the group; C = 1 where no C is published) lies in :data:`PREFACTOR_BAND`
  (0.3–3, "of order one"), and the fitted C overlaps the published range
  when there is one whose status is not M (docs/physics.md: values from memory
  are priors, never hard checks); the combined interval of C is used;
- (c) numbers: the sample's dimensionless numbers allow the regime
  (:meth:`Regime.check`);
- (d) information: the AIC of the candidate's law over the common points.

Candidates are ranked by the number of checks (a)–(c) passed, then by (a),
then by the AIC. Regimes that share an exponent tie on (a) and (d) and are
told apart by (b) and (c).

Examples
--------
>>> order_one(1.2, 1.0)
True
>>> order_one(0.01, 1.0)
False
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field

from ...fitting._core import LawShape
from ...fitting._windows import EXPONENT_TOLERANCE
from ..regimes._catalogue import Candidate, Regime
from ._initial import initial_radius_fields
from ._systematics import coefficient_systematic, combine

__all__ = ["EXPONENT_TOLERANCE", "PREFACTOR_BAND", "CandidateFit", "order_one"]

#: Fitted over published prefactor must lie in this band to count as "of order one" (b).
PREFACTOR_BAND = (0.3, 3.0)


@dataclass(frozen=True)
class CandidateFit:
    """One catalogue regime confronted with the data.

    Attributes
    ----------
    regime : Regime
        The catalogue record.
    key : str
        Its key (``"inertial"``).
    segment : str
        ``"all"`` for a one-regime series; ``"early"`` or ``"late"`` for a
        side of a crossover.
    shape : LawShape
        The law's form for this sample.
    exponent_theory : float
        The catalogue exponent n (1 for the log laws).
    exponent_expected : float
        What a power-law fit should report if the law holds: n, or for the
        log law its apparent exponent over the same points.
    exponent_fit : float
        The fitted exponent over the window (NaN when there is none).
    exponent_ci : tuple of float
        Its 95 % interval.
    window : tuple of float or None
        Where the law holds, time since contact (s): for a one-regime series
        the longest stretch where the local exponent agrees with the law; for
        a side of a crossover, that side.
    window_decades : float
        ``log10`` of the window's ratio (0 when there is none).
    prefactor_fit : float
        The fitted prefactor at the law's own exponent, A in ``r = A τ^n``
        (m s⁻ⁿ; ``C u`` for the log law, m/s); NaN when not fitted.
    prefactor_fit_ci : tuple of float
        Its 95 % interval (NaN where not bootstrapped).
    prefactor_theory : float or None
        The published C times the group (same units); None when the sample
        lacks a value the group needs or the regime has no group.
    prefactor_placeholder : bool
        True when no C is published and 1 was used.
    prefactor_theory_rel_err : float or None
        Relative standard uncertainty of `prefactor_theory` from the material values.
    prefactor_ratio : float or None
        ``prefactor_fit / prefactor_theory``.
    coefficient_fit : float or None
        The fitted dimensionless C (prefactor over group).
    in_published_range : bool or None
        Whether the fitted C overlaps the published range (None: no range).
    exponent_ok, prefactor_ok, numbers_ok : bool or None
        Checks (a), (b), (c); (b) is None when it cannot be made.
    aic : float
        (d): AIC of the candidate's law (prefactor free) over the common points.
    delta_aic : float
        Its AIC minus the lowest among the candidates of the same segment.
    checks : int
        How many of (a)–(c) passed.
    consistent : bool
        (a) and (c) passed and (b) did not fail.
    rank : int
        1 for the best candidate of its segment.
    reason : str
        The numbers behind check (c).
    note : str
        The failed checks, in words.
    fit : LawFit or BlendFit or None
        The fit behind `exponent_fit` (n free; a blend across a crossover).
    law_fit : LawFit or BlendFit or None
        The fit behind `prefactor_fit` (the law at its own exponent).
    exponent_sys_ci, prefactor_sys_ci : tuple of float
        Systematic intervals of n and A: the range of the estimates at the
        edge levels measured (the estimate itself at both ends when only one
        was); NaN when not estimated.
    exponent_combined_ci, prefactor_combined_ci : tuple of float
        Statistical ⊕ systematic (:func:`._systematics.combine`).
    coefficient_ci, coefficient_sys_ci, coefficient_combined_ci : tuple of float
        The intervals of the dimensionless C: statistical (A's over the
        group), systematic (A's edge-level range ⊕ the group's material
        uncertainty at 95 %), combined; NaN when C is not known.
    exponent_inside : bool
        Whether `exponent_expected` lies inside the combined interval itself
        (check (a) adds the stated tolerance).
    exponent_gap : float
        ``exponent_expected - exponent_fit``.
    exponent_gap_widths : float
        ``|exponent_gap|`` over the combined interval's half-width on that
        side (≤ 1 when the candidate's exponent lies inside).
    prefactor_unit : str
        SI unit of A (``"m s^-1/2"``; ``"m s^-1"`` for the log law's ``C u``).
    initial_radius, initial_radius_ci : float, tuple of float
        r0 (m) of ``r = r0 + A τ**n`` and its 95 % interval, when the free fit
        kept a finite initial radius (0 otherwise).
    initial_radius_fitted : bool
        Whether it did (the information criterion preferred it).
    """

    regime: Regime
    key: str
    segment: str
    shape: LawShape
    exponent_theory: float
    exponent_expected: float
    exponent_fit: float
    exponent_ci: tuple[float, float]
    window: tuple[float, float] | None
    window_decades: float
    prefactor_fit: float
    prefactor_fit_ci: tuple[float, float]
    prefactor_theory: float | None
    prefactor_placeholder: bool
    prefactor_theory_rel_err: float | None
    prefactor_ratio: float | None
    coefficient_fit: float | None
    in_published_range: bool | None
    exponent_ok: bool
    prefactor_ok: bool | None
    numbers_ok: bool
    aic: float
    delta_aic: float
    checks: int
    consistent: bool
    rank: int
    reason: str
    note: str
    fit: object = field(default=None, repr=False, compare=False)
    law_fit: object = field(default=None, repr=False, compare=False)
    exponent_sys_ci: tuple[float, float] = (math.nan, math.nan)
    exponent_combined_ci: tuple[float, float] = (math.nan, math.nan)
    prefactor_sys_ci: tuple[float, float] = (math.nan, math.nan)
    prefactor_combined_ci: tuple[float, float] = (math.nan, math.nan)
    coefficient_ci: tuple[float, float] = (math.nan, math.nan)
    coefficient_sys_ci: tuple[float, float] = (math.nan, math.nan)
    coefficient_combined_ci: tuple[float, float] = (math.nan, math.nan)
    exponent_inside: bool = False
    exponent_gap: float = math.nan
    exponent_gap_widths: float = math.nan
    prefactor_unit: str = ""
    initial_radius: float = 0.0
    initial_radius_ci: tuple[float, float] = (0.0, 0.0)
    initial_radius_fitted: bool = False


def order_one(fitted: float, predicted: float) -> bool:
    """Whether ``fitted / predicted`` lies inside :data:`PREFACTOR_BAND`."""
    if not (math.isfinite(fitted) and predicted and math.isfinite(predicted)):
        return False
    ratio = fitted / predicted
    return PREFACTOR_BAND[0] <= ratio <= PREFACTOR_BAND[1]


def exponent_text(regime: Regime) -> str:
    """``1/2``, or ``1 (log)`` for the log laws."""
    return f"{regime.exponent} (log)" if regime.logarithmic else str(regime.exponent)


def _g(x, digits=3) -> str:
    return "—" if x is None or not math.isfinite(x) else f"{x:.{digits}g}"


def prefactor_unit(regime: Regime) -> str:
    """SI unit of the dimensional prefactor A (``m s^-1/2``; ``m s^-1`` for the log laws)."""
    return "m s^-1" if regime.logarithmic else f"m s^-{regime.exponent}"


def _coefficient_intervals(group, prefactor_fit, prefactor_ci, prefactor_sys, group_rel_err):
    """(C, statistical, systematic, combined) of the dimensionless C = A / group."""
    nan2 = (math.nan, math.nan)
    if group is None or not math.isfinite(prefactor_fit):
        return None, nan2, nan2, nan2
    coefficient = prefactor_fit / group
    stat = tuple(v / group for v in prefactor_ci)
    sys = coefficient_systematic(coefficient, prefactor_fit, prefactor_sys, group_rel_err)
    return coefficient, stat, sys, combine(coefficient, stat, sys)


def _prefactor_check(candidate: Candidate, prefactor_fit, coefficient, c_combined):
    """Check (b): (theory, placeholder, ratio, in_range, passed, notes)."""
    reg = candidate.regime
    group = candidate.group
    placeholder = reg.prefactor is None
    c_pub = 1.0 if placeholder else reg.prefactor
    theory = None if group is None else c_pub * group
    ratio = in_range = None
    b = None
    notes = []
    if theory is not None and math.isfinite(prefactor_fit):
        ratio = prefactor_fit / theory
        b = order_one(prefactor_fit, theory)
        if not b:
            notes.append(f"C/C_pub = {_g(ratio)} (b)")
        if reg.prefactor_range is not None:
            c_lo, c_hi = c_combined
            if not (math.isfinite(c_lo) and math.isfinite(c_hi)):
                c_lo = c_hi = coefficient
            in_range = c_hi >= reg.prefactor_range[0] and c_lo <= reg.prefactor_range[1]
            if reg.prefactor_status != "M" and not in_range:
                b = False
                notes.append(
                    f"C = {_g(coefficient)} outside the published "
                    f"{reg.prefactor_range[0]:g}–{reg.prefactor_range[1]:g} (b)"
                )
    return theory, placeholder, ratio, in_range, b, notes


def _exponent_gap(expected, fit, combined) -> tuple[float, float]:
    """(expected − fit, that distance over the combined half-width on its side)."""
    gap = expected - fit
    lo, hi = combined
    half = (hi - fit) if gap > 0 else (fit - lo)
    if not (math.isfinite(gap) and math.isfinite(half)):
        return gap, math.nan
    return gap, (abs(gap) / half if half > 0 else math.inf)


def judge(
    candidate: Candidate,
    *,
    segment,
    shape,
    exponent_expected,
    exponent_fit,
    exponent_ci,
    window,
    prefactor_fit,
    prefactor_fit_ci,
    aic,
    group_rel_err,
    exponent_sys_ci=(math.nan, math.nan),
    prefactor_sys_ci=(math.nan, math.nan),
    fit=None,
    law_fit=None,
) -> CandidateFit:
    # Over 80 lines by its keyword signature and the record it fills (one field a line).
    """Make checks (a)–(c) for one candidate (ranking fields are filled in by :func:`rank`)."""
    reg = candidate.regime
    combined = combine(exponent_fit, exponent_ci, exponent_sys_ci)
    lo, hi = combined
    tol = EXPONENT_TOLERANCE
    in_domain = window is None or window[1] <= shape.domain_end * (1.0 + 1e-9)
    usable = window is not None and in_domain and math.isfinite(lo) and math.isfinite(hi)
    inside = bool(usable and lo <= exponent_expected <= hi)
    a = bool(usable and lo - tol <= exponent_expected <= hi + tol)
    a_combined = combine(prefactor_fit, prefactor_fit_ci, prefactor_sys_ci)
    coefficient, c_stat, c_sys, c_comb = _coefficient_intervals(
        candidate.group, prefactor_fit, prefactor_fit_ci, prefactor_sys_ci, group_rel_err
    )
    theory, placeholder, ratio, in_range, b, notes = _prefactor_check(
        candidate, prefactor_fit, coefficient, c_comb
    )
    gap, widths = _exponent_gap(exponent_expected, exponent_fit, combined)
    if not a:
        if not in_domain:
            notes.insert(
                0, f"the log law holds only until uτ/R = 1/e, τ = {shape.domain_end:.3g} s (a)"
            )
        elif window is None:
            notes.insert(
                0, f"no stretch where the local exponent agrees with {exponent_text(reg)} (a)"
            )
        else:
            notes.insert(
                0,
                f"n = {_g(exponent_fit)} [{_g(lo)}, {_g(hi)}] (combined) vs "
                f"{exponent_expected:.3g}, beyond the tolerance ±{tol:g} (a)",
            )
    if not candidate.plausible:
        notes.append(f"numbers: {candidate.reason} (c)")
    checks = int(a) + int(b is True) + int(candidate.plausible)
    decades = 0.0 if window is None else math.log10(window[1]) - math.log10(window[0])
    return CandidateFit(
        regime=reg,
        key=reg.key,
        segment=segment,
        shape=shape,
        exponent_theory=float(reg.exponent),
        exponent_expected=float(exponent_expected),
        exponent_fit=float(exponent_fit),
        exponent_ci=tuple(float(v) for v in exponent_ci),
        window=window,
        window_decades=decades,
        prefactor_fit=float(prefactor_fit),
        prefactor_fit_ci=tuple(float(v) for v in prefactor_fit_ci),
        prefactor_theory=theory,
        prefactor_placeholder=placeholder,
        prefactor_theory_rel_err=None if theory is None else group_rel_err,
        prefactor_ratio=ratio,
        coefficient_fit=coefficient,
        in_published_range=in_range,
        exponent_ok=a,
        prefactor_ok=b,
        numbers_ok=bool(candidate.plausible),
        aic=float(aic),
        delta_aic=math.nan,
        checks=checks,
        consistent=a and candidate.plausible and b is not False,
        rank=0,
        reason=candidate.reason,
        note="; ".join(notes),
        fit=fit,
        law_fit=law_fit,
        exponent_sys_ci=tuple(float(v) for v in exponent_sys_ci),
        exponent_combined_ci=combined,
        prefactor_sys_ci=tuple(float(v) for v in prefactor_sys_ci),
        prefactor_combined_ci=a_combined,
        coefficient_ci=c_stat,
        coefficient_sys_ci=c_sys,
        coefficient_combined_ci=c_comb,
        exponent_inside=inside,
        exponent_gap=float(gap),
        exponent_gap_widths=float(widths),
        prefactor_unit=prefactor_unit(reg),
        **initial_radius_fields(fit),
    )


def rank(fits) -> tuple[CandidateFit, ...]:
    """The candidates of one segment, best first, with `rank` and `delta_aic` filled in."""
    finite = [f.aic for f in fits if math.isfinite(f.aic)]
    best_aic = min(finite) if finite else math.nan

    def key(f):
        return (-f.checks, -int(f.exponent_ok), f.aic if math.isfinite(f.aic) else math.inf)

    ordered = sorted(fits, key=key)
    return tuple(
        dataclasses.replace(f, rank=i + 1, delta_aic=f.aic - best_aic)
        for i, f in enumerate(ordered)
    )


def decide(ranked, threshold) -> tuple[bool, str, CandidateFit | None]:
    """Whether the best candidate is clear; the rival it beat or tied with; a reason word."""
    if not ranked:
        return False, "no candidate regime for this geometry and view", None
    top = ranked[0]
    if not top.consistent:
        return False, "no catalogue regime passes the checks", None
    rivals = [f for f in ranked[1:] if f.consistent]
    if not rivals:
        return True, "checks", None
    rival = rivals[0]
    same = rival.shape == top.shape
    gap = rival.aic - top.aic
    if same or not (math.isfinite(gap) and gap > threshold):
        return False, "tie", rival
    return True, "aic", rival
