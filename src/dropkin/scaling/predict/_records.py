"""The records of a prediction: each regime's window, the recording plan, and the whole.

They are plain frozen data, built by :func:`~dropkin.scaling.predict._predict.predict`
and turned into text or JSON by :mod:`._text`.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..regimes._crossovers import Crossover
from ..regimes._dimensions import DimensionalLaw
from ..regimes._numbers import SampleNumbers
from ..regimes._regime import Regime

__all__ = ["RegimeWindow", "RecordingPlan", "Prediction"]


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
