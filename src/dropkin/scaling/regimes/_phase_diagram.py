"""The phase diagram of two free drops coalescing: which stage governs when, with ranges.

One home for the sequence of regimes that ``predict``, the catalogue's
conditions and the verdict all read (docs/physics.md §3, "The phase
diagram"). Every coalescence opens in the inertially limited viscous (ILV)
regime, ``r = C_v (γ/η) t``, whatever the viscosity (PNAS 109, 6857, 2012);
it lasts until inertia or viscosity takes over on its own (Phys. Rev. E 88,
063010, 2013, abstract):

- ILV → inertial where the linear law meets ``D0 (γR/ρ)^¼ t^½``:
  ``t = (D0/C_v)² Oh² τ_i``, ``r = (D0²/C_v) Oh R`` (Phys. Rev. Lett. 106,
  114501, 2011: a Reynolds number on the gap width r²/R reaching one);
- ILV → Stokes (the ELS log law) once viscous momentum has crossed the
  drop, ``t = K_s R²/ν``, ``r = C_v K_s R/Oh²`` (derived, D: the published
  boundary could not be read here); the log law then holds only up to
  its peak, r = R/(eπ) ≈ 0.12 R.

So low-Oh drops go ILV → inertial, and only drops with Oh of a few or more
go ILV → Stokes. Each constant carries a range; a crossover is computed
at every corner of its constants' ranges, and reported as the central
value with the lowest and highest. A stage is *expected* with the central
constants and *possible* somewhere inside the ranges.

Examples
--------
>>> from dropkin.scaling import sample_numbers
>>> water = sample_numbers(surface_tension=0.07274, viscosity=1.0016e-3, density=998.2,
...                        radius=1e-3)
>>> d = free_drop_diagram(water)
>>> [s.key for s in d.stages if s.expected]
['inertially-limited-viscous', 'inertial']
>>> x = d.crossover("inertial")
>>> [round(v * 1e9) for v in (x.time, *x.time_range)]          # ns
[74, 13, 592]
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, replace

from ._matching import power_law_crossing, viscous_inertial_crossover
from ._numbers import SampleNumbers

__all__ = [
    "Constant",
    "Crossover",
    "Stage",
    "PhaseDiagram",
    "ILV_SPEED",
    "INERTIAL_PREFACTOR",
    "STOKES_ONSET",
    "ELS_PEAK",
    "free_drop_diagram",
    "ranged_crossing",
]


@dataclass(frozen=True)
class Constant:
    """An O(1) constant of the diagram: its value, the range it may take, and why."""

    symbol: str
    value: float
    low: float
    high: float
    status: str
    source: str

    def fixed(self, value: float) -> Constant:
        """The same constant set by the user: no range left."""
        return replace(self, value=float(value), low=float(value), high=float(value))

    def text(self) -> str:
        if self.low == self.high:
            return f"{self.symbol} = {self.value:.3g}"
        return f"{self.symbol} = {self.value:.3g} ({self.low:.3g}–{self.high:.3g}, {self.status})"


#: C_v of the ILV law r = C_v (γ/η) t. The constant opening speed of order γ/η
#: is the published claim (PNAS 109, 6857, 2012; V for the claim); the
#: coefficient was not read, so 1 with a factor two either side is assumed (M).
ILV_SPEED = Constant(
    "C_v", 1.0, 0.5, 2.0, "M", "order-one speed γ/η (PNAS 109, 6857, 2012); range assumed"
)
#: D0 of the inertial law r = D0 (γR/ρ)^¼ t^½: published fits lie in 1.0–1.7
#: depending on liquid and on what R means (M); 1.2 is the catalogue's value.
INERTIAL_PREFACTOR = Constant(
    "D0", 1.2, 1.0, 1.7, "M", "published fits of the t^1/2 law, R the drop radius (M)"
)
#: K_s of the ILV → Stokes onset t = K_s R²/ν: the log law needs the flow of the
#: whole drop, which viscous diffusion sets up in a time of order R²/ν (D);
#: a factor four either side is allowed for the O(1) factor.
STOKES_ONSET = Constant(
    "K_s", 1.0, 0.25, 4.0, "D", "viscous diffusion across the drop, t ~ R²/ν (derived)"
)
#: The ELS formula −(1/π)(γt/η) ln(γt/(ηR)) peaks at r/R = 1/(eπ) (D; J. Fluid
#: Mech. 401, 293, 1999): it cannot describe a larger neck.
ELS_PEAK = 1.0 / (math.e * math.pi)


@dataclass(frozen=True)
class Crossover:
    """A predicted change of regime, with the range its constants allow.

    Attributes
    ----------
    early, late : str
        Regime keys before and after.
    time, radius : float
        Central estimate: time since contact (s) and radius (m).
    reached : bool
        Whether the central crossover falls while the laws still hold
        (radius below R for coalescence; always True for spreading).
    formula : str
        How it was computed.
    status : str
        Status label (docs/physics.md §0), usually D: O(1) factors matter.
    note : str
        The constants used, and caveats.
    time_range, radius_range : tuple of float
        Lowest and highest values over the constants' ranges (equal to the
        central value when no constant has a range).
    possible : bool
        Whether it is reached for some constants inside their ranges
        (defaults to `reached`).
    """

    early: str
    late: str
    time: float
    radius: float
    reached: bool
    formula: str
    status: str
    note: str = ""
    time_range: tuple[float, float] = (math.nan, math.nan)
    radius_range: tuple[float, float] = (math.nan, math.nan)
    possible: bool | None = None

    def __post_init__(self):
        if self.possible is None:
            object.__setattr__(self, "possible", self.reached)
        if math.isnan(self.time_range[0]):
            object.__setattr__(self, "time_range", (self.time, self.time))
        if math.isnan(self.radius_range[0]):
            object.__setattr__(self, "radius_range", (self.radius, self.radius))


def ranged_crossing(func, constants):
    """``(t, r), (t_lo, t_hi), (r_lo, r_hi)`` of ``func(*values) -> (t, r)`` over constant ranges.

    ``func`` must be monotonic in each constant (every matching here is a
    product of powers), so the corners of the ranges bound it.

    Examples
    --------
    >>> c = Constant("a", 2.0, 1.0, 4.0, "M", "")
    >>> ranged_crossing(lambda a: (a * a, a), [c])
    ((4.0, 2.0), (1.0, 16.0), (1.0, 4.0))
    """
    central = func(*(c.value for c in constants))
    corners = [func(*combo) for combo in itertools.product(*((c.low, c.high) for c in constants))]
    points = [central, *corners]
    ts, rs = [p[0] for p in points], [p[1] for p in points]
    return central, (min(ts), max(ts)), (min(rs), max(rs))


@dataclass(frozen=True)
class Stage:
    """One regime's place in the diagram: when it governs (central), and whether it can."""

    key: str
    start: float
    end: float
    expected: bool
    possible: bool
    note: str = ""


@dataclass(frozen=True)
class PhaseDiagram:
    """The stages of one sample in order of time, and the crossovers between them."""

    stages: tuple[Stage, ...]
    crossovers: tuple[Crossover, ...]

    def stage(self, key: str) -> Stage | None:
        return next((s for s in self.stages if s.key == key), None)

    def crossover(self, late: str) -> Crossover | None:
        return next((x for x in self.crossovers if x.late == late), None)


def _constants(prefactors):
    """C_v and D0, fixed where the user gave them."""
    prefactors = prefactors or {}
    c_v, d0 = ILV_SPEED, INERTIAL_PREFACTOR
    if "inertially-limited-viscous" in prefactors:
        c_v = c_v.fixed(prefactors["inertially-limited-viscous"])
    if "inertial" in prefactors:
        d0 = d0.fixed(prefactors["inertial"])
    return c_v, d0


def _ilv_inertial(n: SampleNumbers, c_v: Constant, d0: Constant) -> Crossover:
    def at(cv, d):
        return viscous_inertial_crossover(
            viscosity=n.viscosity,
            density=n.density,
            surface_tension=n.surface_tension,
            radius=n.radius,
            viscous_prefactor=cv,
            inertial_prefactor=d,
        )

    (t, r), t_range, r_range = ranged_crossing(at, [c_v, d0])
    return Crossover(
        "inertially-limited-viscous",
        "inertial",
        t,
        r,
        r < n.radius,
        "t_c = (D0/C_v)² Oh² τ_i, r_c = (D0²/C_v) Oh R",
        "D",
        f"{d0.text()}, {c_v.text()}; inertia is reached only if r_c < R "
        "(Phys. Rev. Lett. 106, 114501, 2011)",
        t_range,
        r_range,
        r_range[0] < n.radius,
    )


def _ilv_stokes(n: SampleNumbers, c_v: Constant, key: str = "viscous") -> Crossover:
    def at(cv, k):
        t = k * n.radius**2 / n.kinematic_viscosity
        return t, cv * n.capillary_speed * t

    (t, r), t_range, r_range = ranged_crossing(at, [c_v, STOKES_ONSET])
    return Crossover(
        "inertially-limited-viscous",
        key,
        t,
        r,
        r < ELS_PEAK * n.radius,
        "t_c = K_s R²/ν, r_c = C_v K_s R/Oh²",
        "D",
        f"{STOKES_ONSET.text()}, {c_v.text()}; the log law is reached only if r_c < R/(eπ) "
        f"= {ELS_PEAK * n.radius * 1e6:.3g} µm",
        t_range,
        r_range,
        r_range[0] < ELS_PEAK * n.radius,
    )


def _late_outer(n: SampleNumbers, c_v: Constant, late: str, group, c_late, exponent):
    def at(cv, c):
        return power_law_crossing(cv * n.capillary_speed, 1.0, c * group, exponent)

    (t, r), t_range, r_range = ranged_crossing(at, [c_v, c_late])
    return Crossover(
        "inertially-limited-viscous",
        late,
        t,
        r,
        r < n.radius,
        f"C_v (γ/η) t = {c_late.symbol} group t^{exponent:g}",
        "D",
        f"{c_late.text()}, {c_v.text()}; the outer fluid takes over (Nat. Commun. 5, 3182, 2014)",
        t_range,
        r_range,
        r_range[0] < n.radius,
    )


def free_drop_diagram(
    n: SampleNumbers, prefactors=None, *, end_fraction=0.5, late="inertial", outer=None
) -> PhaseDiagram:
    """The stages and crossovers of two free drops (docs/physics.md §3).

    Parameters
    ----------
    n : SampleNumbers
    prefactors : Mapping[str, float], optional
        C per regime key; a given C replaces the constant and its range.
    end_fraction : float
        A law is taken to hold while r < end_fraction · R.
    late : str
        The late regime that inertia leads to: ``inertial``, or an outer-fluid
        regime (``viscous-outer``, ``inertial-outer``) when it governs.
    outer : (group, Constant, exponent), optional
        The outer-fluid law when `late` is one.
    """
    c_v, d0 = _constants(prefactors)
    speed, r_end = n.capillary_speed, end_fraction * n.radius
    if late == "inertial" or outer is None:
        late = "inertial"
        to_late = _ilv_inertial(n, c_v, d0)
        late_law = (d0.value * (n.surface_tension * n.radius / n.density) ** 0.25, 0.5)
    else:
        to_late = _late_outer(n, c_v, late, *outer)
        late_law = (outer[1].value * outer[0], outer[2])
    to_stokes = _ilv_stokes(n, c_v)
    els_end = n.viscous_time / math.e  # where the log law peaks, r = R/(eπ)
    late_end = (r_end / late_law[0]) ** (1.0 / late_law[1])
    late_expected = to_late.radius < r_end
    stokes_expected = to_stokes.reached and to_stokes.time < to_late.time
    stokes_possible = to_stokes.radius_range[0] < ELS_PEAK * n.radius and (
        to_stokes.time_range[0] < to_late.time_range[1]
    )
    ilv_end = min(r_end / (c_v.value * speed), to_late.time if late_expected else math.inf)
    if stokes_expected:
        ilv_end = min(ilv_end, to_stokes.time)
    stages = [
        Stage("inertially-limited-viscous", 0.0, ilv_end, True, True, "first at every viscosity"),
        Stage(
            "viscous",
            to_stokes.time,
            min(els_end, to_late.time),
            stokes_expected,
            stokes_possible,
            "after viscous momentum has crossed the drop; up to r = R/(eπ)",
        ),
        Stage(
            late,
            to_late.time,
            late_end,
            late_expected,
            to_late.possible,
            "after the viscous stage",
        ),
    ]
    return PhaseDiagram(tuple(stages), (to_late, to_stokes))
