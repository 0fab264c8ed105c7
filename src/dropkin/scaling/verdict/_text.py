"""The verdict in words and as a terminal table (docs/architecture.md).

Results and their printing are kept apart: :func:`verdict_sentence` says the
verdict in one line, :func:`format_verdict` gives a short table; the
verdict's dict form, ``fit.json``, is in :mod:`._dict`.
"""

from __future__ import annotations

import math

from ._judge import exponent_text

__all__ = ["format_verdict", "verdict_sentence"]


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
