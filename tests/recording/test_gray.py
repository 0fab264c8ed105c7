"""Colour to grayscale, checked against numpy's own weighted sum."""

from __future__ import annotations

import numpy as np
import pytest

from dropkin.recording._gray import to_gray

BT601_RGB = np.array([0.299, 0.587, 0.114])  # ITU-R BT.601 luma weights


@pytest.mark.parametrize("dtype", ["uint8", "uint16", "float32", "float64", "int32"])
@pytest.mark.parametrize("order", ["RGB", "BGR"])
@pytest.mark.parametrize("channels", [3, 4])
def test_colour_is_the_bt601_weighted_sum(rng, dtype, order, channels):
    image = rng.integers(0, 4096, size=(9, 11, channels)).astype(dtype)
    original = image.copy()
    weights = BT601_RGB if order == "RGB" else BT601_RGB[::-1]
    expected = image[..., :3].astype(float) @ weights  # numpy, the reference
    gray = to_gray(image, order=order)
    assert gray.shape == (9, 11) and gray.dtype == image.dtype
    # Integers are rounded (OpenCV with fixed-point weights): one level at most.
    atol = 1e-3 * 4096 if dtype.startswith("float") else 1
    np.testing.assert_allclose(gray, expected, atol=atol)
    np.testing.assert_array_equal(image, original)  # the input is not modified


def test_gray_with_alpha_keeps_the_gray_plane(rng):
    image = rng.integers(0, 256, size=(5, 6, 2), dtype=np.uint8)
    np.testing.assert_array_equal(to_gray(image), image[..., 0])


def test_bad_images_and_orders_are_refused():
    with pytest.raises(ValueError, match="order"):
        to_gray(np.zeros((2, 2, 3), np.uint8), order="GRB")
    with pytest.raises(ValueError, match="image"):
        to_gray(np.zeros((2, 2, 5), np.uint8))
