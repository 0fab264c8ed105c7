"""How far blur moves the neck's outline, from the outline's measured curvature.

*The shift.* Let a dark region's boundary pass through the origin with unit
normal x pointing out of the dark side and curvature kappa, the boundary
``x = kappa y**2 / 2`` (kappa > 0: the dark side is concave there, its centre
of curvature lies outside it, as in the notch beside a neck). Blur by a
kernel with variances sigma_x**2, sigma_y**2 across and along the edge. The
transmission at a point x on the normal is the kernel's weight outside the
dark region, ``E[F((x - kappa Y**2 / 2))]`` with F the kernel's cumulative
profile across the edge; to first order in kappa it is
``F(x) - f(x) kappa sigma_y**2 / 2``, so every level's contour moves by

    delta = kappa * sigma_y**2 / 2

towards the centre of curvature (out of the dark side, widening the neck):
the known first-order location error of a curved edge found by
thresholding a low-pass filtered image (L. J. van Vliet and P. W. Verbeek,
IEEE Trans. Pattern Anal. Mach. Intell. 16, 726-733 (1994), from memory;
the derivation above is ours). It is the same for every level, so the
spread between edge levels does not show it.

*The blur's own smoothing.* The curvature we can measure is the contour's,
kappa_m, not the outline's: the contour of a circular notch tip of radius
rho is, to the same order, the concentric circle of radius
``rho_m = rho - delta`` with ``delta = sigma**2 / (2 rho)``. Solving for rho
gives the shift from measured quantities alone:

    delta = (sqrt(rho_m**2 + 2 sigma**2) - rho_m) / 2
          = (sqrt(1 + 2 sigma**2 kappa_m**2) - 1) / (2 kappa_m),

which tends to ``sigma**2 kappa_m / 2`` for a flat outline. sigma is the
edges' measured blur (:func:`dropkin.vision.edge_blur`), which holds the
pixel's averaging and the bilinear sampling as the band's samples do.

*What the first order leaves.* For a notch whose tip is a half circle of
radius rho between parallel walls, the exact half-level contour (the
blurred indicator computed on a fine grid) moves by 0.424 sigma at
rho = 1.5 sigma where the first order says 0.333 sigma: the walls of so
narrow a notch let less light through, and the tip retreats further. The
excess falls off as about ``0.6 (sigma / rho)**2`` of the shift (0.27,
0.14, 0.05 of it at rho = 1.5, 2, 3 sigma; it is held at its value at
1.5 sigma for sharper tips, which the resolution criterion leaves out). It
is added to the first order, as the model tip's; it depends on the notch's shape
beyond its tip, so it is also stated in full as ``shift_err``, with the
noise of the measured curvature.

The curvature is a least-squares parabola through the widths of the columns
around the narrowest, over a half-window of about 0.6 rho_m (a first look
from the narrowest column and its neighbours sets it; never fewer than the
three columns, never beyond 8 px): wider windows average the edges' noise
where the outline is flat, and a parabola follows a circle of radius rho to
within 5 % in curvature out to 0.6 rho.
"""

from __future__ import annotations

import numpy as np

__all__ = ["blur_shift", "outline_curvature"]

#: Largest half-window (px) of the curvature fit.
_MAX_HALF = 8.0
#: The window's half-width as a fraction of the contour's radius of curvature.
_WINDOW = 0.6
#: Second-order excess of the shift, as a fraction of the shift times (sigma/rho)**2
#: (the half-circle notch tip, see the module's notes).
_SECOND_ORDER = 0.6


def outline_curvature(width, m, s_step: float, *, width_err=None):
    """Curvature (1/px) of the neck's outline at the narrowest column, and its error.

    Parameters
    ----------
    width : (S, K) ndarray
        Bridge width in every column (px), infinite where not measured.
    m : (K,) ndarray of int
        The narrowest column of each frame.
    s_step : float
        Column spacing (px).
    width_err : (K,) ndarray, optional
        Standard error of one column's width (px), for the curvature's.

    Returns
    -------
    kappa, kappa_err : (K,) ndarray
        Half the width's second derivative along the axis (the curvature of
        each edge where the outline is nearly parallel to the axis), NaN
        where fewer than three columns around the narrowest are measured;
        and its standard error from `width_err` (NaN without it).
    """
    n_s, k = width.shape
    reach = int(np.ceil(_MAX_HALF / s_step))
    offsets = np.arange(-reach, reach + 1)
    cols = m[None, :] + offsets[:, None]  # (2 reach + 1, K)
    inside = (cols >= 0) & (cols < n_s)
    w = width[np.clip(cols, 0, n_s - 1), np.arange(k)[None, :]]
    good = inside & np.isfinite(w)
    s = offsets[:, None] * s_step * np.ones((1, k))
    # A first look: the narrowest column and its neighbours.
    three = good & (np.abs(offsets) <= 1)[:, None]
    kappa0, _ = _parabola(s, w, three)
    rho0 = np.where(kappa0 > 0, 1.0 / np.maximum(kappa0, 1e-12), np.inf)
    half = np.clip(_WINDOW * rho0, s_step, _MAX_HALF)
    window = good & (np.abs(s) <= half[None, :] + 1e-9)
    kappa, spread = _parabola(s, w, window)
    kappa_err = np.full(k, np.nan) if width_err is None else np.asarray(width_err) * spread
    return kappa, kappa_err


def _parabola(s, w, use):
    """Least-squares ``w = a + b s + c s**2`` over the points `use`, column by column.

    Returns c (half the second derivative of w: the curvature of each edge of
    a width ``w = 2 h`` is ``h'' = c``) and the factor that turns one point's
    error into c's error; NaN where fewer than three points.
    """
    weight = use.astype(np.float64)
    w = np.where(use, w, 0.0)
    moments = np.stack([(weight * s**p).sum(axis=0) for p in range(5)])  # (5, K)
    normal = np.stack([moments[i : i + 3] for i in range(3)])  # (3, 3, K)
    rhs = np.stack([(weight * s**p * w).sum(axis=0) for p in range(3)])  # (3, K)
    count = weight.sum(axis=0)
    det = np.linalg.det(normal.transpose(2, 0, 1))
    ok = (count >= 3) & (np.abs(det) > 1e-12)
    safe = np.where(ok[None, None, :], normal, np.eye(3)[:, :, None])
    inv = np.linalg.inv(safe.transpose(2, 0, 1))  # (K, 3, 3)
    coef = np.einsum("kij,jk->ik", inv, rhs)
    c = np.where(ok, coef[2], np.nan)
    spread = np.where(ok, np.sqrt(np.abs(inv[:, 2, 2])), np.nan)
    return c, spread


def blur_shift(kappa, blur: float, kappa_err=None):
    """How far blur moved each edge of the neck outward (px), and its uncertainty.

    Parameters
    ----------
    kappa : (K,) ndarray
        The contour's measured curvature at the neck (1/px), from
        :func:`outline_curvature`; positive where the neck's outline is
        concave (a notch beside it).
    blur : float
        The edges' blur sigma (px).
    kappa_err : (K,) ndarray, optional
        The curvature's standard error.

    Returns
    -------
    shift, shift_err : (K,) ndarray
        The first-order shift ``(sqrt(1 + 2 sigma**2 kappa**2) - 1) / (2 kappa)``
        (0 where kappa is NaN), and its standard uncertainty: the curvature's
        noise carried through, with the second-order excess the correction
        leaves (see the module's notes).
    """
    kappa = np.nan_to_num(np.asarray(kappa, dtype=np.float64), nan=0.0)
    var = float(blur) ** 2
    root = np.sqrt(1.0 + 2.0 * var * kappa**2)
    small = np.abs(kappa) < 1e-9
    safe = np.where(small, 1.0, kappa)
    first = np.where(small, 0.5 * var * kappa, (root - 1.0) / (2.0 * safe))
    slope = np.where(small, 0.5 * var, (root - 1.0) / (2.0 * safe**2 * root))  # d first / d kappa
    # The outline's own curvature, 1 / (rho_m + first), and the second order.
    kappa_true = np.where(small, kappa, 1.0 / (1.0 / safe + first))
    # Beyond rho = 1.5 sigma (unresolved necks) the expansion is not followed further.
    second = _SECOND_ORDER * first * np.minimum(var * kappa_true**2, 1.0 / 1.5**2)
    noise = 0.0 if kappa_err is None else np.nan_to_num(slope * np.asarray(kappa_err), nan=0.0)
    return first + second, np.hypot(
        noise * (1.0 + 3.0 * second / np.maximum(first, 1e-12)), second
    )
