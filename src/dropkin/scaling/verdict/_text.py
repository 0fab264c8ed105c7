"""The verdict as words, as a terminal table and as ``fit.json`` (docs/architecture.md).

Results and their printing are kept apart: :func:`verdict_to_dict` gives
plain JSON-ready values (SI; every time counted from the contact instant;
NaN written as null), :func:`format_verdict` a short table.

Examples
--------
>>> from dropkin.scaling import RegimeVerdict
>>> verdict_to_dict(RegimeVerdict(False, "Too few points: 3 after contact, at least 8 needed."))
... # doctest: +NORMALIZE_WHITESPACE
{'success': False, 'reason': 'Too few points: 3 after contact, at least 8 needed.',
 'decidable': False, 'sentence': '', 'numbers': {}, 'candidates': [], 'dominant': None,
 'crossovers': []}
"""

from __future__ import annotations

import math

from ...fitting._local import exponent_plateaus
from ._judge import exponent_text

__all__ = ["verdict_to_dict", "format_verdict", "verdict_sentence"]


def _num(x):
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


def _pair(p):
    if p is None:
        return None
    a, b = (_num(v) for v in p)
    return None if a is None and b is None else [a, b]


def _g(x, digits=3) -> str:
    return "—" if x is None or not math.isfinite(x) else f"{x:.{digits}g}"


def _t(seconds) -> str:
    """A time in readable SI units."""
    if seconds is None or not math.isfinite(seconds):
        return "—"
    for unit, scale in (("s", 1.0), ("ms", 1e-3), ("µs", 1e-6), ("ns", 1e-9)):
        if abs(seconds) >= scale:
            return f"{seconds / scale:.3g} {unit}"
    return f"{seconds:.3g} s"


def _short_reason(c) -> str:
    return c.reason.split(";")[0].split(" (")[0]


def _prefactor_text(c) -> str:
    reg = c.regime
    if c.prefactor_ratio is None:
        return "no predicted prefactor (the sample lacks a value its group needs)"
    if c.prefactor_placeholder:
        return f"C = {_g(c.coefficient_fit)} on {reg.group_formula} (no published C; order one)"
    if reg.prefactor_range is not None:
        lo, hi = reg.prefactor_range
        return f"C = {_g(c.coefficient_fit)} on {reg.group_formula} (published {lo:g}–{hi:g})"
    return f"C = {_g(c.coefficient_fit)} on {reg.group_formula} (published {reg.prefactor:.3g})"


def _exponent_text(c) -> str:
    lo, hi = c.exponent_ci
    target = (
        f"the log law's {c.exponent_expected:.3g}"
        if c.regime.logarithmic
        else exponent_text(c.regime)
    )
    return f"n = {c.exponent_fit:.3f} [{lo:.3f}, {hi:.3f}] agrees with {target}"


def _one_side(c, decision, side_candidates) -> str:
    ok, why, rival = decision
    if not ok and why == "tie":
        gap = "same exponent" if rival.shape == c.shape else f"ΔAIC = {rival.aic - c.aic:.1f}"
        return (
            f"the data cannot decide between {c.key} and {rival.key}: both pass the exponent, "
            f"prefactor and numbers checks ({gap})"
        )
    if not ok:
        return (
            f"the data cannot decide: no catalogue regime passes the checks; the closest, "
            f"{c.key}, fails: {c.note or 'the checks'}"
        )
    text = (
        f"{c.key}: {_exponent_text(c)} over {c.window_decades:.2g} decades, "
        f"{_prefactor_text(c)}, and {_short_reason(c)} allows it"
    )
    twins = [f.key for f in side_candidates if f.shape == c.shape and f.key != c.key]
    if twins:
        text += f"; same-exponent rivals fail on C or the numbers ({', '.join(twins)})"
    if why == "aic":
        text += f"; its law beats {rival.key} by ΔAIC = {rival.aic - c.aic:.1f}"
    return text


def verdict_sentence(verdict, decisions) -> str:
    """The one-line sentence of a verdict (used by :func:`analyze_series`)."""
    if not verdict:
        return verdict.reason
    sides = []
    for seg in ("all", "early", "late"):
        group = [c for c in verdict.candidates if c.segment == seg]
        if group:
            sides.append(group)
    parts = [_one_side(side[0], d, side) for side, d in zip(sides, decisions, strict=True)]
    if not verdict.two_regime:
        text = parts[0]
    else:
        x = verdict.crossovers[0]
        pred = f", predicted {_t(x.predicted_time)}" if x.predicted_time else ""
        gain = f"two regimes beat one by ΔAIC = {verdict.delta_aic:.0f}"
        where = f"crossover at {_t(x.time)} after contact{pred} ({gain})"
        if verdict.decidable:
            head = f"{x.early} then {x.late}, {where}"
        else:
            head = f"a {where}, but"
        sep = "; " if verdict.decidable else " "
        text = f"{head}{sep}early — {parts[0]}; late — {parts[1]}"
    text = text[0].upper() + text[1:]
    return " ".join(text.split()) + "."


def _candidate_dict(c) -> dict:
    return {
        "regime": c.key,
        "exponent_theory": c.exponent_theory,
        "prefactor_theory": _num(c.prefactor_theory),
        "prefactor_fit": _num(c.prefactor_fit),
        "exponent_fit": _num(c.exponent_fit),
        "exponent_ci": _pair(c.exponent_ci),
        "window_s": _pair(c.window),
        "aic": _num(c.aic),
        "consistent": c.consistent,
        "segment": c.segment,
        "rank": c.rank,
        "logarithmic": c.regime.logarithmic,
        "exponent_expected": _num(c.exponent_expected),
        "prefactor_fit_ci": _pair(c.prefactor_fit_ci),
        "prefactor_theory_rel_err": _num(c.prefactor_theory_rel_err),
        "prefactor_ratio": _num(c.prefactor_ratio),
        "prefactor_placeholder": c.prefactor_placeholder,
        "coefficient_fit": _num(c.coefficient_fit),
        "in_published_range": c.in_published_range,
        "delta_aic": _num(c.delta_aic),
        "checks": {
            "exponent": c.exponent_ok,
            "prefactor": c.prefactor_ok,
            "numbers": c.numbers_ok,
        },
        "numbers_reason": c.reason,
        "note": c.note,
    }


def _numbers_dict(n) -> dict:
    return {
        "ohnesorge": _num(n.ohnesorge),
        "bond": _num(n.bond),
        "viscosity_ratio": _num(n.viscosity_ratio),
        "ohnesorge_outer": _num(n.ohnesorge_outer),
        "density_ratio": _num(n.density_ratio),
        "viscous_time_s": _num(n.viscous_time),
        "inertial_time_s": _num(n.inertial_time),
        "capillary_length_m": _num(n.capillary_length),
        "capillary_speed_m_per_s": _num(n.capillary_speed),
    }


def verdict_to_dict(verdict) -> dict:
    """The ``fit.json`` structure of docs/architecture.md, plus extra keys (JSON-ready).

    Keys: ``numbers``, ``candidates`` (regime, exponent_theory,
    prefactor_theory, prefactor_fit, exponent_fit, exponent_ci, window_s,
    aic, consistent, and more), ``dominant``, ``crossovers`` (from, to,
    time_s, radius_m, predicted_time_s, and more); extra: ``success``,
    ``reason``, ``decidable``, ``sentence``, ``regimes``, ``two_regime``,
    ``delta_aic``, ``contact``, ``pivot``, ``local_exponent``, ``models``,
    ``settings``. SI units; times count from the contact instant
    (``contact.t0_s`` itself counts from the first frame).
    """
    out = {
        "success": verdict.success,
        "reason": verdict.reason,
        "decidable": verdict.decidable,
        "sentence": verdict.sentence,
        "numbers": {} if verdict.numbers is None else _numbers_dict(verdict.numbers),
        "candidates": [_candidate_dict(c) for c in verdict.candidates],
        "dominant": None,
        "crossovers": [],
    }
    if not verdict:
        return out
    d = verdict.dominant
    if d is not None:
        out["dominant"] = {
            "regime": d.key,
            "exponent_theory": d.exponent_theory,
            "exponent_fit": _num(d.exponent_fit),
            "exponent_ci": _pair(d.exponent_ci),
            "prefactor_fit": _num(d.prefactor_fit),
            "prefactor_theory": _num(d.prefactor_theory),
            "window_s": _pair(d.window),
            "segment": d.segment,
            "consistent": d.consistent,
        }
    out["crossovers"] = [
        {
            "from": x.early,
            "to": x.late,
            "time_s": _num(x.time),
            "radius_m": _num(x.radius),
            "predicted_time_s": _num(x.predicted_time),
            "time_ci_s": _pair(x.time_ci),
            "predicted_formula": x.predicted_formula,
            "sharpness": _num(x.sharpness),
            "delta_aic": _num(x.delta_aic),
            "model": x.model,
        }
        for x in verdict.crossovers
    ]
    out["regimes"] = list(verdict.regimes)
    out["two_regime"] = verdict.two_regime
    out["delta_aic"] = _num(verdict.delta_aic)
    out["model_reason"] = verdict.model_reason
    out["contact"] = {
        "t0_s": _num(verdict.t0),
        "bracket_s": _pair(verdict.t0_bracket),
        "fixed": verdict.t0_fixed,
        "note": "t0_s and bracket_s count from the first frame; all other times from t0",
    }
    out["n_points"] = verdict.n_points
    out["time_range_s"] = _pair(verdict.time_range)
    fit = getattr(d, "fit", None) if d is not None else None
    if fit is not None and hasattr(fit, "pivot_time"):
        out["pivot"] = {
            "time_s": _num(fit.pivot_time),
            "radius_m": _num(fit.pivot_radius),
            "radius_ci_m": _pair(fit.pivot_radius_ci),
            "exponent": _num(fit.exponent),
            "prefactor_raw": _num(fit.prefactor),
            "correlation_raw": _num(fit.correlation_raw),
            "correlation_pivot": _num(fit.correlation_pivot),
        }
    loc = verdict.local
    if loc:
        out["local_exponent"] = {
            "method": loc.method,
            "time_s": [_num(v) for v in loc.time],
            "exponent": [_num(v) for v in loc.exponent],
            "lower": [_num(v) for v in loc.lower],
            "upper": [_num(v) for v in loc.upper],
            "plateaus": [
                {"start_s": a, "end_s": b, "exponent": n} for a, b, n in exponent_plateaus(loc)
            ],
        }
    out["models"] = [
        {"model": m.name, "regimes": m.regimes, "aic": _num(m.aic), "n_params": m.n_params}
        for m in verdict.models
    ]
    settings = dict(verdict.settings)
    settings["prefactor_band"] = list(settings.get("prefactor_band", ()))
    out["settings"] = settings
    return out


def _mark(flag) -> str:
    return "·" if flag is None else ("✓" if flag else "✗")


def format_verdict(verdict) -> str:
    """A short table of the verdict for the terminal.

    Examples
    --------
    >>> from dropkin.scaling import RegimeVerdict
    >>> print(format_verdict(RegimeVerdict(False, "All 40 usable points lie before contact.")))
    no verdict: All 40 usable points lie before contact.
    """
    if not verdict:
        return f"no verdict: {verdict.reason}"
    lines = [verdict.sentence, ""]
    head = (
        f"{'':2}{'segment':8}{'regime':28}{'n theory':>9}{'n fit':>8}  {'95 % CI':17}"
        f"{'A fit/theory':>13}  {'window':21}{'ΔAIC':>7}  a b c"
    )
    lines.append(head)
    for c in verdict.candidates:
        lo, hi = c.exponent_ci
        ci = f"[{_g(lo)}, {_g(hi)}]" if math.isfinite(lo) else "—"
        window = f"{_t(c.window[0])}–{_t(c.window[1])}" if c.window else "—"
        star = "*" if c.rank == 1 else " "
        lines.append(
            f"{star:2}{c.segment:8}{c.key:28}{exponent_text(c.regime):>9}{_g(c.exponent_fit):>8}"
            f"  {ci:17}{_g(c.prefactor_ratio):>13}  {window:21}{_g(c.delta_aic, 3):>7}  "
            f"{_mark(c.exponent_ok)} {_mark(c.prefactor_ok)} {_mark(c.numbers_ok)}"
        )
    for x in verdict.crossovers:
        lines.append(
            f"crossover {x.early} → {x.late}: {_t(x.time)} "
            f"[{_t(x.time_ci[0])}, {_t(x.time_ci[1])}], r = {_g(x.radius * 1e6)} µm, "
            f"predicted {_t(x.predicted_time)}"
        )
    lines.append(
        f"t0 = {_t(verdict.t0)} from the first frame; {verdict.n_points} points; "
        "a: exponent, b: prefactor, c: numbers"
    )
    return "\n".join(lines)
