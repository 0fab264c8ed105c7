"""Silhouette helpers against scipy.ndimage as the reference implementation."""

import numpy as np
from scipy import ndimage

from dropkin.vision import fit_illumination, silhouette_mask, transmission
from dropkin.vision._silhouette import dilate, holes_filled


def test_hole_filling_and_dilation_equal_scipy_ndimage():
    rng = np.random.default_rng(4)
    for density in (0.3, 0.5, 0.7):
        mask = rng.random((61, 73)) < density
        assert np.array_equal(holes_filled(mask), ndimage.binary_fill_holes(mask))
        for n in (1, 3):
            assert np.array_equal(dilate(mask, n), ndimage.binary_dilation(mask, iterations=n))


def test_uneven_light_is_divided_out():
    # A dark square under a 40 % gradient: after the illumination model the
    # transmission is 1 on the background everywhere (to 1 %), 0 in the square.
    rows, cols = np.mgrid[0:80, 0:100]
    light = 2000.0 * (1 + 0.4 * cols / 99)
    frame = light.copy()
    frame[30:50, 40:60] = 40.0
    trans = transmission(frame, fit_illumination(frame, degree=1), 40.0)
    background = np.ones(frame.shape, bool)
    background[25:55, 35:65] = False
    assert np.allclose(trans[background], 1.0, atol=0.01)
    assert np.allclose(trans[32:48, 42:58], 0.0, atol=0.01)
    assert silhouette_mask(trans).sum() == 400
