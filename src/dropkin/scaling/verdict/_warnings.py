"""Warnings that go with a verdict: what a reader of the numbers must know.

Each is a :class:`VerdictWarning` (a code and a sentence), written to
``fit.json`` (``warnings``), printed under the console table and shown in the
report's Warnings section. The codes:

- ``t0-at-bracket-end``: the fitted contact instant lies within 1e-6 of the
  bracket's width from one of its ends (the bracket, not the data, set it);
- ``short-window``: the fitted points, or a regime's window, span less
  than half a decade;
- ``unresolved-frames``: more than 30 % of the frames after contact have no
  resolved radius;
- ``edge-level``: an exponent moves with the edge level by more than its
  statistical interval's half-width;
- ``undecidable``: the verdict cannot name one regime (per side);
- ``same-regime-sides``: two regimes beat one, yet both sides name the same
  regime: the bend is no change of regime the catalogue knows (a finite
  initial radius, a drift of the measurement, a law outside the catalogue).

Examples
--------
>>> at_bracket_end(1.0, (1.0, 2.0), fixed=False)
True
>>> at_bracket_end(1.5, (1.0, 2.0), fixed=False)
False
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ...status import IN_CONTACT

__all__ = [
    "VerdictWarning",
    "verdict_warnings",
    "at_bracket_end",
    "BRACKET_END_FRACTION",
    "MIN_WINDOW_DECADES",
    "MAX_UNRESOLVED_FRACTION",
]

#: t0 this close to a bracket end, as a fraction of the bracket's width, is "at the end".
BRACKET_END_FRACTION = 1e-6
#: A window shorter than this (decades) is warned about.
MIN_WINDOW_DECADES = 0.5
#: More than this share of the frames after contact unresolved is warned about.
MAX_UNRESOLVED_FRACTION = 0.30


@dataclass(frozen=True)
class VerdictWarning:
    """One warning: a stable `code` and a `message` in words."""

    code: str
    message: str


def at_bracket_end(t0, bracket, *, fixed) -> bool:
    """Whether a fitted t0 sits at an end of its bracket (never for a fixed t0)."""
    lo, hi = bracket
    width = hi - lo
    if fixed or not (math.isfinite(t0) and math.isfinite(width) and width > 0):
        return False
    return min(t0 - lo, hi - t0) <= BRACKET_END_FRACTION * width


def _unresolved(status, time, t0):
    """(unresolved, in contact) counts among the frames after t0."""
    after = [s for s, t in zip(status, time, strict=True) if t > t0 and s in IN_CONTACT]
    return sum(s == "unresolved" for s in after), len(after)


def _edge_moves(c):
    lo, hi = c.exponent_ci
    s_lo, s_hi = c.exponent_sys_ci
    if not all(math.isfinite(v) for v in (lo, hi, s_lo, s_hi, c.exponent_fit)):
        return None
    half = 0.5 * (hi - lo)
    moved = max(c.exponent_fit - s_lo, s_hi - c.exponent_fit)
    return (moved, half) if moved > half else None


def verdict_warnings(verdict, decisions, status, time) -> tuple[VerdictWarning, ...]:
    """The warnings of a successful verdict (`status`, `time`: every frame, as given)."""
    out = []
    lo, hi = verdict.t0_bracket
    if at_bracket_end(verdict.t0, (lo, hi), fixed=verdict.t0_fixed):
        end = "start" if verdict.t0 - lo <= hi - verdict.t0 else "end"
        out.append(
            VerdictWarning(
                "t0-at-bracket-end",
                f"the fitted contact instant sits at the {end} of its bracket "
                f"[{lo:.6g}, {hi:.6g}] s: the bracket, not the data, set it",
            )
        )
    tops = [c for c in verdict.candidates if c.rank == 1]
    a, b = verdict.time_range
    span = math.log10(b / a) if a > 0 and b > a else 0.0
    if span < MIN_WINDOW_DECADES:
        out.append(
            VerdictWarning(
                "short-window",
                f"the fitted points span {span:.2f} decades only, less than "
                f"{MIN_WINDOW_DECADES:g}",
            )
        )
    for c in tops:
        if c.window is not None and c.window_decades < MIN_WINDOW_DECADES <= span:
            out.append(
                VerdictWarning(
                    "short-window",
                    f"{c.key} ({c.segment}) holds over {c.window_decades:.2f} decades only, "
                    f"less than {MIN_WINDOW_DECADES:g}",
                )
            )
    bad, total = _unresolved(status, time, verdict.t0)
    if total and bad / total > MAX_UNRESOLVED_FRACTION:
        out.append(
            VerdictWarning(
                "unresolved-frames",
                f"{bad} of {total} frames after contact ({100 * bad / total:.0f} %) have no "
                f"resolved radius, more than {100 * MAX_UNRESOLVED_FRACTION:.0f} %",
            )
        )
    for c in tops:
        moved = _edge_moves(c)
        if moved:
            out.append(
                VerdictWarning(
                    "edge-level",
                    f"the exponent of {c.key} ({c.segment}) moves by {moved[0]:.3g} with the "
                    f"edge level, more than its statistical half-width {moved[1]:.3g}",
                )
            )
    if not verdict.decidable:
        why = "; ".join(d[1] for d in decisions if not d[0])
        out.append(VerdictWarning("undecidable", f"the data cannot decide the regime ({why})"))
    if verdict.two_regime and len(set(verdict.regimes)) == 1 and len(verdict.regimes) == 2:
        out.append(
            VerdictWarning(
                "same-regime-sides",
                f"both sides of the crossover follow {verdict.regimes[0]}: the bend is no change "
                "of regime the catalogue knows (a finite initial radius? --initial-radius tries "
                "r = r0 + A t^n; or a drift of the measurement)",
            )
        )
    return tuple(out)
