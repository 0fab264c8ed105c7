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

import numpy as np

from ...errors import ExperimentError
from ..regimes._catalogue import SCALING_GEOMETRIES, Regime, candidates
from ..regimes._crossovers import crossovers
from ..regimes._dimensions import dimensional_laws
from ..regimes._numbers import SampleNumbers
from ._records import Prediction, RecordingPlan, RegimeWindow
from ._windows import THIN_CAP_FACTOR, governing_spans, regime_power

__all__ = ["RegimeWindow", "RecordingPlan", "Prediction", "predict", "THIN_CAP_FACTOR"]


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
    wanted = {
        "decades": decades,
        "frames_per_decade": frames_per_decade,
        "pixels_per_radius": pixels_per_radius,
    }
    _check_settings(geometry, **wanted, end_fraction=end_fraction)
    prefactors = dict(prefactors or {})
    found = candidates(numbers, geometry, view)
    plausible = {c.regime.key: c.plausible for c in candidates(numbers, geometry, "side")}
    plausible.update({c.regime.key: c.plausible for c in found})
    spans = governing_spans(numbers, geometry, plausible, prefactors, end_fraction)
    given = {"frame_rate": frame_rate, "pixel_size": pixel_size}
    limits = {"max_frame_rate": max_frame_rate, "min_pixel_size": min_pixel_size}
    windows = [
        _window(cand, numbers, spans, prefactors, **given, **wanted, **limits) for cand in found
    ]
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


def _check_settings(geometry, **positive) -> None:
    """Refuse an unknown geometry, and any setting that is not positive."""
    if geometry not in SCALING_GEOMETRIES:
        raise ExperimentError(
            "is not a known choice",
            key="geometry",
            value=geometry,
            expected=" or ".join(SCALING_GEOMETRIES),
        )
    for name, value in positive.items():
        if not value > 0:
            raise ExperimentError("must be positive", key=name, value=value)


def _window(
    cand,
    numbers,
    spans,
    prefactors,
    *,
    frame_rate,
    pixel_size,
    decades,
    frames_per_decade,
    pixels_per_radius,
    max_frame_rate,
    min_pixel_size,
) -> RegimeWindow:
    """One candidate's window: its span, the stretch to record, and what that needs."""
    entry = cand.regime
    power = regime_power(entry, numbers, prefactors)
    base = {
        "key": entry.key,
        "regime": entry,
        "plausible": cand.plausible,
        "reason": cand.reason,
        "group": cand.group,
    }
    if power is None:
        note = "no scale group (or no contact angle): window not predicted"
        return RegimeWindow(**base, expected=cand.plausible, note=note)
    c, placeholder = power[0], power[1]
    base.update(prefactor=c, placeholder=placeholder)
    if entry.key not in spans or not cand.plausible:
        return RegimeWindow(**base)
    start, end, note = spans[entry.key]
    if not end > start:
        return RegimeWindow(**base, note=note)
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
    return RegimeWindow(
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
