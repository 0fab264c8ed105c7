"""An independent renderer of side-view necks, for checking the neck's bias.

It shares no code with :mod:`dropkin.synth` and draws a different family of
necks: two equal circles of radius R whose bridge is bounded by a fillet
circle of a chosen radius rho, tangent to both circles and coming closest to
the line of centres at the neck radius r. ``dropkin.synth`` keeps the circles
touching, which fixes rho = r^2 / (2 (R - r)); here rho is free (rho = r^2/R
or 2 r^2/R put the circles a little apart, as a neck whose outline is blunter
than the touching-circle one), so the outline's curvature at the neck differs
from synth's at the same r and R.

The silhouette is drawn anti-aliased on a grid 4 times finer than the
pixels (coverage from a signed distance to the outline), blurred there with
:func:`scipy.ndimage.gaussian_filter`, averaged over each pixel's 4 x 4
sub-samples, and read by an 8-bit camera with Gaussian noise.
"""

from __future__ import annotations

import numpy as np
from scipy import ndimage

FINE = 4  # sub-samples per pixel along each direction


def _signed_distance(s, u, radius, neck, fillet):
    """Distance (px) outside the dark silhouette (negative inside), exact on
    the circles and the fillet arcs, at the points (s, u) of the pair's frame
    (s along the line of centres from the neck, u across it).

    Without a neck (``neck`` None) the circles are `fillet` px apart.
    """
    if neck is None:
        d = radius + 0.5 * fillet
        return np.minimum(np.hypot(s - d, u), np.hypot(s + d, u)) - radius
    # Fillet centre (0, r + rho), tangent to the circles centred at (+-d, 0).
    d = np.sqrt((radius + fillet) ** 2 - (neck + fillet) ** 2)
    circles = np.minimum(np.hypot(s - d, u), np.hypot(s + d, u)) - radius
    s_t = d * fillet / (radius + fillet)  # where the fillet touches the circles
    u_t = (neck + fillet) * radius / (radius + fillet)
    box = np.maximum(np.abs(s) - s_t, np.abs(u) - u_t)
    arc = fillet - np.hypot(s, np.abs(u) - (neck + fillet))  # > 0 inside the fillet disc
    return np.minimum(circles, np.maximum(box, arc))


def render_pair(
    shape,
    centre,
    *,
    radius: float,
    neck: float | None,
    fillet: float,
    sigma: float,
    noise: float = 0.01,
    light: float = 200.0,
    dark: float = 20.0,
    rng=None,
):
    """One 8-bit frame (M, N) of the pair, the line of centres horizontal.

    Parameters
    ----------
    shape : (M, N)
    centre : (row, col)
        The neck's centre (px; pixel centres at whole numbers).
    radius : float
        The circles' radius R (px).
    neck : float or None
        Neck radius r (px); None for circles apart by `fillet` px.
    fillet : float
        Fillet radius rho (px), or the distance apart without a neck.
    sigma : float
        Gaussian blur (px).
    noise : float
        Noise standard deviation, as a fraction of ``light - dark``.
    """
    m, n = shape
    step = 1.0 / FINE
    offsets = (np.arange(FINE) + 0.5) * step - 0.5
    rows = (np.arange(m)[:, None] + offsets[None, :]).ravel() - centre[0]
    cols = (np.arange(n)[:, None] + offsets[None, :]).ravel() - centre[1]
    dist = _signed_distance(cols[None, :], rows[:, None], radius, neck, fillet)
    bright = np.clip(0.5 + dist / step, 0.0, 1.0)  # anti-aliased coverage of background
    if sigma > 0:
        bright = ndimage.gaussian_filter(bright, sigma * FINE, mode="nearest", truncate=5.0)
    pixels = bright.reshape(m, FINE, n, FINE).mean(axis=(1, 3))
    rng = np.random.default_rng(0) if rng is None else rng
    values = dark + (light - dark) * (pixels + noise * rng.standard_normal(pixels.shape))
    return np.clip(np.round(values), 0, 255).astype(np.uint8)
