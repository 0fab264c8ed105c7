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

__all__ = ["ContactEstimate", "estimate_contact"]

_IN_CONTACT = ("ok", "unresolved", "at-edge")


@dataclass(frozen=True)
class ContactEstimate:
    """The contact instant and how it was found.

    Attributes
    ----------
    time : float or None
        Contact instant (s, the series' own time origin); None if the series
        never shows a contact, or starts in contact.
    err : float or None
        Standard uncertainty (s).
    bracket : tuple of float or None
        (time of the last frame showing a gap, time of the first frame
        showing a resolved neck).
    first_index : int or None
        Index of the first frame in contact (gap closed).
    method : str
        How `time` was obtained, in a sentence.
    """

    time: float | None
    err: float | None
    bracket: tuple[float, float] | None
    first_index: int | None
    method: str

    def __bool__(self) -> bool:
        return self.time is not None


def _from_radius(t, r, err, lo, hi):
    """t0 and its error from a power law with free exponent, or (None, None).

    ``ln r = ln A + n ln(t - t0)`` is linear in (ln A, n) for a given t0, so
    the weighted least squares (weights r / err: relative errors) is solved
    in closed form for each t0 and the sum of squares minimised over t0
    alone (a profile). The error of t0 comes from the profile's curvature,
    scaled by the reduced chi-square when it exceeds one.
    """
    from scipy.optimize import minimize_scalar  # here: keeps the command line quick

    if np.any(r <= 0):
        return None, None
    ln_r = np.log(r)
    w2 = (r / err) ** 2
    top = min(hi, float(t[0])) - 1e-9 * max(float(t[-1] - lo), 1e-300)
    if not top > lo:
        return None, None

    def chi2(t0):
        x = np.log(t - t0)
        sw, sx, sy = w2.sum(), (w2 * x).sum(), (w2 * ln_r).sum()
        sxx, sxy = (w2 * x * x).sum(), (w2 * x * ln_r).sum()
        denom = sw * sxx - sx * sx
        n = (sw * sxy - sx * sy) / denom if denom > 0 else 0.5
        n = min(max(n, 0.1), 1.5)
        a = (sy - n * sx) / sw
        return float((w2 * (ln_r - a - n * x) ** 2).sum())

    span = top - lo
    best = minimize_scalar(
        chi2, bounds=(lo, top), method="bounded", options={"xatol": 1e-6 * span}
    )
    t0 = float(best.x)
    h = 1e-3 * span
    a, b = max(t0 - h, lo), min(t0 + h, top)
    mid = 0.5 * (a + b)
    curv = (chi2(b) - 2.0 * chi2(mid) + chi2(a)) / (0.5 * (b - a)) ** 2
    dof = len(t) - 3
    if dof <= 0 or not curv > 0:
        return t0, None
    scale = max(chi2(t0) / dof, 1.0)
    return t0, math.sqrt(2.0 / curv * scale)


def _from_gap(t, gap):
    """t0 where a straight line through the gaps reaches zero, or (None, None)."""
    if len(t) < 3:
        return None, None
    (slope, intercept), cov = np.polyfit(t, gap, 1, cov="unscaled")
    if not slope < 0:
        return None, None
    resid = gap - (slope * t + intercept)
    scale = max(float(resid @ resid) / max(len(t) - 2, 1), 1e-30)
    cov = cov * scale
    t0 = -intercept / slope
    # Propagate the line's covariance to its root.
    grad = np.array([intercept / slope**2, -1.0 / slope])
    var = float(grad @ cov @ grad)
    return float(t0), math.sqrt(var) if var >= 0 else None


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
    n = len(status)
    touching = np.array([s in _IN_CONTACT for s in status], dtype=bool)
    before = np.array([s == "before-contact" for s in status], dtype=bool)
    first = next((int(i) for i in np.nonzero(touching)[0] if touching[i : i + 3].all()), None)
    if first is None:
        return ContactEstimate(None, None, None, None, "no frame shows the drops in contact")
    if not before[:first].any():
        return ContactEstimate(
            None, None, None, first, "the recording starts with the drops already in contact"
        )
    ok = np.array([s == "ok" for s in status], dtype=bool) & np.isfinite(radius)
    ok &= np.arange(n) >= first
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
    # Gap closure. The gaps of the frames in contact give the noise floor.
    if gap is not None:
        gap = np.asarray(gap, dtype=np.float64)
        floor_values = gap[ok & np.isfinite(gap)]
        noise = 1.4826 * float(np.median(np.abs(floor_values))) if floor_values.size else 0.0
        # A gap counts as open above three noise levels and above `gap_floor`
        # (blur lets a barely formed neck add a little light on the axis).
        floor = max(3.0 * noise, gap_floor)
        open_ = np.isfinite(gap) & (gap > floor) & (np.arange(n) < first_ok)
        open_idx = np.nonzero(open_)[0]
        if open_idx.size:
            lo = max(lo, float(time[open_idx[-1]]))
            idx = open_idx[-gap_frames:]
            t0, err = _from_gap(time[idx], gap[idx])
            if t0 is not None and err is not None:
                # Allow for a bias of the measured gap of `gap_floor / 2` (on
                # synthetic frames the smallest gaps read a few hundredths of
                # a pixel wide), converted to time by the closing speed.
                speed = abs(np.polyfit(time[idx], gap[idx], 1)[0])
                err = math.hypot(err, 0.5 * gap_floor / speed) if speed > 0 else err
            if t0 is not None and err is not None and err > 0:
                estimates.append((t0, err))
                methods.append(f"gap closure over {len(idx)} frames")
    # Radius extrapolation.
    idx = np.nonzero(ok)[0]
    if early_radius is not None:
        idx = idx[radius[idx] <= early_radius]
    idx = idx[:fit_frames]
    if len(idx) >= 5:
        err = np.where(np.isfinite(radius_err[idx]) & (radius_err[idx] > 0), radius_err[idx], 1.0)
        t0, t0_err = _from_radius(time[idx], radius[idx], err, lo, hi)
        if t0 is not None and t0_err is not None:
            # Model error: a power law is only an approximation (the viscous
            # law has a logarithm), so the fit over the first half of the
            # frames is compared with the fit over all of them.
            half = max(len(idx) // 2, 5)
            if half < len(idx):
                t0_half, _ = _from_radius(time[idx[:half]], radius[idx[:half]], err[:half], lo, hi)
                if t0_half is not None:
                    t0_err = math.hypot(t0_err, t0 - t0_half)
        if t0 is not None and t0_err is not None and t0_err > 0:
            estimates.append((t0, t0_err))
            methods.append(f"radius extrapolation over {len(idx)} frames")
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
