"""The neck radius near the resolution limit: blur's outward shift of a concave
outline, and its correction, checked on frames drawn by an independent renderer.

Reference for the shift: the half-transmission contour of a blurred curved
edge moves by ``sigma**2 kappa / 2`` towards the centre of curvature, to first
order (derived in :mod:`dropkin.vision._neck_curvature`; the location error of
curved edges in low-pass filtered images, IEEE Trans. Pattern Anal. Mach.
Intell. 16, 726-733 (1994), from memory). The exact contour of a blurred
notch (half-circle tip between parallel walls) comes from
:func:`scipy.ndimage.gaussian_filter` on a fine grid.

The frames come from ``_fillet_frames`` (not :mod:`dropkin.synth`): equal
circles of radius R = 100 px joined by a fillet of radius rho = r^2/(2R)
(synth's touching circles), r^2/R or 2 r^2/R, supersampled, blurred, averaged
to pixels, 8-bit with noise. Bias of the measured radius (px), mean of four
noise draws and sub-pixel placements per cell, ``ok`` frames, at gaps
g = r^2/R in units of sigma_eff = hypot(sigma, 1/sqrt 12) (the first rows,
g = 3, are mostly ``unresolved`` as the measured blur is larger than
sigma_eff); before is the half-transmission contour as found, after is with
the correction (noise 0.01 of the contrast: the uniform -0.05 px left at
large g is the dark level's noise bias, not the neck's)::

    sigma  rho       g:  3.5    4      5      6      8      10     14     20     30
    0.7  r^2/2R before  +0.33  +0.25  +0.18  +0.16  +0.08  +0.07  +0.04  +0.01  -0.01
                after   -0.08  -0.10  -0.07  -0.02  -0.06  -0.06  -0.05  -0.05  -0.05
    0.7  r^2/R  before  +0.13  +0.09  +0.07  +0.07  +0.02  +0.02  +0.01  -0.02  -0.03
                after   -0.02  -0.04  -0.05  -0.02  -0.05  -0.04  -0.04  -0.05  -0.05
    0.7  2r^2/R before  +0.06  +0.03  +0.03  +0.03  -0.01  -0.01  -0.01  -0.04  -0.04
                after   -0.02  -0.04  -0.03  -0.02  -0.04  -0.03  -0.03  -0.05  -0.05
    1.0  r^2/2R before  +0.38  +0.29  +0.22  +0.20  +0.12  +0.09  +0.07  +0.02  -0.00
                after   -0.06  -0.10  -0.09  -0.02  -0.07  -0.05  -0.03  -0.05  -0.05
    1.0  r^2/R  before  +0.15  +0.11  +0.07  +0.08  +0.03  +0.03  +0.03  -0.01  -0.03
                after   -0.05  -0.08  -0.07  -0.03  -0.06  -0.04  -0.02  -0.05  -0.05
    1.0  2r^2/R before  +0.06  +0.03  +0.01  +0.03  -0.01  -0.00  +0.00  -0.03  -0.04
                after   -0.04  -0.06  -0.06  -0.03  -0.05  -0.03  -0.02  -0.04  -0.05
    1.5  r^2/2R before  +0.49  +0.41  +0.31  +0.22  +0.15  +0.10  +0.07  +0.03  -0.01
                after   -0.07  -0.05  -0.09  -0.10  -0.07  -0.08  -0.06  -0.06  -0.07
    1.5  r^2/R  before  +0.19  +0.15  +0.12  +0.08  +0.04  +0.01  +0.01  -0.01  -0.04
                after   -0.07  -0.09  -0.06  -0.07  -0.06  -0.08  -0.05  -0.05  -0.07
    1.5  2r^2/R before  +0.07  +0.03  +0.03  +0.01  -0.01  -0.03  -0.02  -0.04  -0.06
                after   -0.06  -0.08  -0.06  -0.06  -0.06  -0.07  -0.05  -0.06  -0.07

The test below draws one series per cell at a lower noise (0.006), takes
the renderer's own dark level (so that only the neck's bias is left), and
asks for |bias| <= 0.1 px on every ``ok`` frame after the correction.
"""

import math

import numpy as np
import pytest
from scipy import ndimage

from dropkin import vision
from dropkin.vision import _neck
from dropkin.vision._neck_curvature import blur_shift

from ._fillet_frames import render_pair

R = 100.0
SHAPE = (200, 300)
GAPS = np.array([3.5, 4.0, 5.0, 6.0, 8.0, 10.0, 14.0, 20.0, 30.0])  # r^2/R in sigma_eff


def _notch_contour(rho, sigma=1.0, h=0.02):
    """Exact shift of the half-level contour at the tip of a blurred notch (a
    half circle of radius rho between parallel walls, bright inside, dark
    around), and the contour's curvature there: scipy's Gaussian on a fine grid."""
    ys = np.arange(-rho - 8 * sigma, 3 * rho + 8 * sigma, h)
    xs = np.arange(-rho - 8 * sigma, rho + 8 * sigma, h)
    x, y = np.meshgrid(xs, ys)
    bright = ((np.abs(x) < rho) & (y > 0)) | (x**2 + y**2 < rho**2)
    blurred = ndimage.gaussian_filter(bright.astype(float), sigma / h, truncate=6.0)

    def tip(at):
        col = blurred[:, np.argmin(np.abs(xs - at))]
        i = int(np.argmax(col >= 0.5))
        return ys[i - 1] + (0.5 - col[i - 1]) / (col[i] - col[i - 1]) * h

    y0 = tip(0.0)
    dx = 0.25
    kappa_m = (tip(dx) + tip(-dx) - 2 * y0) / dx**2
    return rho + y0, kappa_m


@pytest.mark.parametrize("rho", [1.5, 2.0, 3.0, 5.0])
def test_shift_from_the_contours_curvature_matches_the_exact_blurred_notch(rho):
    shift_exact, kappa_m = _notch_contour(rho)
    first = 1.0 / (2.0 * rho)
    shift, shift_err = blur_shift(np.array([kappa_m]), 1.0)
    # The exact shift exceeds the first order (by 27 % at rho = 1.5 sigma)...
    assert shift_exact > first
    # ...and the correction, from the contour's curvature alone, finds it within
    # a few hundredths of sigma, inside its own stated uncertainty.
    assert abs(shift[0] - shift_exact) < 0.03
    assert abs(shift[0] - shift_exact) < max(shift_err[0], 0.01)


def test_a_flat_outline_gets_the_first_order_shift():
    kappa = np.array([1e-4, -1e-4, 0.0, np.nan])
    shift, _ = blur_shift(kappa, 1.3)
    assert shift == pytest.approx([0.5 * 1.69e-4, -0.5 * 1.69e-4, 0.0, 0.0], rel=1e-3, abs=1e-12)


def _series(sigma, fillet, seed, noise=0.006):
    """Frames of one neck family and the vision setup from the first (apart) frame."""
    rng = np.random.default_rng(seed)
    centre = (99.5 + rng.random(), 149.5 + rng.random())
    sigma_eff = math.hypot(sigma, 1 / math.sqrt(12))
    necks = np.sqrt(GAPS * sigma_eff * R)
    frames = [render_pair(SHAPE, centre, radius=R, neck=None, fillet=6.0, sigma=sigma, rng=rng)]
    for r in necks:
        frames.append(
            render_pair(
                SHAPE, centre, radius=R, neck=r, fillet=fillet * r * r / R, sigma=sigma,
                noise=noise, rng=rng,
            )
        )  # fmt: skip
    frames = np.array(frames)
    light = vision.fit_illumination(frames[0])
    dark = 20.0  # the renderer's own: the dark level's noise bias is not the neck's
    trans = vision.transmission(frames[0], light, dark)
    pair = vision.find_drop_pair(trans)
    noise_t = float(np.std(np.diff(trans[:20], axis=1)) / math.sqrt(2))
    setup = dict(illumination=light, dark=dark, noise=noise_t, blur=vision.edge_blur(trans, pair))
    return frames, necks, pair, setup


@pytest.mark.parametrize("sigma", [0.7, 1.0, 1.5])
@pytest.mark.parametrize("fillet", [0.5, 1.0, 2.0])
def test_neck_bias_within_a_tenth_of_a_pixel_on_an_independent_renderer(
    sigma, fillet, monkeypatch
):
    frames, necks, pair, setup = _series(sigma, fillet, seed=int(10 * sigma + fillet))
    after = vision.measure_necks(frames, pair, **setup)
    ok = after.status[1:] == vision.OK
    assert ok.sum() >= len(GAPS) - 1
    bias_after = (after.radius[1:] - necks)[ok]
    assert np.all(np.abs(bias_after) <= 0.1), bias_after
    # The stated uncertainty covers what is left, at two of its standard errors.
    assert np.all(np.abs(bias_after) <= 2 * after.radius_err[1:][ok])
    # Without the correction (the contour as found) the first resolved necks of
    # synth's family read large by far more: the check can fail.
    monkeypatch.setattr(_neck, "blur_shift", lambda k, b, e=None: (0 * k, 0 * k))
    before = vision.measure_necks(frames, pair, **setup)
    bias_before = (before.radius[1:] - necks)[ok]
    if fillet == 0.5:
        assert bias_before[0] > 0.25
        assert np.mean(np.abs(bias_after)) < 0.5 * np.mean(np.abs(bias_before))
