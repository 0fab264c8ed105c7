"""A :class:`Prediction` as text for people and as a JSON-ready dict for scripts.

Examples
--------
>>> _eng(3.7e-6, "m"), _eng(51e-9, "s"), _eng(2.5e4, "fps")
('3.7 µm', '51 ns', '25 kfps')
"""

from __future__ import annotations

import math

from ._records import Prediction, RegimeWindow

__all__ = ["format_prediction", "prediction_to_dict"]

_PREFIXES = ((1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ"), (1e-9, "n"))


def _eng(value, unit: str, digits: int = 3) -> str:
    """A value with an SI prefix chosen so that the mantissa is 1–999."""
    if value is None:
        return "—"
    if value == 0:
        return f"0 {unit}"
    if not math.isfinite(value):
        return "∞"
    allowed = _PREFIXES if unit not in ("m", "m/s") else _PREFIXES[3:]
    for scale, prefix in allowed:
        if abs(value) >= scale * 0.9995:
            return f"{value / scale:.{digits}g} {prefix}{unit}"
    scale, prefix = allowed[-1]
    return f"{value / scale:.{digits}g} {prefix}{unit}"


def _num(x):
    """A JSON-safe number: None for missing or infinite values."""
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


_NUMBER_KEYS = (
    ("surface_tension", "surface_tension_n_per_m"),
    ("viscosity", "viscosity_pa_s"),
    ("density", "density_kg_per_m3"),
    ("radius", "radius_m"),
    ("outer_viscosity", "outer_viscosity_pa_s"),
    ("outer_density", "outer_density_kg_per_m3"),
    ("gravity", "gravity_m_per_s2"),
    ("contact_angle", "contact_angle_rad"),
    ("volume", "volume_m3"),
    ("kinematic_viscosity", "kinematic_viscosity_m2_per_s"),
    ("capillary_speed", "capillary_speed_m_per_s"),
    ("viscous_time", "viscous_time_s"),
    ("inertial_time", "inertial_time_s"),
    ("viscous_length", "viscous_length_m"),
    ("ohnesorge", "ohnesorge"),
    ("ohnesorge_outer", "ohnesorge_outer"),
    ("bond", "bond"),
    ("capillary_length", "capillary_length_m"),
    ("viscosity_ratio", "viscosity_ratio"),
    ("density_ratio", "density_ratio"),
    ("outer_viscous_time", "outer_viscous_time_s"),
    ("outer_inertial_time", "outer_inertial_time_s"),
)


def _window_dict(w: RegimeWindow) -> dict:
    r = w.regime
    pair = lambda a, b: None if a is None else [_num(a), _num(b)]  # noqa: E731
    return {
        "regime": w.key,
        "code": r.code,
        "name": r.name,
        "observable": r.observable,
        "exponent": float(r.exponent),
        "exponent_text": str(r.exponent),
        "logarithmic": r.logarithmic,
        "group_formula": r.group_formula,
        "group_si": _num(w.group),
        "prefactor": _num(w.prefactor),
        "prefactor_range": None if r.prefactor_range is None else list(r.prefactor_range),
        "prefactor_status": r.prefactor_status,
        "prefactor_placeholder": w.placeholder,
        "normalisation": r.normalisation,
        "plausible": w.plausible,
        "reason": w.reason,
        "expected": w.expected,
        "window_s": pair(w.start, w.end),
        "radius_window_m": pair(w.radius_start, w.radius_end),
        "decades": _num(w.decades),
        "fit_window_s": pair(w.fit_start, w.fit_end),
        "frame_rate_needed_hz": _num(w.frame_rate),
        "pixel_size_needed_m": _num(w.pixel_size),
        "reachable": w.reachable,
        "frames_in_fit": _num(w.frames_in_fit),
        "pixels_at_fit_start": _num(w.pixels_at_fit_start),
        "conditions": r.conditions,
        "reference": r.reference,
        "note": w.note,
    }


def prediction_to_dict(prediction: Prediction) -> dict:
    """The prediction as plain JSON-ready data: SI values, the unit in each key's name.

    Infinite values (a window that opens at contact has infinitely many
    decades) become None.
    """
    p, plan = prediction, prediction.plan
    return {
        "geometry": p.geometry,
        "view": p.view,
        "numbers": {key: _num(getattr(p.numbers, name)) for name, key in _NUMBER_KEYS},
        "regimes": [_window_dict(w) for w in p.windows],
        "crossovers": [
            {
                "from": c.early,
                "to": c.late,
                "time_s": _num(c.time),
                "time_range_s": [_num(v) for v in c.time_range],
                "radius_m": _num(c.radius),
                "radius_range_m": [_num(v) for v in c.radius_range],
                "reached": c.reached,
                "possible": c.possible,
                "formula": c.formula,
                "status": c.status,
                "note": c.note,
            }
            for c in p.crossovers
        ],
        "plan": {
            "frame_rate_hz": _num(plan.frame_rate),
            "pixel_size_m": _num(plan.pixel_size),
            "duration_s": _num(plan.duration),
            "frames": plan.frames,
            "smallest_radius_m": _num(plan.smallest_radius),
            "smallest_radius_lenient_m": _num(plan.smallest_radius_lenient),
            "covers": list(plan.covers),
            "out_of_reach": list(plan.out_of_reach),
            "frames_per_decade": plan.frames_per_decade,
            "pixels_per_radius": plan.pixels_per_radius,
            "decades": plan.decades,
        },
        "recording": {"frame_rate_hz": _num(p.frame_rate), "pixel_size_m": _num(p.pixel_size)},
        "dimensional_analysis": [
            {
                "formula": law.formula,
                "exponent": float(law.exponent),
                "exponent_text": str(law.exponent),
                "powers": {q: str(v) for q, v in law.powers.items()},
                "group_si": _num(law.group),
                "terms": list(law.terms),
                "matches": list(law.matches),
            }
            for law in p.dimensional
        ],
        "notes": list(p.notes),
    }


def _law_text(w: RegimeWindow) -> str:
    r = w.regime
    if w.group is None:
        return f"r ∝ t^{r.exponent} (group {r.group_formula})"
    c = "C" if w.prefactor is None else f"{w.prefactor:.3g}"
    if r.logarithmic:
        return f"r = -{c} × {w.group:.3g} m/s × t ln(γt/ηR)"
    unit = "m/s" if r.exponent == 1 else f"m s^-{r.exponent}"
    c = c + ("?" if w.placeholder else "")
    return f"r = {c} × {w.group:.3g} {unit} × t^{r.exponent}"


def format_prediction(prediction: Prediction) -> str:
    """The prediction as a few aligned tables of text."""
    p = prediction
    lines = _sample_lines(p) + ["", "Regimes"] + _regime_lines(p)
    lines += ["", "Crossovers"] + _crossover_lines(p)
    lines += [""] + _plan_lines(p)
    lines += ["", "Dimensional analysis (exponents solved from [M, L, T]; C = 1)"]
    lines += _dimensional_lines(p)
    if p.notes:
        lines += ["", "Notes"] + [f"  {note}" for note in p.notes]
    return "\n".join(lines)


def _sample_lines(p: Prediction) -> list[str]:
    """The sample's values and its dimensionless numbers, two lines."""
    n = p.numbers
    return [
        f"Sample: {p.geometry}, {p.view} view; R = {_eng(n.radius, 'm')}, "
        f"γ = {_eng(n.surface_tension, 'N/m')}, η = {_eng(n.viscosity, 'Pa s')}, "
        f"ρ = {n.density:.4g} kg/m³"
        + (
            f"; outer η_o = {_eng(n.outer_viscosity, 'Pa s')}, ρ_o = {n.outer_density:.3g} kg/m³"
            if n.outer_viscosity is not None and n.outer_density is not None
            else ""
        ),
        f"Numbers: Oh = {n.ohnesorge:.3g}"
        + (f", Oh_out = {n.ohnesorge_outer:.3g}" if n.ohnesorge_outer is not None else "")
        + f", Bo = {n.bond:.3g}"
        + (f", η/η_o = {n.viscosity_ratio:.3g}" if n.viscosity_ratio is not None else "")
        + f", ℓ_c = {_eng(n.capillary_length, 'm')}, τ_v = {_eng(n.viscous_time, 's')}, "
        f"τ_i = {_eng(n.inertial_time, 's')}, l_ν = {_eng(n.viscous_length, 'm')}",
    ]


def _regime_lines(p: Prediction) -> list[str]:
    """The table of candidate regimes, then why each is plausible or not."""
    rows = [("regime", "n", "law", "expected", "window (since contact)", "r range", "C status")]
    for w in p.windows:
        rows.append(
            (
                w.key,
                str(w.regime.exponent) + (" +log" if w.regime.logarithmic else ""),
                _law_text(w),
                "yes" if w.expected else ("plausible" if w.plausible else "no"),
                "—" if w.start is None else f"{_eng(w.start, 's')} – {_eng(w.end, 's')}",
                "—"
                if w.radius_end is None
                else f"{_eng(w.radius_start, 'm')} – {_eng(w.radius_end, 'm')}",
                w.regime.prefactor_status,
            )
        )
    widths = [max(len(row[i]) for row in rows) for i in range(len(rows[0]))]
    lines = [
        "  " + "  ".join(c.ljust(wd) for c, wd in zip(row, widths, strict=True)).rstrip()
        for row in rows
    ]
    lines.append("  why:")
    lines += [f"    {w.key}: {w.reason}" for w in p.windows if w.reason]
    return lines


def _crossover_lines(p: Prediction) -> list[str]:
    """One line a crossover: central time and radius, each with its range over the constants."""
    lines = []
    for c in p.crossovers:
        if c.reached:
            mark = ""
        elif c.possible:
            mark = "  (not reached with the central constants; reached within their ranges)"
        else:
            mark = "  (not reached)"
        (t_lo, t_hi), (r_lo, r_hi) = c.time_range, c.radius_range
        lines.append(
            f"  {c.early} → {c.late}: t ≈ {_eng(c.time, 's')} ({_eng(t_lo, 's')} – "
            f"{_eng(t_hi, 's')}), r ≈ {_eng(c.radius, 'm')} ({_eng(r_lo, 'm')} – "
            f"{_eng(r_hi, 'm')}){mark}\n      [{c.formula}; {c.status}; {c.note}]"
        )
    return lines


def _plan_lines(p: Prediction) -> list[str]:
    """The recording plan: what each expected regime needs, then the plan that covers them."""
    plan = p.plan
    lines = [
        (
            f"Recording plan (≥ {plan.decades:g} decade(s) and ≥ {plan.frames_per_decade} "
            f"frames inside each expected regime; r ≥ {plan.pixels_per_radius:g} px at its "
            "start — rule of thumb, docs/physics.md §4.4, M)"
        ),
    ]
    lines += [_need_line(w, plan) for w in p.windows if w.expected]
    if plan.frame_rate is not None:
        lines.append(
            f"  plan: ≥ {_eng(plan.frame_rate, 'fps')}, pixel ≤ {_eng(plan.pixel_size, 'm')}, "
            f"record ≥ {_eng(plan.duration, 's')} after contact ({plan.frames} frames); "
            f"covers {', '.join(plan.covers)}"
        )
        if plan.frames > 100_000:
            lines.append(
                "  (a long record: consider one recording per regime, each at its own rate)"
            )
    else:
        lines.append("  plan: no expected regime is within reach")
    if plan.out_of_reach:
        lines.append(f"  out of reach: {', '.join(plan.out_of_reach)}")
    if plan.smallest_radius is not None:
        basis = "your pixel size" if p.pixel_size is not None else "the planned pixel size"
        lines.append(
            f"  smallest radius worth measuring at {basis}: {_eng(plan.smallest_radius, 'm')} "
            f"(10 px; 5 px: {_eng(plan.smallest_radius_lenient, 'm')})"
        )
    return lines


def _need_line(w: RegimeWindow, plan) -> str:
    """What recording one expected regime needs, and what the user's recording gives."""
    if w.frame_rate is None:
        return f"  {w.key}: {w.note}"
    reach = "" if w.reachable else "  OUT OF REACH for optical high-speed imaging"
    have = []
    if w.frames_in_fit is not None:
        short = " (too few)" if w.frames_in_fit < plan.frames_per_decade else ""
        have.append(f"{w.frames_in_fit:.3g} frames{short}")
    if w.pixels_at_fit_start is not None:
        small = " (too coarse)" if w.pixels_at_fit_start < plan.pixels_per_radius else ""
        have.append(f"{w.pixels_at_fit_start:.3g} px across r at the start{small}")
    have = "; your recording: " + ", ".join(have) if have else ""
    return (
        f"  {w.key}: record {_eng(w.fit_start, 's')} – {_eng(w.fit_end, 's')} → "
        f"≥ {_eng(w.frame_rate, 'fps')}, pixel ≤ {_eng(w.pixel_size, 'm')}{have}{reach}"
    )


def _dimensional_lines(p: Prediction) -> list[str]:
    matched = [law for law in p.dimensional if law.matches]
    others = len(p.dimensional) - len(matched)
    lines = [f"  {', '.join(law.matches)}: {law.formula}" for law in matched]
    lines.append(f"  {others} further combination(s) without a catalogue entry (see --json)")
    return lines
