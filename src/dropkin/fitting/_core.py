"""Shared machinery of the fits: prepared points, law shapes, the robust linear solver.

Private to :mod:`dropkin.fitting`. Points are fitted on ``ln r`` with the
uncertainty ``σ_r / r``; the robust loss is scipy's ``soft_l1``
(``ρ(z) = 2 f²(√(1 + (z/f)²) - 1)``) with ``f = 3`` noise units, solved by
iteratively reweighted least squares; the noise unit is estimated without a
model, from successive differences (1.4826 × MAD), floored at
:data:`NOISE_FLOOR`.

Examples
--------
>>> import numpy as np
>>> shape = LawShape(1.0, True, capillary_speed=0.045, drop_radius=1e-3)
>>> [round(float(v), 3) for v in shape.slope(np.array([1e-4, 1e-3]))]   # 1 + 1/ln(uτ/R)
[0.815, 0.678]
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import FitError
from ._robust import rho, solve_linear  # noqa: F401  (the fits import them from here)
from ._weights import point_scales, rows_loss, running_median  # noqa: F401  (likewise)

__all__ = ["MIN_POINTS", "MIN_DECADES", "ROBUST_SCALE", "LawShape", "span_problem"]

#: Fewest points a fit accepts (three parameters with t0 free, five degrees of freedom left).
MIN_POINTS = 8
#: Shortest time span a fit accepts, in decades of time since contact.
MIN_DECADES = 1.0 / 3.0
#: The robust loss's scale, in noise units: residuals beyond about 3 σ weigh less.
ROBUST_SCALE = 3.0
#: Largest ``|ln x|`` of a prefactor or radius: exp(±700) ≈ 1e±304, beyond it is not a float.
LN_MAX = 700.0
#: Smallest noise unit (in units of the given σ, or of ln r without σ).
NOISE_FLOOR = 1e-3
_S_RANGE = (1e-12, 1e12)  # bounds of the relative uncertainty σ_r / r of one point
_Z95 = 1.959963984540054  # two-sided 95 % quantile of the normal distribution
_LOSSES = ("soft_l1", "linear")


@dataclass(frozen=True)
class LawShape:
    """The form of one law, ``r = A exp(f(τ))`` with τ the time since contact.

    Attributes
    ----------
    exponent : float
        n: ``f = n ln τ``; for the logarithmic law its leading power, 1.
    logarithmic : bool
        True for the ELS law ``r = -C u τ ln(uτ/R)``, ``f = ln(uτ) + ln(-ln(uτ/R))``.
        Beyond ``uτ/R = 1/e``, where that radius peaks, the law is held at its
        peak (it no longer describes a growing neck).
    capillary_speed : float or None
        u = γ/η (m/s), for the logarithmic law.
    drop_radius : float or None
        R (m), for the logarithmic law.
    """

    exponent: float
    logarithmic: bool = False
    capillary_speed: float | None = None
    drop_radius: float | None = None

    def __post_init__(self):
        if self.logarithmic:
            for name in ("capillary_speed", "drop_radius"):
                value = getattr(self, name)
                if value is None or not (math.isfinite(value) and value > 0):
                    raise FitError("the log law needs a positive value", key=name, value=value)

    @property
    def label(self) -> str:
        """Short text: ``t^0.5`` or ``ELS log law``."""
        return "ELS log law" if self.logarithmic else f"t^{self.exponent:.4g}"

    def log_shape(self, tau):
        """``f(τ)``, so that ``ln r = ln A + f``; ``A`` is C for the log law."""
        tau = np.asarray(tau, dtype=float)
        if not self.logarithmic:
            return self.exponent * np.log(tau)
        u, big_r = self.capillary_speed, self.drop_radius
        with np.errstate(over="ignore", under="ignore"):  # beyond the peak the law is held
            x = np.minimum(u * tau / big_r, math.exp(-1.0))
        # uτ/R below the smallest float (τ of a few subnormal seconds) gives NaN: a
        # point the law cannot describe, which the fits treat as non-finite.
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.log(x * big_r) + np.log(-np.log(x))

    def slope(self, tau):
        """Local exponent ``df/d ln τ``: n, or ``1 + 1/ln(uτ/R)`` (0 beyond the peak)."""
        tau = np.asarray(tau, dtype=float)
        if not self.logarithmic:
            return np.full(tau.shape, float(self.exponent))
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            x = self.capillary_speed * tau / self.drop_radius
            s = 1.0 + 1.0 / np.log(x)
        return np.where(x < math.exp(-1.0), s, 0.0)

    @property
    def domain_end(self) -> float:
        """Largest τ at which the law still describes growth (s): ``R/(e u)``, or inf."""
        if not self.logarithmic:
            return math.inf
        return self.drop_radius / (math.e * self.capillary_speed)

    def prefactor_unit_factor(self) -> float:
        """Factor from the fitted ``A`` to the reported prefactor (u for the log law, else 1)."""
        return self.capillary_speed if self.logarithmic else 1.0


# --------------------------------------------------------------------------- data


@dataclass(frozen=True)
class Series:
    """Points ready to fit (private to the fitting package).

    Attributes
    ----------
    time : (N,) ndarray
        Absolute times, increasing (s).
    y : (N,) ndarray
        ``ln r``.
    s : (N,) ndarray
        Uncertainty of ``ln r`` (``σ_r / r̃``, r̃ the median radius of the point and
        its neighbours, :func:`running_median`; 1 where none was given).
    weighted : bool
        Whether per-point uncertainties were given.
    rows : (N,) ndarray of int, optional
        How many measured rows each point averages (:mod:`._groups`); None
        when each point is one row.
    """

    time: np.ndarray
    y: np.ndarray
    s: np.ndarray
    weighted: bool
    rows: np.ndarray | None = None

    def __len__(self):
        return len(self.time)

    @property
    def counts(self) -> np.ndarray:
        """Rows each point averages (ones for a series of single rows)."""
        return np.ones(len(self.time), dtype=np.int64) if self.rows is None else self.rows

    @property
    def n_rows(self) -> int:
        """How many measured rows the points hold."""
        return len(self.time) if self.rows is None else int(self.rows.sum())

    def subset(self, mask) -> Series:
        rows = None if self.rows is None else self.rows[mask]
        return Series(self.time[mask], self.y[mask], self.s[mask], self.weighted, rows)


def as_array(name, value, n=None) -> np.ndarray:
    """A 1-D float array, or a FitError naming the argument."""
    try:
        a = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise FitError("must be an array of numbers", key=name) from None
    if a.ndim != 1:
        raise FitError(f"must be one-dimensional, got shape {a.shape}", key=name)
    if n is not None and len(a) != n:
        raise FitError(f"has {len(a)} values, time has {n}", key=name, expected=f"{n} values")
    return a


def make_series(time, radius, radius_err=None) -> Series:
    """Finite, positive points sorted by time; σ of ``ln r`` from ``radius_err`` over
    the neighbours' median radius (:func:`running_median`)."""
    t = as_array("time", time)
    r = as_array("radius", radius, len(t))
    e = (
        np.full(len(t), np.nan)
        if radius_err is None
        else as_array("radius_err", radius_err, len(t))
    )
    keep = np.isfinite(t) & np.isfinite(r) & (r > 0)
    t, r, e = t[keep], r[keep], e[keep]
    order = np.argsort(t, kind="stable")
    t, r, e = t[order], r[order], e[order]
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        s = e / running_median(r)
    good = np.isfinite(s) & (s > 0)
    weighted = bool(good.any())
    s = np.where(good, s, np.median(s[good]) if weighted else 1.0)
    # Below 1e-12 a relative uncertainty is finer than ln r's own rounding; the
    # bounds also keep the weights 1/s² finite and non-zero for any radius.
    s = np.clip(s, _S_RANGE[0], _S_RANGE[1])
    return Series(t, np.log(r), s, weighted)


def noise_scale(series: Series) -> float:
    """Model-free noise unit: 1.4826 × MAD of successive normalised differences."""
    if len(series) < 3:
        return 1.0
    d = np.diff(series.y) / np.hypot(series.s[1:], series.s[:-1])
    # 1.4826 as written, not scipy.stats.median_abs_deviation(scale="normal"),
    # whose 1/Φ⁻¹(3/4) = 1.482602… would change the fitted numbers' last digits.
    mad = 1.4826 * float(np.median(np.abs(d - np.median(d))))
    # Floored, so that noise-free data are fitted as plain least squares.
    return max(mad, NOISE_FLOOR) if math.isfinite(mad) else 1.0


def check_loss(loss):
    if loss not in _LOSSES:
        raise FitError(
            "is not a known loss", key="loss", value=loss, expected=" or ".join(_LOSSES)
        )


def check_bootstrap(bootstrap):
    if isinstance(bootstrap, bool) or not isinstance(bootstrap, int) or bootstrap < 0:
        raise FitError("must be a whole number ≥ 0", key="bootstrap", value=bootstrap)


def resolve_origin(t0, t0_bracket) -> tuple[float, float]:
    """The (lo, hi) interval of the origin; lo == hi when it is fixed."""
    if t0 is not None and t0_bracket is not None:
        raise FitError("give t0 (fixed origin) or t0_bracket (fitted origin), not both", key="t0")
    if t0_bracket is None:
        t0 = 0.0 if t0 is None else t0
        if not (isinstance(t0, int | float) and math.isfinite(t0)):
            raise FitError("must be a finite time in s", key="t0", value=t0)
        return float(t0), float(t0)
    return check_bracket(t0_bracket, key="t0_bracket")


def check_bracket(bracket, *, key) -> tuple[float, float]:
    """Two finite times (lo, hi) with lo ≤ hi, or a FitError naming `key`."""
    try:
        lo, hi = (float(v) for v in bracket)
    except (TypeError, ValueError):
        raise FitError("must be two times (lo, hi) in s", key=key, value=bracket) from None
    if not (math.isfinite(lo) and math.isfinite(hi) and lo <= hi):
        raise FitError("must be finite with lo <= hi", key=key, value=(lo, hi))
    return lo, hi


def data_problem(series: Series, lo: float, hi: float, *, reference=None) -> str:
    """Why the points cannot support a fit (``""`` when they can)."""
    n_all = len(series)
    after = series.time > hi
    n = int(after.sum())
    if n_all and n == 0:
        return f"all {n_all} usable points lie before contact (at or before t0 = {hi:.6g} s)"
    if n < MIN_POINTS:
        return f"too few points: {n} after contact, at least {MIN_POINTS} needed"
    ref = 0.5 * (lo + hi) if reference is None else reference
    return span_problem(series.time[after] - ref)


def span_problem(tau) -> str:
    """Why times since contact `tau` span too short a stretch to fit (``""`` when they
    do not): at least :data:`MIN_DECADES` between the first and the last.

    Examples
    --------
    >>> span_problem([1.0, 2.0, 3.0])
    ''
    >>> span_problem([1.0, 2.0])[:45]
    'too short: the points span 0.3010 decades of '
    """
    tau = np.asarray(tau, dtype=np.float64)
    tau = tau[tau > 0]
    decades = math.log10(tau.max()) - math.log10(tau.min()) if len(tau) >= 2 else 0.0
    if decades < MIN_DECADES:
        # Rounded down to 4 digits, so that a span just short of 1/3 never reads as
        # "0.33 ... 1/3": any span below 1/3 shows at most 0.3333 - 0.0001.
        shown = math.floor(decades * 1e4) / 1e4
        return (
            f"too short: the points span {shown:.4f} decades of time since contact, "
            f"at least 1/3 decade (0.3333) needed"
        )
    return ""


# ------------------------------------------------------------------ robust solver


def solve_log_radius(
    log_radius, data: Series, x0, bounds, *, loss, f_scale, max_nfev=None, gradient=None
):
    """scipy's least_squares on the normalised residuals of ``ln r``, for laws not
    linear at a given origin (the law with r0, blends).

    ``log_radius(theta, time)`` gives the model's ln r; non-finite residuals
    count as 1e6. Times over hundreds of decades can overflow the Jacobian's
    scale, or put a trial origin on a point (log 0); the result is then not
    finite, and the callers return a falsy record.

    ``gradient(theta, time)``, when given, returns ln r and its derivative
    (N, k) with respect to the parameters: the solver's Jacobian is then
    exact and costs one evaluation of the model (finite differences, without
    it, cost k + 1); its rows at non-finite residuals are 0.
    """
    from scipy.optimize import least_squares  # here: keeps the command line quick

    def residuals(theta):
        z = (data.y - log_radius(theta, data.time)) / data.s
        return np.where(np.isfinite(z), z, 1e6)

    minus_inverse = (-1.0 / data.s)[:, None]

    def jacobian(theta):
        lr, grad = gradient(theta, data.time)
        jac = grad * minus_inverse
        jac[~np.isfinite(lr)] = 0.0  # where the residual counts as 1e6
        return jac if np.isfinite(jac).all() else np.where(np.isfinite(jac), jac, 0.0)

    if loss == "soft_l1" and data.rows is not None:
        loss = rows_loss(data.rows.astype(float))
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        return least_squares(
            residuals,
            x0,
            jac="2-point" if gradient is None else jacobian,
            bounds=bounds,
            loss=loss,
            f_scale=f_scale,
            x_scale="jac",
            max_nfev=max_nfev,
        )


def apparent_exponent(shape: LawShape, tau, w=None) -> float:
    """Slope of a weighted least-squares line through ``(ln τ, f(τ))``: the law's exponent."""
    if not shape.logarithmic:
        return float(shape.exponent)
    x = np.log(tau)
    w = np.ones_like(x) if w is None else w
    xm = np.sum(w * x) / np.sum(w)
    f = shape.log_shape(tau)
    return float(np.sum(w * (x - xm) * f) / np.sum(w * (x - xm) ** 2))


def jacobian_covariance(jac, scale: float):
    """``scale × (JᵀJ)⁻¹`` of a least-squares Jacobian, its columns brought to unit
    length first.

    A pseudo-inverse drops the directions whose singular values fall below a
    fraction of the largest. The columns of one fit differ by orders of
    magnitude (t0 in seconds against an exponent): unscaled, a parameter
    the data determine poorly is dropped with the small numbers and given a
    variance of zero, the narrowest interval for the least known value. With
    unit columns only a true degeneracy is dropped (Björck, *Numerical
    Methods for Least Squares Problems*, SIAM 1996, §2.2, column scaling,
    from memory). A column that is zero (a parameter the points do not
    touch) keeps variance 0 as before.
    """
    jac = np.asarray(jac, dtype=float)
    with np.errstate(over="ignore", invalid="ignore"):
        d = np.sqrt(np.sum(jac * jac, axis=0))
        d = np.where(np.isfinite(d) & (d > 0), d, 1.0)
        unit = jac / d
        return np.linalg.pinv(unit.T @ unit) / np.outer(d, d) * scale


def information(chi2: float, n: int, k: int) -> tuple[float, float]:
    """(AIC, BIC) of a least-squares fit with the noise scale estimated.

    The mean squared residual is floored at ``1e-12`` (an rms of 1e-6 in the
    units of σ): below that, differences between fits are rounding and
    convergence tolerance, not evidence, and the simpler model wins.
    """
    per = max(chi2 / n, 1e-12)
    return n * math.log(per) + 2 * k, n * math.log(per) + k * math.log(n)


def normal_ci(value, err):
    """``value ± 1.96 err``; NaNs when the error is unknown."""
    if not (math.isfinite(value) and math.isfinite(err)):
        return (math.nan, math.nan)
    return (value - _Z95 * err, value + _Z95 * err)


def bracket_ci(t0, err, lo, hi) -> tuple[float, float]:
    """95 % interval of an origin: ``t0 ± 1.96 err`` cut to its bracket; (t0, t0) if fixed."""
    if not hi > lo:
        return (float(t0), float(t0))
    a, b = normal_ci(t0, err)
    if not (math.isfinite(a) and math.isfinite(b)):
        return (math.nan, math.nan)
    return (max(lo, a), min(hi, b))


def safe_exp(x: float) -> float:
    """``exp`` that saturates instead of overflowing (for wide intervals)."""
    return math.exp(min(x, 700.0)) if math.isfinite(x) else math.nan
