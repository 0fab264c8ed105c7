"""Silhouette helpers against scipy.ndimage as the reference implementation."""

import numpy as np
from scipy import ndimage

from dropkin.vision import fit_illumination, silhouette_mask, transmission
from dropkin.vision._silhouette import dilate, holes_filled, label_regions


def test_hole_filling_and_dilation_equal_scipy_ndimage():
    rng = np.random.default_rng(4)
    for density in (0.3, 0.5, 0.7):
        mask = rng.random((61, 73)) < density
        assert np.array_equal(holes_filled(mask), ndimage.binary_fill_holes(mask))
        for n in (1, 3):
            assert np.array_equal(dilate(mask, n), ndimage.binary_dilation(mask, iterations=n))


def test_region_labels_equal_scipy_ndimage():
    # Same labels in the same order (find_drop_pair ranks regions by size,
    # ties by label), for sparse to dense masks.
    rng = np.random.default_rng(7)
    for density in (0.2, 0.45, 0.6):
        mask = rng.random((97, 83)) < density
        labels, count = label_regions(mask)
        ref, ref_count = ndimage.label(mask)
        assert count == ref_count and count > 10
        assert np.array_equal(labels, ref)


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


def test_otsu_threshold_of_integer_frames_equals_binning_every_pixel():
    # Integer frames take a shortcut (one count per grey level); the reference
    # is the same threshold computed on the frame as float64, where every
    # pixel goes through numpy.histogram.
    from dropkin.vision import threshold_midpoint

    rng = np.random.default_rng(8)
    for dtype, high in ((np.uint8, 255), (np.uint16, 4095), (np.uint16, 65535)):
        frame = rng.integers(0, high + 1, (64, 80)).astype(dtype)
        frame[:20] = (frame[:20] // 4).astype(dtype)  # two populations
        assert threshold_midpoint(frame) == threshold_midpoint(frame.astype(np.float64))


def test_illumination_equals_a_least_squares_polynomial():
    # Reference: numpy.linalg.lstsq on the full design matrix of the
    # quadratic terms, evaluated term by term on every pixel.
    rng = np.random.default_rng(2)
    rows, cols = np.mgrid[0:90, 0:120]
    r, c = rows / 89, cols / 119
    light = 1500 + 300 * r - 200 * c + 400 * r * c - 250 * r**2 + 100 * c**2
    frame = light + rng.normal(0, 5, light.shape)
    background = np.ones(frame.shape, dtype=bool)
    background[30:60, 40:80] = False
    frame[~background] = 30.0
    model = fit_illumination(frame, background=background, step=2)
    powers = [(i, j) for i in range(3) for j in range(3 - i)]
    use = background[::2, ::2]
    sub_r, sub_c = r[::2, ::2][use], c[::2, ::2][use]
    design = np.stack([sub_r**i * sub_c**j for i, j in powers], axis=-1)
    coeffs, *_ = np.linalg.lstsq(design, frame[::2, ::2][use], rcond=None)
    expected = sum(k * r**i * c**j for (i, j), k in zip(powers, coeffs, strict=True))
    assert np.allclose(model, expected, rtol=1e-10, atol=0)
