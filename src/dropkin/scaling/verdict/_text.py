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


def _c(x) -> str:
    """A coefficient with three significant digits, trailing zeros kept (``1.00``)."""
    return "—" if x is None or not math.isfinite(x) else f"{x:#.3g}"


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


def _ci(pair, digits=3) -> str:
    lo, hi = pair
    if not (math.isfinite(lo) and math.isfinite(hi)):
        return ""
    return f" [{lo:.{digits}g}, {hi:.{digits}g}]"


def _prefactor_text(c) -> str:
    """The coefficient C against the published value, then the prefactor A with its unit."""
    reg = c.regime
    a_ci = _ci(c.prefactor_combined_ci, 4)
    a_text = f"prefactor A = {_g(c.prefactor_fit, 4)}{a_ci} {c.prefactor_unit}"
    if c.prefactor_ratio is None:
        return f"{a_text} (no predicted coefficient: the sample lacks a value its group needs)"
    coef = f"coefficient C = {_c(c.coefficient_fit)}{_ci(c.coefficient_combined_ci)}"
    if c.prefactor_placeholder:
        pub = "no published C; order one"
    elif reg.prefactor_range is not None:
        pub = f"published {reg.prefactor_range[0]:g}–{reg.prefactor_range[1]:g}"
    else:
        pub = f"published {reg.prefactor:.3g}"
    return f"{coef} on {reg.group_formula} ({pub}), {a_text}"


def _exponent_text(c, tolerance) -> str:
    """n with its statistical and combined intervals, and how it compares with the law's."""
    target = (
        f"the log law's {c.exponent_expected:.3g}"
        if c.regime.logarithmic
        else exponent_text(c.regime)
    )
    stat, comb = c.exponent_ci, c.exponent_combined_ci
    sys_known = all(math.isfinite(v) for v in c.exponent_sys_ci)
    text = ""
    if c.initial_radius_fitted:
        r0, (r0_lo, r0_hi) = c.initial_radius * 1e6, c.initial_radius_ci
        text = (
            f"with a finite initial radius r0 = {r0:.3g} µm "
            f"[{r0_lo * 1e6:.3g}, {r0_hi * 1e6:.3g}] (kept by the AIC), "
        )
    text += f"n = {c.exponent_fit:.3f} [{stat[0]:.3f}, {stat[1]:.3f}] statistical, "
    if sys_known:
        text += f"[{comb[0]:.3f}, {comb[1]:.3f}] with the edge-level systematic, "
    else:
        text += "no edge-level systematic measured, "
    if c.exponent_inside:
        return text + f"agrees with {target}"
    return (
        text + f"differs from {target} by {abs(c.exponent_gap):.3f}, "
        f"{c.exponent_gap_widths:.2g} times its interval's half-width; only the stated "
        f"model tolerance ±{tolerance:g} covers it"
    )


def _one_side(c, decision, side_candidates, tolerance) -> str:
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
        f"{c.key} over {c.window_decades:.2g} decades: {_exponent_text(c, tolerance)}; "
        f"{_prefactor_text(c)}; and {_short_reason(c)} allows it"
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
    tol = verdict.settings.get("exponent_tolerance", 0.0)
    parts = [_one_side(side[0], d, side, tol) for side, d in zip(sides, decisions, strict=True)]
    if not verdict.two_regime:
        text = parts[0]
    else:
        x = verdict.crossovers[0]
        pred = f", predicted {_t(x.predicted_time)}" if x.predicted_time else ""
        gain = f"two regimes beat one by ΔAIC = {verdict.delta_aic:.0f}"
        ci = f" [{_t(x.time_ci[0])}, {_t(x.time_ci[1])}]" if math.isfinite(x.time_ci[0]) else ""
        where = f"crossover at {_t(x.time)}{ci} after contact{pred} ({gain})"
        if verdict.decidable:
            head = f"{x.early} then {x.late}, {where}"
        else:
            head = f"a {where}, but"
        sep = "; " if verdict.decidable else " "
        text = f"{head}{sep}early — {parts[0]}; late — {parts[1]}"
    if verdict.n_beyond_validity:
        text += (
            f"; {verdict.n_beyond_validity} late points beyond r/R = "
            f"{verdict.validity_ratio:.2g} ({verdict.validity_regime}'s validity) left out"
        )
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
        f"{'':2}{'segment':8}{'regime':28}{'n theory':>9}{'n fit':>8}  {'95 % stat.':17}"
        f"{'95 % comb.':17}{'C fit':>8}{'C/C_pub':>9}{'A fit':>11} {'A unit':9}"
        f"{'window':21}{'ΔAIC':>7}  a b c"
    )
    lines.append(head)
    for c in verdict.candidates:
        window = f"{_t(c.window[0])}–{_t(c.window[1])}" if c.window else "—"
        star = "*" if c.rank == 1 else " "
        lines.append(
            f"{star:2}{c.segment:8}{c.key:28}{exponent_text(c.regime):>9}{_g(c.exponent_fit):>8}"
            f"  {_ci(c.exponent_ci).strip() or '—':17}"
            f"{_ci(c.exponent_combined_ci).strip() or '—':17}"
            f"{_c(c.coefficient_fit):>8}{_g(c.prefactor_ratio):>9}{_g(c.prefactor_fit):>11} "
            f"{c.prefactor_unit:9}{window:21}{_g(c.delta_aic, 3):>7}  "
            f"{_mark(c.exponent_ok)} {_mark(c.prefactor_ok)} {_mark(c.numbers_ok)}"
        )
    for x in verdict.crossovers:
        lines.append(
            f"crossover {x.early} → {x.late}: {_t(x.time)} "
            f"[{_t(x.time_ci[0])}, {_t(x.time_ci[1])}], r = {_g(x.radius * 1e6)} µm, "
            f"predicted {_t(x.predicted_time)}"
        )
    lines.append(
        f"t0 = {_t(verdict.t0)} [{_t(verdict.t0_ci[0])}, {_t(verdict.t0_ci[1])}] "
        f"from the first frame (bracket {_t(verdict.t0_bracket[0])}–{_t(verdict.t0_bracket[1])}); "
        f"{verdict.n_points} points"
        + _averaged(verdict.settings)
        + (
            f" ({verdict.n_beyond_validity} beyond r/R = {verdict.validity_ratio:.2g} left out)"
            if verdict.n_beyond_validity
            else ""
        )
        + "; C: coefficient (dimensionless), A: prefactor; a: exponent, b: prefactor, c: numbers"
    )
    lines += [f"warning [{w.code}]: {w.message}" for w in verdict.warnings]
    return "\n".join(lines)


def _averaged(settings) -> str:
    """How many averaged points a long series was fitted on ("" when row by row)."""
    if not settings.get("group_spread"):
        return ""
    return (
        f" (fitted as {settings['points_fitted']} averaged points, each within "
        f"{settings['group_spread']:.2g} of ln τ)"
    )
