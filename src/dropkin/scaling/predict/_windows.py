"""When each regime should govern a sample: the time spans behind the predicted windows.

A regime governs from its crossover with the earlier regime (or from
contact) until its law reaches a fraction of the drop radius, or until the
next regime takes over. Free drops take their stages from the phase
diagram (:mod:`dropkin.scaling.regimes._phase_diagram`), the one the
catalogue's conditions read; the other geometries match their laws
(docs/physics.md §3). Spans use the central O(1) constants, so they are
estimates to a factor of a few: the crossovers carry the ranges.
"""

from __future__ import annotations

import math

from ..regimes._catalogue import regime
from ..regimes._crossovers import coalescence_diagram
from ..regimes._matching import power_law_crossing, tanner_gravity_crossover
from ..regimes._numbers import SampleNumbers
from ..regimes._regime import Regime

__all__ = ["THIN_CAP_FACTOR", "regime_power", "time_at", "governing_spans"]

#: Tanner's thin-cap law needs a small angle: a cap of the drop's volume has
#: θ ≤ 0.5 rad once R_c ≥ (32/3)^(1/3) R ≈ 2.2 R (V = πθR_c³/4; derived, D).
THIN_CAP_FACTOR = (32.0 / 3.0) ** (1.0 / 3.0)

#: {regime key: (start, end, note)}, times since contact (s).
Spans = dict[str, tuple[float, float, str]]


def regime_power(entry: Regime, numbers, prefactors):
    """(C, placeholder?, dimensional prefactor, exponent) or None without a group."""
    group = entry.group(numbers)
    if group is None:
        return None
    c = prefactors.get(entry.key, entry.prefactor)
    placeholder = c is None
    c = 1.0 if c is None else float(c)
    return c, placeholder, c * group, float(entry.exponent)


def time_at(a, n, r):
    """Time at which ``a t**n`` reaches r."""
    return (r / a) ** (1.0 / n)


def governing_spans(numbers: SampleNumbers, geometry, plausible, prefactors, end_fraction):
    """{key: (start, end, note)} for the regimes expected to govern some time."""
    r_end = end_fraction * numbers.radius
    c_v = prefactors.get(
        "inertially-limited-viscous", regime("inertially-limited-viscous").prefactor
    )
    # c_v: C_v of the viscous side of the matchings, C_v (γ/η) t.
    if geometry == "coalescence":
        return _coalescence_spans(numbers, plausible, prefactors, end_fraction)
    if geometry == "sessile-coalescence":
        return _sessile_spans(numbers, plausible, prefactors, r_end)
    return _spreading_spans(numbers, plausible, prefactors, r_end, c_v)


def _els_end(n: SampleNumbers) -> float:
    """Where the ELS log law peaks: r = R/(e π)."""
    return n.viscous_time / math.e


def _coalescence_spans(n: SampleNumbers, plausible, prefactors, end_fraction) -> Spans:
    """Free drops: the stages of the phase diagram expected with the central constants."""
    diagram = coalescence_diagram(n, prefactors, end_fraction)
    spans: Spans = {}
    for stage in diagram.stages:
        if stage.expected and plausible.get(stage.key) and stage.end > stage.start:
            spans[stage.key] = (stage.start, stage.end, stage.note)
    viscous = diagram.stage("viscous")
    if plausible.get("viscous-equal-outer") and viscous.expected:
        spans["viscous-equal-outer"] = (viscous.start, viscous.end, viscous.note)
    return spans


def _sessile_spans(n: SampleNumbers, plausible, prefactors, r_end) -> Spans:
    """Sessile drops: the viscous bridge, then the inertial regimes."""
    spans: Spans = {}
    early = None
    if plausible["viscous-sessile"]:
        early = regime_power(regime("viscous-sessile"), n, prefactors)
    early_end = math.inf
    for key in ("inertial-sessile", "inertial"):
        if not plausible.get(key):
            continue
        _, _, a, k = regime_power(regime(key), n, prefactors)
        start = 0.0 if early is None else power_law_crossing(early[2], 1.0, a, k)[0]
        end = time_at(a, k, r_end)
        if start < end:
            spans[key] = (start, end, "")
            early_end = min(early_end, start)
    if early is not None:
        spans["viscous-sessile"] = (0.0, min(early_end, r_end / early[2]), "")
    return spans


def _spreading_spans(n: SampleNumbers, plausible, prefactors, r_end, c_v) -> Spans:
    """One spreading drop: viscous or inertial first, then Tanner, then gravity."""
    spans: Spans = {}

    def power(key):
        return regime_power(regime(key), n, prefactors)

    inertial = power("inertial-spreading")
    tanner = power("tanner")
    t_tg, _ = tanner_gravity_crossover(
        surface_tension=n.surface_tension,
        viscosity=n.viscosity,
        density=n.density,
        volume=n.volume,
        outer_density=n.outer_density or 0.0,
        gravity=n.gravity,
        tanner_prefactor=tanner[0],
        gravity_prefactor=power("gravity-spreading")[0],
    )
    t_vi = math.inf
    if plausible["inertial-spreading"]:
        _, _, a, k = inertial
        start = 0.0
        if plausible["viscous-spreading"]:
            start = power_law_crossing(c_v * n.capillary_speed, 1.0, a, k)[0]
        end = min(time_at(a, k, r_end), power_law_crossing(a, k, tanner[2], tanner[3])[0])
        if start < end:
            note = "lasts about τ_i (Phys. Rev. E 69, 016301, 2004)"
            spans["inertial-spreading"] = (start, end, note)
            t_vi = start
    if plausible["viscous-spreading"]:
        spans["viscous-spreading"] = (0.0, min(t_vi, _els_end(n)), "")
    if plausible["hertz-like-spreading"]:
        _, _, a, k = power("hertz-like-spreading")
        spans["hertz-like-spreading"] = (
            0.0,
            time_at(a, k, r_end),
            "an alternative to viscous-spreading for very viscous drops: fit both",
        )
    thin = THIN_CAP_FACTOR * n.radius
    tanner_start = time_at(tanner[2], tanner[3], thin)
    if plausible["tanner"] and tanner_start < t_tg:
        spans["tanner"] = (tanner_start, t_tg, "from R_c ≈ 2.2 R (thin cap) to R_c ~ ℓ_c")
    _, _, a_g, k_g = power("gravity-spreading")
    g_start = max(t_tg, time_at(a_g, k_g, thin))
    spans["gravity-spreading"] = (
        g_start,
        10.0 * g_start,
        "no natural end (arrest at θ_eq when wetting is partial): one decade planned",
    )
    return spans
