"""The one time origin of an analysis' outputs, and how the other one relates to it.

A measurement finds the contact instant from the frames (``measure.json``'s
``contact_time_s``; ``radius.csv``'s ``since_contact_s`` counts from it). The
fit then refits the contact instant t₀ inside the bracket the frames prove,
together with the laws; ``fit.json``'s windows and crossovers count from that
t₀. The plots, the report and the console follow the fit: τ = t − t₀, with
t₀ the fitted instant (or the one fixed with ``--t0``). Only when there is no
fitted t₀ (a fit that failed before it got one) do they count from the
measured contact, and say so. Every output that shows τ states which origin
it uses and how far the other one lies from it.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._style import _num

__all__ = [
    "TimeOrigin",
    "time_origin",
    "time_text",
    "origin_sentence",
    "origin_dict",
    "series_arrays",
]


@dataclass(frozen=True)
class TimeOrigin:
    """The origin of τ, in s from the first frame.

    Attributes
    ----------
    t0 : float or None
        The origin of τ = t − t₀; None when neither a fitted nor a measured
        contact instant is known.
    kind : str
        ``"fitted"`` (refitted with the laws), ``"fixed"`` (``--t0``),
        ``"measured"`` (the fit gave none: the measured contact) or ``"none"``.
    measured, measured_err : float or None
        The measured contact instant and its uncertainty (``measure.json``).
    """

    t0: float | None
    kind: str
    measured: float | None
    measured_err: float | None

    @property
    def shift(self) -> float | None:
        """``since_contact_s − τ`` (s): the measured contact minus the origin, t_c − t₀."""
        if self.t0 is None or self.measured is None:
            return None
        return self.measured - self.t0

    def tau(self, time) -> np.ndarray:
        """τ of each time (s from the first frame); NaN everywhere without an origin."""
        time = np.asarray(time, dtype=float)
        return time - self.t0 if self.t0 is not None else np.full(time.shape, np.nan)

    @property
    def axis_label(self) -> str:
        """The label of a τ axis in ms, naming the origin."""
        if self.kind in ("fitted", "fixed"):
            return f"τ = t − t₀ (ms), t₀ {self.kind} contact"
        return "τ = t − t_c (ms), t_c measured contact"


def time_origin(series, verdict) -> TimeOrigin:
    """The origin the outputs of `series` and `verdict` count τ from (see the module)."""
    measured = _num(series.contact_time)
    err = _num(series.contact_time_err)
    t0 = _num(getattr(verdict, "t0", None)) if verdict is not None else None
    if t0 is not None:
        kind = "fixed" if getattr(verdict, "t0_fixed", False) else "fitted"
        return TimeOrigin(t0, kind, measured, err)
    if measured is not None:
        return TimeOrigin(measured, "measured", measured, err)
    return TimeOrigin(None, "none", None, None)


def time_text(seconds, digits: int = 3) -> str:
    """A time with a readable SI prefix: ``time_text(6.667e-05)`` → ``'66.7 µs'``."""
    value = _num(seconds)
    if value is None:
        return "—"
    size = abs(value)
    for scale, unit in ((1.0, "s"), (1e-3, "ms"), (1e-6, "µs")):
        if size >= scale:
            return f"{value / scale:.{digits}g} {unit}"
    return f"{value * 1e9:.{digits}g} ns"


def origin_sentence(origin: TimeOrigin) -> str:
    """One sentence: where τ counts from, and how the other contact instant relates."""
    if origin.t0 is None:
        return "No contact instant is known: the times cannot count from contact."
    measured = (
        f"{time_text(origin.measured)} ± {time_text(origin.measured_err, 2)}"
        if origin.measured_err is not None
        else time_text(origin.measured)
    )
    if origin.kind == "measured":
        return (
            f"Times τ = t − t_c count from the measured contact instant t_c = {measured} "
            "after the first frame (the fit gave no contact instant of its own); "
            "radius.csv's since_contact_s counts from it too."
        )
    how = "fitted with the laws" if origin.kind == "fitted" else "fixed with --t0"
    text = (
        f"Times τ = t − t₀ in the plots, the report and fit.json count from "
        f"t₀ = {time_text(origin.t0)} after the first frame, the contact instant {how}"
    )
    shift = origin.shift
    if shift is None:
        return text + "; no contact instant was measured."
    sign = "−" if shift >= 0 else "+"
    return (
        f"{text}; the measured contact instant is {measured}, and radius.csv's "
        f"since_contact_s counts from it: since_contact_s = τ {sign} {time_text(abs(shift))}."
    )


def origin_dict(origin: TimeOrigin) -> dict:
    """The ``time_origin`` entry of ``fit.json`` (SI, s from the first frame)."""
    return {
        "origin": {"fitted": "t0", "fixed": "t0", "measured": "measured contact"}.get(
            origin.kind, None
        ),
        "kind": origin.kind,
        "t0_s": origin.t0,
        "measured_contact_s": origin.measured,
        "measured_contact_err_s": origin.measured_err,
        "since_contact_minus_tau_s": origin.shift,
    }


def series_arrays(series, verdict):
    """τ on the figures' axis (from :func:`time_origin`), r, σ_r and the statuses of
    every frame, as arrays (floats; the statuses as objects)."""
    tau = time_origin(series, verdict).tau(series.time)
    r = np.asarray(series.radius, dtype=float)
    err = np.asarray(series.radius_err, dtype=float)
    return tau, r, err, np.asarray(series.status, dtype=object)
