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
from dataclasses import dataclass

import numpy as np

from ..status import IN_CONTACT
from ._extrapolate import from_gap, from_radius

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
    """

    time: float | None
    err: float | None
    bracket: tuple[float, float] | None
    first_index: int | None
    method: str

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
        }

    @classmethod
    def from_dict(cls, fields) -> ContactEstimate:
        """The record from the contact fields of ``measure.json`` (missing ones: None, ``""``).

        Examples
        --------
        >>> ContactEstimate.from_dict({"contact_time_s": 2e-5, "contact_bracket_s": [1e-5, 3e-5]})
        ContactEstimate(time=2e-05, err=None, bracket=(1e-05, 3e-05), first_index=None, method='')
        """
        bracket = fields.get("contact_bracket_s")
        return cls(
            time=fields.get("contact_time_s"),
            err=fields.get("contact_time_err_s"),
            bracket=None if bracket is None else (bracket[0], bracket[1]),
            first_index=None,
            method=fields.get("contact_method") or "",
        )


def _gap_estimate(time, gap, ok, first_ok, lo, gap_frames, gap_floor):
    """The gap closure: (lo narrowed to the last open gap, (t0, err) or None, method)."""
    gap = np.asarray(gap, dtype=np.float64)
    # The gaps of the frames in contact give the noise floor.
    floor_values = gap[ok & np.isfinite(gap)]
    noise = 1.4826 * float(np.median(np.abs(floor_values))) if floor_values.size else 0.0
    # A gap counts as open above three noise levels and above `gap_floor`
    # (blur lets a barely formed neck add a little light on the axis).
    floor = max(3.0 * noise, gap_floor)
    open_ = np.isfinite(gap) & (gap > floor) & (np.arange(len(ok)) < first_ok)
    open_idx = np.nonzero(open_)[0]
    if not open_idx.size:
        return lo, None, ""
    lo = max(lo, float(time[open_idx[-1]]))
    idx = open_idx[-gap_frames:]
    t0, err = from_gap(time[idx], gap[idx])
    if t0 is not None and err is not None:
        # Allow for a bias of the measured gap of `gap_floor / 2` (on
        # synthetic frames the smallest gaps read a few hundredths of
        # a pixel wide), converted to time by the closing speed.
        speed = abs(np.polyfit(time[idx], gap[idx], 1)[0])
        err = math.hypot(err, 0.5 * gap_floor / speed) if speed > 0 else err
    if t0 is not None and err is not None and err > 0:
        return lo, (t0, err), f"gap closure over {len(idx)} frames"
    return lo, None, ""


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


def _combine(estimates, methods, lo, hi, first) -> ContactEstimate:
    """The estimates weighted by their uncertainties, inside the bracket (lo, hi)."""
    uniform = (hi - lo) / math.sqrt(12.0)
    if not estimates:
        return ContactEstimate(
            0.5 * (lo + hi),
            uniform,
            (lo, hi),
            first,
            "midpoint of the bracket (too few frames to extrapolate)",
        )
    note = ""
    if len(estimates) == 2:
        (tg, eg), (tr, er) = estimates
        if abs(tg - tr) > 3.0 * math.hypot(eg, er):
            # They disagree: the gap closure observes the contact directly,
            # the extrapolation rests on the shape of a power law.
            estimates = estimates[:1]
            note = f"; the radius extrapolation ({tr:.6g} s) disagreed and was set aside"
            methods = methods[:1]
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
    return ContactEstimate(
        t0,
        err,
        (lo, hi),
        first,
        (
            " and ".join(methods) + ", weighted by their uncertainties"
            if len(methods) > 1
            else methods[0]
        )
        + ", inside the bracket"
        + note,
    )


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
        Gaps below this count as closed (in the unit of `gap`), whatever the
        noise.

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
    last_gap = int(np.nonzero(before[:first])[0][-1])
    lo = float(time[last_gap])
    if not ok.any():
        hi = float(time[first])
        return ContactEstimate(
            0.5 * (lo + hi),
            (hi - lo) / math.sqrt(12.0),
            (lo, hi),
            first,
            "midpoint of the bracket (no frame after contact could be measured)",
        )
    first_ok = int(np.nonzero(ok)[0][0])
    hi = float(time[first_ok])
    estimates, methods = [], []
    if gap is not None:
        lo, found, method = _gap_estimate(time, gap, ok, first_ok, lo, gap_frames, gap_floor)
        if found is not None:
            estimates.append(found)
            methods.append(method)
    found, method = _radius_estimate(
        time, radius, radius_err, ok, lo, hi, early_radius, fit_frames
    )
    if found is not None:
        estimates.append(found)
        methods.append(method)
    return _combine(estimates, methods, lo, hi, first)
