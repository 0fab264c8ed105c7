"""Local circles at the contact line (side view): their fit, where they meet the
substrate line, the apparent contact angle there, and the air wedge beside it.

On each side of the drop a circle is fitted to the outline points found near
the substrate line (a local model of the outline, by weighted least squares,
many point sets at once); see :mod:`dropkin.vision._substrate`.
"""

from __future__ import annotations

import numpy as np

from ._substrate import SubstrateLine

__all__ = ["local_circles", "contact_points", "angle_at", "wedge_height"]


def _normal_matrix(w, a, b, c):
    """Weighted normal matrix of the design columns a, b, c: (..., 3, 3)."""
    cols = (a, b, c)
    out = np.empty((*w.shape[:-1], 3, 3))
    for i in range(3):
        for j in range(i, 3):
            out[..., i, j] = out[..., j, i] = (w * cols[i] * cols[j]).sum(-1)
    out[..., range(3), range(3)] += 1e-9
    return out


def local_circles(rows, cols, weight, *, refine: int = 2):
    """A circle per set of weighted points, by least squares, vectorised.

    Kasa's algebraic fit (linear) in coordinates centred on the points, then
    `refine` Gauss-Newton steps on the orthogonal distances.

    Parameters
    ----------
    rows, cols, weight : (..., P) ndarray
        Points and their weights (0 leaves a point out).

    Returns
    -------
    centre_row, centre_col, radius, rms : (...) ndarray
        NaN where fewer than 4 points carry weight.
    """
    w = np.asarray(weight, dtype=np.float64)
    count = (w > 0).sum(-1)
    wsum = np.maximum(w.sum(-1), 1e-12)
    rows = np.where(w > 0, rows, 0.0)
    cols = np.where(w > 0, cols, 0.0)
    o_r = (w * rows).sum(-1) / wsum
    o_c = (w * cols).sum(-1) / wsum
    y = np.where(w > 0, rows - o_r[..., None], 0.0)
    x = np.where(w > 0, cols - o_c[..., None], 0.0)
    z = x**2 + y**2
    normal = _normal_matrix(w, y, x, np.ones_like(x))
    rhs = np.stack([(w * y * z).sum(-1), (w * x * z).sum(-1), (w * z).sum(-1)], axis=-1)
    sol = np.linalg.solve(normal, rhs[..., None])[..., 0]
    c_y, c_x = 0.5 * sol[..., 0], 0.5 * sol[..., 1]
    radius = np.sqrt(np.maximum(sol[..., 2] + c_y**2 + c_x**2, 1e-12))
    for _ in range(refine):
        dy, dx = y - c_y[..., None], x - c_x[..., None]
        dist = np.maximum(np.hypot(dy, dx), 1e-9)
        resid = dist - radius[..., None]
        j_y, j_x = -dy / dist, -dx / dist
        jtj = _normal_matrix(w, j_y, j_x, -np.ones_like(dist))
        jtr = np.stack(
            [(w * j_y * resid).sum(-1), (w * j_x * resid).sum(-1), -(w * resid).sum(-1)], axis=-1
        )
        delta = np.linalg.solve(jtj, -jtr[..., None])[..., 0]
        c_y, c_x, radius = c_y + delta[..., 0], c_x + delta[..., 1], radius + delta[..., 2]
    dist = np.hypot(y - c_y[..., None], x - c_x[..., None])
    rms = np.sqrt((w * (dist - radius[..., None]) ** 2).sum(-1) / wsum)
    bad = count < 4
    out = [o_r + c_y, o_c + c_x, np.abs(radius), rms]
    return tuple(np.where(bad, np.nan, v) for v in out)


def contact_points(line: SubstrateLine, c_row, c_col, radius, low_row, low_col):
    """Where each local circle meets the substrate line, and the contact angle there.

    Of the two intersections the one nearer the lowest fitted point is taken.

    Returns
    -------
    u : (...) ndarray
        Position along the line (px from ``(row0, col0)``, increasing with
        the column); NaN where the circle does not reach the line.
    centre_height : (...) ndarray
        Height of the circle's centre above the line.
    centre_u : (...) ndarray
        The centre's position along the line.
    """
    norm = np.hypot(1.0, line.tilt)
    e_r, e_c = line.tilt / norm, 1.0 / norm  # along the line
    n_r, n_c = -1.0 / norm, line.tilt / norm  # up, away from the substrate
    q_r, q_c = c_row - line.row0, c_col - line.col0
    centre_u = q_r * e_r + q_c * e_c
    centre_h = q_r * n_r + q_c * n_c
    half = np.sqrt(radius**2 - centre_h**2)  # NaN if the circle misses the line
    low_u = (low_row - line.row0) * e_r + (low_col - line.col0) * e_c
    u = np.where(
        np.abs(low_u - centre_u - half) <= np.abs(low_u - centre_u + half),
        centre_u + half,
        centre_u - half,
    )
    return u, centre_h, centre_u


def angle_at(u, centre_u, centre_h, inward: float):
    """Apparent contact angle (degrees, inside the liquid) of a circle at its foot `u`.

    The outline's tangent at the contact point, taken pointing up, against the
    substrate direction that points into the drop (`inward` = +1 along the
    line on the left side, -1 on the right side).
    """
    # Radius vector from the centre to the foot, in (along, up) components.
    v_u, v_h = u - centre_u, -centre_h
    # Tangent perpendicular to it, pointing up.
    t_u, t_h = -v_h, v_u
    flip = t_h < 0
    t_u, t_h = np.where(flip, -t_u, t_u), np.where(flip, -t_h, t_h)
    return np.degrees(np.arctan2(t_h, inward * t_u))


def wedge_height(u, centre_u, centre_h, radius, outward: float, distance):
    """Height of the circle's lower branch at `distance` beyond the foot `u`, outward.

    Infinite beyond the circle's widest point: no overhang there, the wedge
    is open.
    """
    along = u + outward * distance - centre_u
    inside = radius**2 - along**2
    return np.where(inside > 0, centre_h - np.sqrt(np.abs(inside)), np.inf)
