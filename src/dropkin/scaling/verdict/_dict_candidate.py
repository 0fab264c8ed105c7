"""One candidate of ``fit.json`` both ways, and the warnings' list (docs/architecture.md).

Examples
--------
>>> from dropkin.scaling.verdict._warnings import VerdictWarning
>>> warning_dicts([VerdictWarning("undecidable", "the data cannot decide")])
[{'code': 'undecidable', 'message': 'the data cannot decide'}]
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from ..regimes._catalogue import regime
from ._judge import CandidateFit

__all__ = [
    "candidate_dict",
    "candidate_from_dict",
    "floats",
    "num",
    "pair",
    "to_float",
    "warning_dicts",
]


def num(x):
    """A finite float, or None (JSON null) for None and NaN."""
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


def pair(p):
    """Two numbers as a list, or None when both are unknown."""
    if p is None:
        return None
    a, b = (num(v) for v in p)
    return None if a is None and b is None else [a, b]


def to_float(value) -> float:  # a number of the file, NaN where it holds null
    return math.nan if value is None else float(value)


def floats(p) -> tuple[float, float]:
    return (math.nan, math.nan) if p is None else (to_float(p[0]), to_float(p[1]))


def warning_dicts(warnings) -> list[dict]:
    """``[{code, message}, ...]``."""
    return [{"code": w.code, "message": w.message} for w in warnings]


def candidate_dict(c) -> dict:
    return {
        "regime": c.key,
        "exponent_theory": c.exponent_theory,
        "prefactor_theory": num(c.prefactor_theory),
        "prefactor_fit": num(c.prefactor_fit),
        "exponent_fit": num(c.exponent_fit),
        "exponent_ci": pair(c.exponent_ci),
        "window_s": pair(c.window),
        "aic": num(c.aic),
        "consistent": c.consistent,
        "segment": c.segment,
        "rank": c.rank,
        "logarithmic": c.regime.logarithmic,
        "exponent_expected": num(c.exponent_expected),
        "prefactor_fit_ci": pair(c.prefactor_fit_ci),
        "prefactor_theory_rel_err": num(c.prefactor_theory_rel_err),
        "prefactor_ratio": num(c.prefactor_ratio),
        "prefactor_placeholder": c.prefactor_placeholder,
        "coefficient_fit": num(c.coefficient_fit),
        "in_published_range": c.in_published_range,
        "delta_aic": num(c.delta_aic),
        "checks": {
            "exponent": c.exponent_ok,
            "prefactor": c.prefactor_ok,
            "numbers": c.numbers_ok,
        },
        "numbers_reason": c.reason,
        "note": c.note,
        # Issue 13: intervals by kind. exponent_ci and prefactor_fit_ci stay the
        # statistical 95 % intervals; C is the coefficient, A the prefactor.
        "exponent_sys_ci": pair(c.exponent_sys_ci),
        "exponent_combined_ci": pair(c.exponent_combined_ci),
        "exponent_inside": c.exponent_inside,
        "exponent_gap": num(c.exponent_gap),
        "exponent_gap_widths": num(c.exponent_gap_widths),
        "prefactor_unit": c.prefactor_unit,
        "initial_radius_m": c.initial_radius if c.initial_radius_fitted else None,
        "initial_radius_ci_m": pair(c.initial_radius_ci) if c.initial_radius_fitted else None,
        "prefactor_sys_ci": pair(c.prefactor_sys_ci),
        "prefactor_combined_ci": pair(c.prefactor_combined_ci),
        "coefficient_ci": pair(c.coefficient_ci),
        "coefficient_sys_ci": pair(c.coefficient_sys_ci),
        "coefficient_combined_ci": pair(c.coefficient_combined_ci),
        "max_radius_ratio": num(c.regime.max_radius_ratio),
    }


def candidate_from_dict(c: Mapping) -> CandidateFit:
    checks = c.get("checks") or {}
    window = None if c.get("window_s") is None else floats(c["window_s"])
    flags = (checks.get("exponent"), checks.get("prefactor"), checks.get("numbers"))
    return CandidateFit(
        regime=regime(c["regime"]),
        key=c["regime"],
        segment=c.get("segment", "all"),
        shape=None,  # not in the file
        exponent_theory=c["exponent_theory"],
        exponent_expected=to_float(c.get("exponent_expected")),
        exponent_fit=to_float(c.get("exponent_fit")),
        exponent_ci=floats(c.get("exponent_ci")),
        window=window,
        window_decades=0.0 if window is None else math.log10(window[1]) - math.log10(window[0]),
        prefactor_fit=to_float(c.get("prefactor_fit")),
        prefactor_fit_ci=floats(c.get("prefactor_fit_ci")),
        prefactor_theory=c.get("prefactor_theory"),
        prefactor_placeholder=c.get("prefactor_placeholder", False),
        prefactor_theory_rel_err=c.get("prefactor_theory_rel_err"),
        prefactor_ratio=c.get("prefactor_ratio"),
        coefficient_fit=c.get("coefficient_fit"),
        in_published_range=c.get("in_published_range"),
        exponent_ok=flags[0],
        prefactor_ok=flags[1],
        numbers_ok=flags[2],
        aic=to_float(c.get("aic")),
        delta_aic=to_float(c.get("delta_aic")),
        checks=sum(flag is True for flag in flags),
        consistent=c.get("consistent", False),
        rank=c.get("rank", 0),
        reason=c.get("numbers_reason", ""),
        note=c.get("note", ""),
        exponent_sys_ci=floats(c.get("exponent_sys_ci")),
        exponent_combined_ci=floats(c.get("exponent_combined_ci")),
        prefactor_sys_ci=floats(c.get("prefactor_sys_ci")),
        prefactor_combined_ci=floats(c.get("prefactor_combined_ci")),
        coefficient_ci=floats(c.get("coefficient_ci")),
        coefficient_sys_ci=floats(c.get("coefficient_sys_ci")),
        coefficient_combined_ci=floats(c.get("coefficient_combined_ci")),
        exponent_inside=c.get("exponent_inside", False),
        exponent_gap=to_float(c.get("exponent_gap")),
        exponent_gap_widths=to_float(c.get("exponent_gap_widths")),
        prefactor_unit=c.get("prefactor_unit", ""),
        **_initial_radius_from(c),
    )


def _initial_radius_from(c: Mapping) -> dict:
    """The r0 fields of a candidate's dict form (absent or null: no r0 kept)."""
    if c.get("initial_radius_m") is None:
        return {}
    return {
        "initial_radius": to_float(c["initial_radius_m"]),
        "initial_radius_ci": floats(c.get("initial_radius_ci_m")),
        "initial_radius_fitted": True,
    }
