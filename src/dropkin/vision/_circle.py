"""Circle fits to outline points, robust to the parts that are not circular."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["CircleFit", "fit_circle"]


@dataclass(frozen=True)
class CircleFit:
    """A circle fitted to outline points.

    Attributes
    ----------
    centre : (2,) ndarray
        Centre as (row, col), in pixels.
    radius : float
        Radius in pixels.
    rms : float
        Root-mean-square distance of the points used from the circle (px).
    used : (P,) ndarray of bool
        Which of the given points were kept (the others were trimmed as
        outliers: a needle, a neighbour, the cut by a substrate).
    """

    centre: np.ndarray
    radius: float
    rms: float
    used: np.ndarray


def _algebraic(points):
    """Kasa's linear least-squares circle (a good first guess)."""
    r, c = points[:, 0], points[:, 1]
    design = np.column_stack([r, c, np.ones_like(r)])
    rhs = r**2 + c**2
    (a, b, k), *_ = np.linalg.lstsq(design, rhs, rcond=None)
    centre = np.array([a / 2.0, b / 2.0])
    radius = float(np.sqrt(max(k + centre @ centre, 0.0)))
    return centre, radius


def _geometric(points, centre, radius):
    """Least squares of the orthogonal distances (what CircleModel also minimises)."""
    from scipy import optimize  # here, not at the top: keeps the command line quick

    def residuals(p):
        return np.hypot(points[:, 0] - p[0], points[:, 1] - p[1]) - p[2]

    def jacobian(p):
        d = np.maximum(np.hypot(points[:, 0] - p[0], points[:, 1] - p[1]), 1e-12)
        return np.column_stack(
            [-(points[:, 0] - p[0]) / d, -(points[:, 1] - p[1]) / d, -np.ones(len(points))]
        )

    sol = optimize.least_squares(
        residuals, np.array([centre[0], centre[1], radius]), jac=jacobian, method="lm"
    )
    return sol.x[:2].copy(), float(sol.x[2])


def _consensus(points, tolerance: float, trials: int):
    """Points that agree with the best circle through three of them (RANSAC).

    Fischler & Bolles (1981, Commun. ACM 24, 381): circles through random
    triples of points, the one that most points lie within `tolerance` of
    wins. Seeded, so the same points always give the same answer.
    """
    rng = np.random.default_rng(0)
    n = len(points)
    # Candidates are scored on at most 600 evenly spread points (enough to
    # tell a circle from a needle); all points are then classed by the winner.
    sample = points[:: max(n // 600, 1)]
    picks = rng.integers(0, n, size=(trials, 3))
    distinct = (
        (picks[:, 0] != picks[:, 1]) & (picks[:, 1] != picks[:, 2]) & (picks[:, 0] != picks[:, 2])
    )
    trio = points[picks[distinct]]
    (a, b), (c, d), (e, f) = (trio[:, k, :].T for k in range(3))
    det = 2.0 * (a * (d - f) + c * (f - b) + e * (b - d))
    good = np.abs(det) > 1e-9
    det = np.where(good, det, 1.0)
    s1, s2, s3 = a * a + b * b, c * c + d * d, e * e + f * f
    rows = (s1 * (d - f) + s2 * (f - b) + s3 * (b - d)) / det
    cols = (s1 * (e - c) + s2 * (a - e) + s3 * (c - a)) / det
    radius = np.hypot(a - rows, b - cols)
    # |d - radius| <= tolerance as a band of squared distances, with
    # d^2 - |c|^2 = |p|^2 - 2 p.c: no square root per point and candidate;
    # candidates in blocks whose arrays stay in the processor's cache.
    centre_sq = rows**2 + cols**2
    lower = np.where(radius > tolerance, (radius - tolerance) ** 2, -np.inf) - centre_sq
    upper = (radius + tolerance) ** 2 - centre_sq
    sample_sq = (sample**2).sum(axis=1)
    counts = np.empty(len(rows), dtype=np.intp)
    block = 64
    partial = np.empty((block, len(sample)))
    other = np.empty((block, len(sample)))
    for first in range(0, len(rows), block):
        part = slice(first, first + block)
        size = len(rows[part])
        np.multiply.outer(-2.0 * rows[part], sample[:, 0], out=partial[:size])
        np.multiply.outer(2.0 * cols[part], sample[:, 1], out=other[:size])
        inside = partial[:size]
        inside -= other[:size]
        inside += sample_sq
        counts[part] = ((inside >= lower[part, None]) & (inside <= upper[part, None])).sum(axis=1)
    counts = np.where(good, counts, -1)
    if not counts.size:
        return None
    best = int(np.argmax(counts))
    inliers = np.abs(np.hypot(*(points - [rows[best], cols[best]]).T) - radius[best]) <= tolerance
    return inliers if inliers.sum() >= 3 else None


def fit_circle(
    points,
    *,
    trim: float = 3.0,
    iterations: int = 6,
    consensus: float | None = 1.5,
    trials: int = 300,
) -> CircleFit:
    """Fit a circle to outline points, ignoring the parts that are not on it.

    With `consensus` set, the points first go through a seeded RANSAC search
    (circles through random triples; the one most points lie within
    `consensus` px of wins), so that a needle, a holder or a neighbouring
    drop in the outline cannot pull the circle. The fit then minimises the
    orthogonal distances (geometric fit) over the agreeing points, starting
    from Kasa's algebraic fit; after each pass, points farther from the
    circle than `trim` robust standard deviations (1.4826 x the median
    absolute residual, at least 0.5 px) are left out and the fit repeated.

    Parameters
    ----------
    points : (P, 2) ndarray
        Outline points as (row, col), P >= 3.
    trim : float, optional
        Outlier cut in robust standard deviations.
    iterations : int, optional
        Passes of fitting and trimming.
    consensus : float or None, optional
        Tolerance (px) of the RANSAC search; None fits all points from the
        start.
    trials : int, optional
        Random triples tried by the RANSAC search.

    Returns
    -------
    CircleFit

    Examples
    --------
    >>> angle = np.linspace(0, 2 * np.pi, 60, endpoint=False)
    >>> pts = np.column_stack([30 + 12 * np.sin(angle), 40 + 12 * np.cos(angle)])
    >>> fit = fit_circle(pts)
    >>> np.round(fit.centre, 6).tolist(), round(fit.radius, 6)
    ([30.0, 40.0], 12.0)
    """
    points = np.asarray(points, dtype=np.float64)
    if points.ndim != 2 or points.shape[1] != 2 or len(points) < 3:
        raise ValueError(f"points must be a (P, 2) array with P >= 3, got {points.shape}")
    used = np.ones(len(points), dtype=bool)
    if consensus is not None and len(points) > 10:
        agreeing = _consensus(points, consensus, trials)
        if agreeing is not None and agreeing.sum() >= 3:
            used = agreeing
    centre, radius = _algebraic(points[used])
    for _ in range(iterations):
        centre, radius = _geometric(points[used], centre, radius)
        resid = np.abs(np.hypot(points[:, 0] - centre[0], points[:, 1] - centre[1]) - radius)
        scale = max(1.4826 * float(np.median(resid[used])), 0.5 / trim)
        new_used = resid <= trim * scale
        if new_used.sum() < 3 or np.array_equal(new_used, used):
            break
        used = new_used
    resid = np.hypot(points[used, 0] - centre[0], points[used, 1] - centre[1]) - radius
    return CircleFit(
        centre=centre, radius=radius, rms=float(np.sqrt(np.mean(resid**2))), used=used
    )
