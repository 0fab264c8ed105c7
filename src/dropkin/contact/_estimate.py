"""The instant of first contact, from the per-frame statuses, radii and gaps.

The contact lies between the last frame that still shows a gap between the
drops and the first frame that shows a resolved neck (the *bracket*; frames in
between show neither: a gap or a neck below what the optics resolve). Inside
the bracket two estimates are combined:

- **radius extrapolation**: a power law ``r = A (t - t0)**n`` is fitted by
  weighted least squares to the first measured radii (up to 30 ``ok``
  frames, and only while ``r`` is below a third of the drop radius, where one
  regime holds), with ``t0`` bounded to the bracket and ``n`` free between 0.1
  and 1.5 (every regime of the catalogue lies inside); ``t0`` is where the
  fitted law reaches zero.
- **gap closure**: the gap on the line of centres, measured in the last
  frames before contact, is extrapolated linearly to zero (the drops approach
  at a steady speed over the last few frames).

Each comes with its standard error (from the fit's covariance, scaled by the
residuals; for the radius extrapolation also the change of ``t0`` when only
the first half of its frames is used, a measure of model error); the two are
combined by inverse-variance weighting, and the error widened by the Birge
ratio when they differ. When they disagree by more than three combined
standard errors, the gap closure, which observes the contact directly, is
kept and the extrapolation set aside (the method says so). The result
is kept inside the bracket, and its uncertainty never exceeds that of knowing
only the bracket (width over sqrt(12), a uniform distribution).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..status import IN_CONTACT
from ._extrapolate import from_radius
from ._gap import gap_estimate

__all__ = ["ContactEstimate", "estimate_contact"]


@dataclass(frozen=True)
class ContactEstimate:
    """The contact instant and how it was found.

    The record is falsy when no contact instant was found (`time` is None).
    Its file form (:meth:`to_dict`, :meth:`from_dict`) is the four contact
    fields of ``measure.json``.

    Attributes
    ----------
    time : float or None
        Contact instant (s, the series' own time origin); None if the series
        never shows a contact, or starts in contact. ``contact_time_s`` in
        ``measure.json``.
    err : float or None
        Its standard uncertainty (s); None with `time`. ``contact_time_err_s``.
    bracket : tuple of float or None
        (time of the last frame showing a gap, time of the first frame
        showing a resolved neck) (s), narrowed by the gap closure to the last
        frame whose gap is clearly open; None when no contact is seen.
        ``contact_bracket_s``.
    first_index : int or None
        Index of the first frame in contact (gap closed). Not part of the
        file form: :meth:`from_dict` gives None.
    method : str
        How `time` was obtained, in a sentence. ``contact_method``.
    signals : dict
        What each signal of the frames says on its own (s): ``gap_closure``
        and ``radius_extrapolation`` (``{"time_s", "err_s"}``),
        ``light_on_axis`` (``{"last_open_s", "first_closed_s"}``: the last
        frame whose gap is open, the first at the level of contact) and
        ``first_radius_s`` (the first measured radius); those that could not
        be read are left out. ``contact_signals``.
    disagreement : str
        Empty when the signals agree; else what disagrees, and which was kept,
        in a sentence. ``contact_disagreement`` (None when empty).
    """

    time: float | None
    err: float | None
    bracket: tuple[float, float] | None
    first_index: int | None
    method: str
    signals: dict = field(default_factory=dict, compare=False)
    disagreement: str = ""

    def __bool__(self) -> bool:
        return self.time is not None

    def to_dict(self) -> dict:
        """The contact fields of ``measure.json``: time, error, bracket (a list) and method.

        Examples
        --------
        >>> contact = ContactEstimate(2e-5, 1e-6, (1e-5, 3e-5), 4, "gap closure")
        >>> contact.to_dict()["contact_bracket_s"]
        [1e-05, 3e-05]
        """
        return {
            "contact_time_s": self.time,
            "contact_time_err_s": self.err,
            "contact_bracket_s": None if self.bracket is None else list(self.bracket),
            "contact_method": self.method,
            "contact_signals": dict(self.signals),
            "contact_disagreement": self.disagreement or None,
        }

    @classmethod
    def from_dict(cls, fields) -> ContactEstimate:
        """The record from the contact fields of ``measure.json`` (missing ones: None, ``""``).

        Examples
        --------
        >>> fields = {"contact_time_s": 2e-5, "contact_bracket_s": [1e-5, 3e-5]}
        >>> ContactEstimate.from_dict(fields).bracket
        (1e-05, 3e-05)
        """
        bracket = fields.get("contact_bracket_s")
        return cls(
            time=fields.get("contact_time_s"),
            err=fields.get("contact_time_err_s"),
            bracket=None if bracket is None else (bracket[0], bracket[1]),
            first_index=None,
            method=fields.get("contact_method") or "",
            signals=dict(fields.get("contact_signals") or {}),
            disagreement=fields.get("contact_disagreement") or "",
        )


def _radius_estimate(time, radius, radius_err, ok, lo, hi, early_radius, fit_frames):
    """The radius extrapolation: ((t0, err), method), or (None, "")."""
    idx = np.nonzero(ok)[0]
    if early_radius is not None:
        idx = idx[radius[idx] <= early_radius]
    idx = idx[:fit_frames]
    if len(idx) < 5:
        return None, ""
    err = np.where(np.isfinite(radius_err[idx]) & (radius_err[idx] > 0), radius_err[idx], 1.0)
    t0, t0_err = from_radius(time[idx], radius[idx], err, lo, hi)
    if t0 is not None and t0_err is not None:
        # Model error: a power law is only an approximation (the viscous
        # law has a logarithm), so the fit over the first half of the
        # frames is compared with the fit over all of them.
        half = max(len(idx) // 2, 5)
        if half < len(idx):
            t0_half, _ = from_radius(time[idx[:half]], radius[idx[:half]], err[:half], lo, hi)
            if t0_half is not None:
                t0_err = math.hypot(t0_err, t0 - t0_half)
    if t0 is not None and t0_err is not None and t0_err > 0:
        return (t0, t0_err), f"radius extrapolation over {len(idx)} frames"
    return None, ""


def _disagree(estimates, methods, mirror):
    """Two estimates that disagree: (the ones kept, their methods, what was said)."""
    (tg, eg), (tr, er) = estimates
    if abs(tg - tr) <= 3.0 * math.hypot(eg, er):
        return estimates, methods, ""
    said = (
        f"the gap closure ({tg:.6g} s) and the radius extrapolation ({tr:.6g} s) differ by"
        f" {abs(tg - tr) / math.hypot(eg, er):.1f} combined standard errors"
    )
    if mirror and tg < tr:
        # The drop meets its mirror image when the gap to the plate is below
        # the blur, before it touches: the radius, which only contact makes
        # grow, is kept.
        return (
            estimates[1:],
            methods[1:],
            said + "; the drop may have met its mirror image first: the radius extrapolation"
            " was kept",
        )
    # The gap closure observes the contact directly; the extrapolation rests
    # on the shape of a power law.
    return estimates[:1], methods[:1], said + "; the gap closure was kept"


def _combine(estimates, methods, lo, hi, first, *, mirror=False, signals=None):
    """The estimates weighted by their uncertainties, inside the bracket (lo, hi)."""
    uniform = (hi - lo) / math.sqrt(12.0)
    signals = signals or {}
    if not estimates:
        return ContactEstimate(
            0.5 * (lo + hi),
            uniform,
            (lo, hi),
            first,
            "midpoint of the bracket (too few frames to extrapolate)",
            signals,
        )
    said = ""
    if len(estimates) == 2:
        estimates, methods, said = _disagree(estimates, methods, mirror)
    weights = np.array([1.0 / e**2 for _, e in estimates])
    values = np.array([v for v, _ in estimates])
    mean = float(np.sum(weights * values) / weights.sum())
    err = math.sqrt(1.0 / weights.sum())
    if len(values) > 1:
        # Two estimates that disagree beyond their errors widen the result
        # (Birge ratio: the square root of the reduced chi-square).
        chi2 = float(np.sum(weights * (values - mean) ** 2)) / (len(values) - 1)
        err *= math.sqrt(max(chi2, 1.0))
    t0 = float(np.clip(mean, lo, hi))
    err = min(err, uniform)
    joined = " and ".join(methods) + (
        ", weighted by their uncertainties" if len(methods) > 1 else ""
    )
    method = joined + ", inside the bracket" + (f"; {said}" if said else "")
    return ContactEstimate(t0, err, (lo, hi), first, method, signals, said)


def estimate_contact(
    time,
    radius,
    radius_err,
    status,
    *,
    gap=None,
    early_radius: float | None = None,
    fit_frames: int = 30,
    gap_frames: int = 6,
    gap_floor: float = 0.0,
    mirror: bool = False,
) -> ContactEstimate:
    """Estimate the contact instant of a radius series.

    Parameters
    ----------
    time : (F,) ndarray
        Frame times (s).
    radius, radius_err : (F,) ndarray
        Radii and their uncertainties (any one length unit); NaN where none.
    status : sequence of str
        Per-frame status.
    gap : (F,) ndarray, optional
        Gap between the drops on the line of centres, in the unit of
        `radius` (about zero once in contact).
    early_radius : float, optional
        Only radii below this enter the extrapolation (a third of the drop
        radius is a good choice).
    fit_frames, gap_frames : int, optional
        At most this many frames enter each estimate.
    gap_floor : float, optional
        Gaps below this above the level of contact count as closed (in the
        unit of `gap`), whatever the noise.
    mirror : bool, optional
        The drop faces its mirror image (a reflective plate): when the gap
        closure comes before the radius extrapolation beyond their errors,
        the gap may have closed onto the mirror image, and the radius is kept.

    Returns
    -------
    ContactEstimate
        Falsy (``time`` None) when no contact is seen.
    """
    time = np.asarray(time, dtype=np.float64)
    radius = np.asarray(radius, dtype=np.float64)
    radius_err = np.asarray(radius_err, dtype=np.float64)
    touching = np.array([s in IN_CONTACT for s in status], dtype=bool)
    before = np.array([s == "before-contact" for s in status], dtype=bool)
    first = next((int(i) for i in np.nonzero(touching)[0] if touching[i : i + 3].all()), None)
    if first is None:
        return ContactEstimate(None, None, None, None, "no frame shows the drops in contact")
    if not before[:first].any():
        return ContactEstimate(
            None, None, None, first, "the recording starts with the drops already in contact"
        )
    ok = np.array([s == "ok" for s in status], dtype=bool) & np.isfinite(radius)
    ok &= np.arange(len(status)) >= first
    lo = float(time[int(np.nonzero(before[:first])[0][-1])])
    first_ok = int(np.nonzero(ok)[0][0]) if ok.any() else len(status)
    signals, estimates, methods = {}, [], []
    light = None
    if gap is not None:
        lo, found, method, light = gap_estimate(time, gap, ok, first_ok, lo, gap_frames, gap_floor)
        if light is not None:
            signals["light_on_axis"] = {"last_open_s": light[0], "first_closed_s": light[1]}
        if found is not None:
            estimates.append(found)
            methods.append(method)
            signals["gap_closure"] = {"time_s": found[0], "err_s": found[1]}
    if not ok.any():
        hi = float(time[first]) if light is None else max(light[1], float(time[first]))
        if not estimates:
            return ContactEstimate(
                0.5 * (lo + hi),
                (hi - lo) / math.sqrt(12.0),
                (lo, hi),
                first,
                "midpoint of the bracket (no frame after contact could be measured)",
                signals,
            )
        return _combine(estimates, methods, lo, hi, first, signals=signals)
    hi = float(time[first_ok])
    signals["first_radius_s"] = hi
    found, method = _radius_estimate(
        time, radius, radius_err, ok, lo, hi, early_radius, fit_frames
    )
    if found is not None:
        estimates.append(found)
        methods.append(method)
        signals["radius_extrapolation"] = {"time_s": found[0], "err_s": found[1]}
    return _combine(estimates, methods, lo, hi, first, mirror=mirror, signals=signals)
