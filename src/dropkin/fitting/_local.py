"""The local exponent ``n_loc = d ln r / d ln τ`` along a series; a regime is a plateau of it.

Method (docs/physics.md §4.8): the points are averaged (weighted by ``(r/σ_r)²``)
in bins of ``1/points_per_decade`` decade of τ = t - t0, the bin means are
interpolated linearly onto a uniform grid of ``ln τ``, and the derivative is
taken with a Savitzky–Golay filter (quadratic, a window of `window_decades`,
first derivative; the edges from the polynomial fitted to the first and last
windows, as ``scipy.signal.savgol_filter(..., mode="interp")`` does, which the
tests compare it with). Its standard error
follows exactly from the linear maps (interpolation, then filter) applied to
the bin variances. The band spans the exponent computed with t0 at the ends
of its bracket and at its best value (compared at the same frame times),
widened by two standard errors.

Examples
--------
>>> import numpy as np
>>> t = np.linspace(1e-5, 1e-2, 2000)
>>> loc = local_exponent(t, 0.0197 * t**0.5)
>>> bool(np.allclose(loc.exponent, 0.5, atol=1e-6))
True
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ._core import Series, make_series, resolve_origin

__all__ = ["LocalExponent", "local_exponent", "exponent_plateaus"]

_METHOD = (
    "Savitzky–Golay derivative (as scipy.signal.savgol_filter, mode interp, order {order}, "
    "window {window:.3g} decade) of ln r on a grid of ln τ with {ppd} points per decade "
    "(weighted bin means, linear interpolation); band: t0 at its bracket ends ± 2 s.e."
)


@dataclass(frozen=True)
class LocalExponent:
    """The local exponent of a series and its band.

    Attributes
    ----------
    success : bool
        False (and the record falsy) when the series is too short for the filter.
    message : str
        Why it failed, or ``""``.
    time : (M,) ndarray
        Grid of time since t0 (s), uniform in ``ln τ``.
    exponent : (M,) ndarray
        ``d ln r / d ln τ`` with the best t0.
    stat_err : (M,) ndarray
        Its standard error from the points' uncertainties.
    lower, upper : (M,) ndarray
        The band: t0 anywhere in its bracket, ± 2 standard errors.
    t0 : float
        The origin used (s, same clock as the input).
    t0_bracket : tuple of float
        The bracket whose ends make the band.
    points_per_decade : int
        Grid density.
    window_decades : float
        Width of the Savitzky–Golay window actually used (decades).
    method : str
        The method, in one sentence.
    """

    success: bool
    message: str
    time: np.ndarray
    exponent: np.ndarray
    stat_err: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    t0: float
    t0_bracket: tuple[float, float]
    points_per_decade: int
    window_decades: float
    method: str

    def __bool__(self) -> bool:
        return self.success


#: Most grid points of a local exponent (the Savitzky-Golay matrix is grid x grid).
_MAX_GRID = 2000


def _span_decades(series: Series, t0) -> float:
    """Decades of time since `t0` that the points after it span."""
    tau = series.time - t0
    tau = tau[tau > 0]
    return math.log10(tau.max()) - math.log10(tau.min()) if len(tau) > 1 else 0.0


def savgol_derivative_matrix(m: int, window: int, order: int, delta: float) -> np.ndarray:
    """The (m, m) matrix of a Savitzky–Golay first derivative on a uniform grid.

    Row i holds the weights of the points in the derivative at point i: the
    slope at the centre of the polynomial of degree `order` fitted by least
    squares to the `window` (odd) points around i; within half a window of
    either end, the slope at i of the polynomial fitted to the first (last)
    `window` points. `delta` is the grid step.
    """
    half = window // 2
    powers = np.arange(order + 1)
    # least-squares coefficients of the polynomial in z (points from the window's start)
    z = np.arange(window, dtype=float)
    coeffs = np.linalg.pinv(z[:, None] ** powers)  # (order + 1, window)

    def slope_rows(at):  # d/dz of the fitted polynomial at positions `at` of the window
        at = np.asarray(at, float)[:, None]
        d = powers[1:] * at ** (powers[1:] - 1)  # (len(at), order)
        return d @ coeffs[1:] / delta

    out = np.zeros((m, m))
    centre = slope_rows([half])[0]
    rows = np.arange(half, m - half)
    cols = rows[:, None] + np.arange(-half, half + 1)
    out[rows[:, None], cols] = centre
    out[:half, :window] = slope_rows(np.arange(half))
    out[m - half :, m - window :] = slope_rows(np.arange(window - half, window))
    return out


def _grid_exponent(series: Series, t0, ppd, window_points, order):
    """(grid ln τ, n_loc, s.e.) for one origin; None when too short."""
    tau = series.time - t0
    keep = tau > 0
    x = np.log(tau[keep])
    y = series.y[keep]
    w = 1.0 / series.s[keep] ** 2
    if len(x) < 2:
        return None
    h = math.log(10.0) / ppd
    k = np.floor((x - x[0]) / h).astype(int)
    sw = np.bincount(k, w)
    nonempty = sw > 0
    xb = (np.bincount(k, w * x)[nonempty]) / sw[nonempty]
    yb = (np.bincount(k, w * y)[nonempty]) / sw[nonempty]
    vb = 1.0 / sw[nonempty]
    grid = np.arange(xb[0], xb[-1] + 0.5 * h, h)
    m = len(grid)
    if m < 5:
        return None
    # Linear interpolation as a matrix (grid × bins), so the errors propagate exactly.
    j = np.clip(np.searchsorted(xb, grid, side="right") - 1, 0, len(xb) - 2)
    frac = np.clip((grid - xb[j]) / (xb[j + 1] - xb[j]), 0.0, 1.0)
    interp = np.zeros((m, len(xb)))
    interp[np.arange(m), j] = 1.0 - frac
    interp[np.arange(m), j + 1] += frac
    window = min(window_points, m if m % 2 else m - 1)
    filt = savgol_derivative_matrix(m, window, order, h)
    lin = filt @ interp
    n_loc = lin @ yb
    err = np.sqrt((lin**2) @ vb)
    return grid, n_loc, err, window * h / math.log(10.0)


def local_from_series(
    series: Series, t0, bracket, *, points_per_decade=20, window_decades=0.5, order=2
):
    """The local exponent of prepared points (after contact) for origin t0."""
    window_points = 2 * int(round(window_decades * points_per_decade / 2.0)) + 1
    window_points = max(window_points, order + 3 - (order % 2))
    span = _span_decades(series, t0)
    too_long = span * points_per_decade > _MAX_GRID  # the filter's matrix is grid²
    best = (
        None if too_long else _grid_exponent(series, t0, points_per_decade, window_points, order)
    )
    empty = np.array([])
    if best is None:
        return LocalExponent(
            False,
            f"the points span {span:.0f} decades of time since contact; a local exponent "
            f"is computed over at most {_MAX_GRID // points_per_decade} decades"
            if too_long
            else "too short for a local exponent: fewer than 5 grid points of "
            f"1/{points_per_decade} decade",
            empty,
            empty,
            empty,
            empty,
            empty,
            t0,
            bracket,
            points_per_decade,
            math.nan,
            "",
        )
    grid, n_loc, err, used = best
    low, high = n_loc.copy(), n_loc.copy()
    for t0_end in bracket:
        if t0_end == t0 or _span_decades(series, t0_end) * points_per_decade > _MAX_GRID:
            continue
        other = _grid_exponent(series, t0_end, points_per_decade, window_points, order)
        if other is None:
            continue
        g2, n2 = other[0], other[1]
        # The same frame times, counted from the best origin.
        with np.errstate(invalid="ignore", divide="ignore"):
            mapped = np.log(np.exp(g2) + (t0_end - t0))
        keep = np.isfinite(mapped)  # grid points before the best origin have no time
        if keep.sum() < 2:
            continue
        n_at = np.interp(grid, mapped[keep], n2[keep])
        low, high = np.minimum(low, n_at), np.maximum(high, n_at)
    return LocalExponent(
        True,
        "",
        np.exp(grid),
        n_loc,
        err,
        low - 2.0 * err,
        high + 2.0 * err,
        float(t0),
        (float(bracket[0]), float(bracket[1])),
        int(points_per_decade),
        float(used),
        _METHOD.format(order=order, window=used, ppd=points_per_decade),
    )


def local_exponent(
    time,
    radius,
    *,
    radius_err=None,
    t0=None,
    t0_bracket=None,
    points_per_decade=20,
    window_decades=0.5,
) -> LocalExponent:
    """The local exponent ``d ln r / d ln (t - t0)`` of a series, with its band.

    Parameters
    ----------
    time, radius : (N,) array_like
        Times (s) and radii (m), as for :func:`fit_power_law`.
    radius_err : (N,) array_like, optional
        Uncertainty of each radius (m).
    t0 : float, optional
        The origin (default 0, or the middle of `t0_bracket`).
    t0_bracket : (float, float), optional
        The contact bracket; its ends make the band. Only points after its
        upper end are used.
    points_per_decade : int
        Grid density (default 20).
    window_decades : float
        Savitzky–Golay window (default half a decade).

    Returns
    -------
    LocalExponent
        Falsy when the series spans fewer than 5 grid points.
    """
    if t0_bracket is not None:
        lo, hi = resolve_origin(None, t0_bracket)
        origin = 0.5 * (lo + hi) if t0 is None else float(t0)
    else:
        lo, hi = resolve_origin(t0, None)
        origin = lo
    series = make_series(time, radius, radius_err)
    series = series.subset(series.time > hi)
    return local_from_series(
        series,
        origin,
        (lo, hi),
        points_per_decade=points_per_decade,
        window_decades=window_decades,
    )


def exponent_plateaus(local: LocalExponent, *, tolerance=0.03, min_decades=1.0 / 3.0):
    """Stretches where the local exponent stays within ± `tolerance` of its mean.

    Returns
    -------
    tuple of (float, float, float)
        ``(τ_start, τ_end, mean exponent)`` of each plateau of at least
        `min_decades`, in time order (greedy from the start).
    """
    if not local:
        return ()
    n = local.exponent
    ln_t = np.log(local.time)
    out = []
    i = 0
    while i < len(n):
        j = i
        while j + 1 < len(n) and np.ptp(n[i : j + 2]) <= 2.0 * tolerance:
            j += 1
        if (ln_t[j] - ln_t[i]) / math.log(10.0) >= min_decades:
            out.append((float(local.time[i]), float(local.time[j]), float(n[i : j + 1].mean())))
        i = j + 1
    return tuple(out)
