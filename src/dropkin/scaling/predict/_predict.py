"""What a sample should show, and how to record it (the logic behind ``dropkin predict``).

From a sample's numbers: the candidate regimes, the time window in which
each is expected to govern (between its crossovers, and while ``r`` stays
below a fraction of R), and a recording plan — the frame rate and pixel
size that give at least one decade of time with at least 20 frames inside
each expected regime, and a radius of at least 10 pixels at the start of
that decade (docs/physics.md §4.4: r ≥ 5–10 px for ≲ 10 % error, a rule of
thumb, status M). Windows rest on the catalogue's O(1) prefactors (mostly D
or M), so they are estimates to a factor of a few, not predictions to the
frame.

Examples
--------
>>> from dropkin.scaling import sample_numbers
>>> water = sample_numbers(surface_tension=0.07274, viscosity=1.0016e-3, density=998.2,
...                        radius=1e-3, outer_viscosity=1.81e-5, outer_density=1.204)
>>> p = predict(water, "coalescence")
>>> [w.key for w in p.windows if w.expected]
['inertially-limited-viscous', 'inertial']
>>> inertial = p.window("inertial")
>>> round(inertial.end * 1e3, 2), round(inertial.frame_rate / 1e3)   # ms, kfps
(0.64, 35)
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ...errors import ExperimentError
from ..regimes._catalogue import SCALING_GEOMETRIES, Regime, candidates, regime
from ..regimes._crossovers import (
    Crossover,
    crossovers,
    power_law_crossing,
    tanner_gravity_crossover,
)
from ..regimes._dimensions import DimensionalLaw, dimensional_laws
from ..regimes._numbers import SampleNumbers

__all__ = ["RegimeWindow", "RecordingPlan", "Prediction", "predict", "THIN_CAP_FACTOR"]

#: Tanner's thin-cap law needs a small angle: a cap of the drop's volume has
#: θ ≤ 0.5 rad once R_c ≥ (32/3)^(1/3) R ≈ 2.2 R (V = πθR_c³/4; derived, D).
THIN_CAP_FACTOR = (32.0 / 3.0) ** (1.0 / 3.0)


@dataclass(frozen=True)
class RegimeWindow:
    """One candidate regime of a sample, with its expected window and what recording it needs.

    Attributes
    ----------
    key : str
        The regime key.
    regime : Regime
        The catalogue record.
    plausible : bool
        Whether its conditions of validity hold.
    reason : str
        The numbers that decided.
    group : float or None
        The group's value (m s^-n).
    prefactor : float or None
        The dimensionless C used for the window.
    placeholder : bool
        True when no published C exists and 1 was used.
    expected : bool
        Plausible, and a time window exists in which it governs.
    start, end : float or None
        The expected window, time since contact (s).
    radius_start, radius_end : float or None
        The law's radius at `start` and `end` (m).
    decades : float or None
        ``log10(end / start)``; infinite when the window starts at contact.
    fit_start, fit_end : float or None
        The stretch to record: the last `decades` of the window (or all of it
        when shorter).
    frame_rate : float or None
        Frame rate needed for the frames per decade inside the stretch (Hz).
    pixel_size : float or None
        Largest pixel size that keeps r ≥ the pixel rule at `fit_start` (m).
    reachable : bool
        Whether that frame rate and pixel size are within the limits given.
    frames_in_fit : float or None
        Frames the user's recording puts inside the stretch (when known).
    pixels_at_fit_start : float or None
        Pixels across r at `fit_start` in the user's recording (when known).
    note : str
        Caveats.
    """

    key: str
    regime: Regime
    plausible: bool
    reason: str
    group: float | None
    prefactor: float | None = None
    placeholder: bool = False
    expected: bool = False
    start: float | None = None
    end: float | None = None
    radius_start: float | None = None
    radius_end: float | None = None
    decades: float | None = None
    fit_start: float | None = None
    fit_end: float | None = None
    frame_rate: float | None = None
    pixel_size: float | None = None
    reachable: bool = False
    frames_in_fit: float | None = None
    pixels_at_fit_start: float | None = None
    note: str = ""


@dataclass(frozen=True)
class RecordingPlan:
    """How to record a sample so that each reachable expected regime can be fitted.

    Attributes
    ----------
    frame_rate : float or None
        The highest frame rate any covered regime needs (Hz).
    pixel_size : float or None
        The smallest pixel size any covered regime needs (m).
    duration : float or None
        How long after contact to keep recording (s).
    frames : int or None
        Frames from contact to `duration` at `frame_rate`.
    smallest_radius : float or None
        Smallest radius worth measuring: `pixels_per_radius` pixels (m), at the
        user's pixel size when given, else at the planned one.
    smallest_radius_lenient : float or None
        The same at 5 pixels, the lenient end of the rule of thumb (m).
    covers : tuple of str
        The regimes the plan is built for.
    out_of_reach : tuple of str
        Expected regimes needing more than the frame-rate or pixel limits.
    frames_per_decade : int
    pixels_per_radius : float
    decades : float
        The settings the plan was made with.
    """

    frame_rate: float | None
    pixel_size: float | None
    duration: float | None
    frames: int | None
    smallest_radius: float | None
    smallest_radius_lenient: float | None
    covers: tuple[str, ...]
    out_of_reach: tuple[str, ...]
    frames_per_decade: int
    pixels_per_radius: float
    decades: float


@dataclass(frozen=True)
class Prediction:
    """Everything ``dropkin predict`` reports, as plain data.

    Attributes
    ----------
    numbers : SampleNumbers
    geometry, view : str
    windows : tuple of RegimeWindow
        Every candidate of the geometry and view, in catalogue order.
    crossovers : tuple of Crossover
    plan : RecordingPlan
    dimensional : tuple of DimensionalLaw
        Laws the sample's dimensions allow; those matching the catalogue
        carry its keys in ``matches``.
    frame_rate, pixel_size : float or None
        The user's recording, when known (Hz, m).
    notes : tuple of str
        Assumptions made on the way (defaults, placeholders).
    """

    numbers: SampleNumbers
    geometry: str
    view: str
    windows: tuple[RegimeWindow, ...]
    crossovers: tuple[Crossover, ...]
    plan: RecordingPlan
    dimensional: tuple[DimensionalLaw, ...]
    frame_rate: float | None = None
    pixel_size: float | None = None
    notes: tuple[str, ...] = ()

    def window(self, key: str) -> RegimeWindow:
        """The window of one regime key."""
        for w in self.windows:
            if w.key == key:
                return w
        raise KeyError(key)


def _power(entry: Regime, numbers, prefactors):
    """(C, placeholder?, dimensional prefactor, exponent) or None without a group."""
    group = entry.group(numbers)
    if group is None:
        return None
    c = prefactors.get(entry.key, entry.prefactor)
    placeholder = c is None
    c = 1.0 if c is None else float(c)
    return c, placeholder, c * group, float(entry.exponent)


def _time_at(a, n, r):
    """Time at which ``a t**n`` reaches r."""
    return (r / a) ** (1.0 / n)


def _spans(numbers: SampleNumbers, geometry, plausible, prefactors, end_fraction):
    """{key: (start, end, note)} for the regimes expected to govern some time."""
    n = numbers
    r_end = end_fraction * n.radius
    c_v = prefactors.get(
        "inertially-limited-viscous", regime("inertially-limited-viscous").prefactor
    )
    speed = n.capillary_speed
    els_end = n.viscous_time / math.e  # where -x ln x peaks: r = R/(e π)
    spans: dict[str, tuple[float, float, str]] = {}

    def power(key):
        return _power(regime(key), n, prefactors)

    if geometry == "coalescence":
        late = next(
            (k for k in ("viscous-outer", "inertial-outer", "inertial") if plausible[k]), None
        )
        t_c = math.inf
        if late is not None:
            _, _, a, k = power(late)
            t_c, _ = power_law_crossing(c_v * speed, 1.0, a, k)
            t_end = _time_at(a, k, r_end)
            if t_c < t_end:
                spans[late] = (t_c, t_end, "after the viscous stage")
            else:
                t_c = math.inf
        linear_end = min(t_c, r_end / (c_v * speed))
        spans["inertially-limited-viscous"] = (
            0.0,
            linear_end,
            "the crossover to the ELS log law is not predicted (docs/physics.md gives no formula)",
        )
        for key in ("viscous", "viscous-equal-outer"):
            if plausible.get(key):
                spans[key] = (0.0, min(t_c, els_end), "shares its start with the ILV stage")
    elif geometry == "sessile-coalescence":
        early = power("viscous-sessile") if plausible["viscous-sessile"] else None
        early_end = math.inf
        for key in ("inertial-sessile", "inertial"):
            if not plausible.get(key):
                continue
            _, _, a, k = power(key)
            start = 0.0 if early is None else power_law_crossing(early[2], 1.0, a, k)[0]
            end = _time_at(a, k, r_end)
            if start < end:
                spans[key] = (start, end, "")
                early_end = min(early_end, start)
        if early is not None:
            spans["viscous-sessile"] = (0.0, min(early_end, r_end / early[2]), "")
    else:
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
                start = power_law_crossing(c_v * speed, 1.0, a, k)[0]
            end = min(_time_at(a, k, r_end), power_law_crossing(a, k, tanner[2], tanner[3])[0])
            if start < end:
                spans["inertial-spreading"] = (start, end, "lasts about τ_i (Biance et al.)")
                t_vi = start
        if plausible["viscous-spreading"]:
            spans["viscous-spreading"] = (0.0, min(t_vi, els_end), "")
        if plausible["hertz-like-spreading"]:
            _, _, a, k = power("hertz-like-spreading")
            spans["hertz-like-spreading"] = (
                0.0,
                _time_at(a, k, r_end),
                "an alternative to viscous-spreading for very viscous drops: fit both",
            )
        thin = THIN_CAP_FACTOR * n.radius
        tanner_start = _time_at(tanner[2], tanner[3], thin)
        if plausible["tanner"] and tanner_start < t_tg:
            spans["tanner"] = (tanner_start, t_tg, "from R_c ≈ 2.2 R (thin cap) to R_c ~ ℓ_c")
        _, _, a_g, k_g = power("gravity-spreading")
        g_start = max(t_tg, _time_at(a_g, k_g, thin))
        spans["gravity-spreading"] = (
            g_start,
            10.0 * g_start,
            "no natural end (arrest at θ_eq when wetting is partial): one decade planned",
        )
    return spans


def _radius(entry: Regime, numbers, c, t) -> float:
    return float(entry.law(numbers)(np.array([t]), c)[0])


def predict(
    numbers: SampleNumbers,
    geometry: str,
    view: str = "side",
    *,
    frame_rate=None,
    pixel_size=None,
    prefactors=None,
    decades=1.0,
    frames_per_decade=20,
    pixels_per_radius=10.0,
    max_frame_rate=1e7,
    min_pixel_size=0.5e-6,
    end_fraction=0.5,
    notes=(),
) -> Prediction:
    """Candidate regimes, their windows, the crossovers and a recording plan for a sample.

    Parameters
    ----------
    numbers : SampleNumbers
    geometry : str
        ``coalescence``, ``sessile-coalescence`` or ``spreading``.
    view : str
        ``side`` or ``bottom``.
    frame_rate, pixel_size : float, optional
        The user's recording (Hz, m), to count frames and pixels per regime.
    prefactors : Mapping[str, float], optional
        Dimensionless C per regime key, replacing the catalogue's.
    decades : float
        Decades of time wanted inside each regime (default 1).
    frames_per_decade : int
        Frames wanted inside that stretch (default 20).
    pixels_per_radius : float
        Pixels wanted across r at the start of the stretch (default 10; the
        strict end of docs/physics.md §4.4's 5–10 px rule of thumb, M).
    max_frame_rate : float
        Fastest frame rate counted as within reach (Hz; default 1e7, above
        the ~1e6 frames/s of ultra-high-speed cameras, M).
    min_pixel_size : float
        Finest pixel size counted as within reach (m; default 0.5 µm, about
        the optical resolution limit, common practice).
    end_fraction : float
        A law is taken to hold while r < end_fraction · R (default 0.5).
    notes : sequence of str
        Assumptions made by the caller, carried into the result.

    Returns
    -------
    Prediction
    """
    if geometry not in SCALING_GEOMETRIES:
        raise ExperimentError(
            "is not a known choice",
            key="geometry",
            value=geometry,
            expected=" or ".join(SCALING_GEOMETRIES),
        )
    for name, value in (
        ("decades", decades),
        ("frames_per_decade", frames_per_decade),
        ("pixels_per_radius", pixels_per_radius),
        ("end_fraction", end_fraction),
    ):
        if not value > 0:
            raise ExperimentError("must be positive", key=name, value=value)
    prefactors = dict(prefactors or {})
    found = candidates(numbers, geometry, view)
    plausible = {c.regime.key: c.plausible for c in candidates(numbers, geometry, "side")}
    plausible.update({c.regime.key: c.plausible for c in found})
    spans = _spans(numbers, geometry, plausible, prefactors, end_fraction)
    windows = []
    for cand in found:
        entry = cand.regime
        power = _power(entry, numbers, prefactors)
        base = {
            "key": entry.key,
            "regime": entry,
            "plausible": cand.plausible,
            "reason": cand.reason,
            "group": cand.group,
        }
        if power is None:
            note = "no scale group (or no contact angle): window not predicted"
            windows.append(RegimeWindow(**base, expected=cand.plausible, note=note))
            continue
        c, placeholder = power[0], power[1]
        base.update(prefactor=c, placeholder=placeholder)
        if entry.key not in spans or not cand.plausible:
            windows.append(RegimeWindow(**base))
            continue
        start, end, note = spans[entry.key]
        if not end > start:
            windows.append(RegimeWindow(**base, note=note))
            continue
        available = math.inf if start == 0 else math.log10(end / start)
        if available >= decades:
            fit_start = end / 10.0**decades
        else:
            fit_start = start
            note = f"only {available:.2g} decades available; " + note
        r_fit = _radius(entry, numbers, c, fit_start)
        rate = frames_per_decade / (end - fit_start)
        size = r_fit / pixels_per_radius
        if placeholder:
            note = "C unknown: 1 used; " + note
        windows.append(
            RegimeWindow(
                **base,
                expected=True,
                start=start,
                end=end,
                radius_start=_radius(entry, numbers, c, start) if start > 0 else 0.0,
                radius_end=_radius(entry, numbers, c, end),
                decades=available,
                fit_start=fit_start,
                fit_end=end,
                frame_rate=rate,
                pixel_size=size,
                reachable=rate <= max_frame_rate and size >= min_pixel_size,
                frames_in_fit=None if frame_rate is None else (end - fit_start) * frame_rate,
                pixels_at_fit_start=None if pixel_size is None else r_fit / pixel_size,
                note=note.strip("; "),
            )
        )
    plan = _plan(windows, pixel_size, frames_per_decade, pixels_per_radius, decades)
    return Prediction(
        numbers=numbers,
        geometry=geometry,
        view=view,
        windows=tuple(windows),
        crossovers=crossovers(numbers, geometry, prefactors=prefactors),
        plan=plan,
        dimensional=dimensional_laws(_quantities(numbers)),
        frame_rate=frame_rate,
        pixel_size=pixel_size,
        notes=tuple(notes),
    )


def _plan(windows, given_pixel, frames_per_decade, pixels_per_radius, decades) -> RecordingPlan:
    covered = [w for w in windows if w.expected and w.frame_rate is not None and w.reachable]
    far = tuple(
        w.key for w in windows if w.expected and w.frame_rate is not None and not w.reachable
    )
    rate = max((w.frame_rate for w in covered), default=None)
    size = min((w.pixel_size for w in covered), default=None)
    duration = max((w.fit_end for w in covered), default=None)
    pixel = given_pixel if given_pixel is not None else size
    return RecordingPlan(
        frame_rate=rate,
        pixel_size=size,
        duration=duration,
        frames=None if rate is None else math.ceil(rate * duration),
        smallest_radius=None if pixel is None else pixels_per_radius * pixel,
        smallest_radius_lenient=None if pixel is None else 5.0 * pixel,
        covers=tuple(w.key for w in covered),
        out_of_reach=far,
        frames_per_decade=frames_per_decade,
        pixels_per_radius=pixels_per_radius,
        decades=decades,
    )


def _quantities(n: SampleNumbers) -> dict[str, tuple[float, str]]:
    """The sample's quantities with their [M, L, T] dimensions, for dimensional analysis."""
    q = {
        "surface_tension": (n.surface_tension, "M T^-2"),
        "viscosity": (n.viscosity, "M L^-1 T^-1"),
        "density": (n.density, "M L^-3"),
        "radius": (n.radius, "L"),
        "volume": (n.volume, "L^3"),
        "gravity": (n.gravity, "L T^-2"),
    }
    if n.outer_viscosity is not None:
        q["outer_viscosity"] = (n.outer_viscosity, "M L^-1 T^-1")
    if n.outer_density is not None:
        q["outer_density"] = (n.outer_density, "M L^-3")
    return q
