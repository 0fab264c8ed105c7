"""Conditions of validity of the catalogue's regimes, in terms of a sample's numbers.

Each condition takes a :class:`SampleNumbers` and returns ``(plausible,
reason)``; the reason shows the numbers that decided, in one line. The
free-drop conditions read the phase diagram (:mod:`._phase_diagram`), the
same one that ``predict`` lays out: a regime is plausible when its stage is
possible for some values of the diagram's constants inside their ranges.

Examples
--------
>>> from dropkin.scaling import sample_numbers
>>> n = sample_numbers(surface_tension=0.0634, viscosity=1.414, density=1261.0, radius=1e-3)
>>> inertial(n)[0], viscous(n)[0]
(False, True)
"""

from __future__ import annotations

import math

from ._numbers import SampleNumbers
from ._phase_diagram import ELS_PEAK, free_drop_diagram

#: Viscosity starts to slow coalescence above this Oh (Re_v = Oh**-2 < 5000;
#: J. Fluid Mech. 527, 85, 2005; status V). A threshold for viscous effects,
#: not a criterion for the Stokes regime: free drops read the phase diagram;
#: the substrate's viscous laws still use it.
OH_VISCOUS = 0.014
#: The outer fluid's viscosity governs the late neck above this outer Oh
#: (Nat. Commun. 5, 3182, 2014; status V).
OH_OUTER_CROSSOVER = 0.77
#: The outer fluid counts when it is within a decade of the drop liquid (D).
COMPARABLE = 10.0


def _g(x) -> str:
    return "unknown" if x is None else f"{x:.3g}"


def _outer_negligible(n: SampleNumbers) -> tuple[bool, str]:
    lam, dr = n.viscosity_ratio, n.density_ratio
    if lam is None or dr is None:
        return True, "outer fluid unknown, taken as negligible"
    ok = lam >= COMPARABLE and dr <= 1.0 / COMPARABLE
    return ok, f"η/η_o = {_g(lam)}, ρ_o/ρ = {_g(dr)}"


def _um(x) -> str:
    """A length in µm, mm or m."""
    for scale, unit in ((1.0, "m"), (1e-3, "mm")):
        if x >= scale:
            return f"{x / scale:.3g} {unit}"
    return f"{x * 1e6:.3g} µm"


def _stokes(n) -> tuple[bool, str]:
    """Whether the Stokes (log-law) stage is possible in the phase diagram, and why."""
    x = free_drop_diagram(n).crossover("viscous")
    lo, hi = x.radius_range
    peak = ELS_PEAK * n.radius
    text = (
        f"Oh = {_g(n.ohnesorge)} with ILV → Stokes at r ≈ {_um(x.radius)} ({_um(lo)}–{_um(hi)}), "
        f"the log law ends at R/(eπ) = {_um(peak)}"
    )
    return lo < peak, text


def viscous(n):
    ok, outer = _outer_negligible(n)
    stokes, text = _stokes(n)
    return stokes and ok, f"{text}; {outer}"


def viscous_equal_outer(n):
    lam = n.viscosity_ratio
    if lam is None:
        return False, "outer viscosity unknown"
    good = 1.0 / COMPARABLE <= lam <= COMPARABLE
    stokes, text = _stokes(n)
    return good and stokes, f"η/η_o = {_g(lam)} (comparable when within a decade of 1); {text}"


def always_first(n):
    return True, "the earliest regime for every viscosity (PNAS 109, 6857, 2012)"


def inertial(n):
    ok, outer = _outer_negligible(n)
    if n.ohnesorge_outer is not None and n.ohnesorge_outer >= OH_OUTER_CROSSOVER:
        ok = False
    x = free_drop_diagram(n).crossover("inertial")
    lo, hi = x.radius_range
    good = lo < n.radius and ok
    text = (
        f"Oh = {_g(n.ohnesorge)} with ILV → inertial at r ≈ {_um(x.radius)} "
        f"({_um(lo)}–{_um(hi)}; reached when < R)"
    )
    return good, f"{text}; {outer}"


def viscous_outer(n):
    oh = n.ohnesorge_outer
    if oh is None:
        return False, "outer fluid unknown"
    return oh >= OH_OUTER_CROSSOVER, f"Oh_out = {_g(oh)} (outer-viscous above 0.77)"


def inertial_outer(n):
    oh, dr = n.ohnesorge_outer, n.density_ratio
    if oh is None or dr is None:
        return False, "outer fluid unknown"
    good = oh < OH_OUTER_CROSSOVER and dr >= 1.0 / COMPARABLE
    return good, f"Oh_out = {_g(oh)} (outer-inertial below 0.77), ρ_o/ρ = {_g(dr)}"


def _angle_text(n):
    return "θ unknown" if n.contact_angle is None else f"θ = {math.degrees(n.contact_angle):.3g}°"


def viscous_sessile(n):
    return n.ohnesorge >= OH_VISCOUS, f"Oh = {_g(n.ohnesorge)}; {_angle_text(n)}"


def inertial_sessile(n):
    below = n.contact_angle is None or n.contact_angle < math.radians(85.0)
    good = n.ohnesorge < 1.0 and below
    return good, f"Oh = {_g(n.ohnesorge)} (< 1); {_angle_text(n)} (t^2/3 needs θ < 90°)"


def inertial_free_or_right_angle(n):
    good, text = inertial(n)
    if n.contact_angle is not None and abs(math.degrees(n.contact_angle) - 90.0) > 5.0:
        return False, f"{_angle_text(n)}: on a substrate t^1/2 holds at θ = 90° only"
    return good, text


def sessile_width(n):
    return n.ohnesorge >= OH_VISCOUS, f"Oh = {_g(n.ohnesorge)}; thin viscous drops, top view"


def inertial_spreading(n):
    return n.ohnesorge < 1.0, f"Oh = {_g(n.ohnesorge)} (inertial when < 1)"


def viscous_spreading(n):
    return n.ohnesorge >= OH_VISCOUS, f"Oh = {_g(n.ohnesorge)} (viscous when ≥ {OH_VISCOUS})"


def hertz_like(n):
    return n.ohnesorge >= 1.0, f"Oh = {_g(n.ohnesorge)} (very viscous when ≥ 1)"


#: Largest equilibrium contact angle taken as complete wetting for Tanner's law
#: (common practice: the law needs the dynamic angle far above the equilibrium one,
#: and a few degrees is where partial-wetting drops are reported to stop short of it).
TANNER_WETTING_DEG = 5.0


def tanner(n):
    small = n.bond < 1.0
    size = f"Bo = {_g(n.bond)} (small drop when < 1)"
    if n.contact_angle is None:
        return small, f"{size}; complete wetting assumed (no equilibrium angle given)"
    degrees = math.degrees(n.contact_angle)
    wets = degrees <= TANNER_WETTING_DEG
    verdict = "complete wetting" if wets else "partial wetting: needs complete wetting"
    return small and wets, f"{size}; θ_e = {degrees:.3g}° ({verdict}, ≤ {TANNER_WETTING_DEG:g}°)"


def gravity(n):
    return True, (
        f"late stage once R_c ≳ ℓ_c = {n.capillary_length * 1e3:.3g} mm; "
        f"R/ℓ_c = {_g(n.radius / n.capillary_length)}"
    )


def null_model(n):
    return False, "null model: a fit on (νt)^1/2 with C ≈ 1 is a coincidence check"
