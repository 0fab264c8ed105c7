"""Finding the two drops: a pendant drop above a sessile one, with a needle and a plate.

The frame is drawn here by supersampling (16 x 16 per pixel) an analytic scene,
independently of ``dropkin.synth`` and of the code under test: a pendant drop
hanging from a needle, a sessile drop standing on a dark plate that spans the
frame. The circles are the truth.
"""

import numpy as np
import pytest

from dropkin.errors import MeasurementError
from dropkin.vision import dark_level, find_drop_pair, fit_illumination, transmission

SHAPE = (240, 200)
PENDANT = (70.3, 100.2, 42.0)  # centre row, centre col, radius (px)
SESSILE = (168.6, 99.7, 46.0)
PLATE_ROW = 205.0  # plate surface: rows below it are the plate
NEEDLE = (93.0, 107.0)  # needle columns, from the top edge into the pendant drop


def _scene(rows, cols):
    inside = np.zeros(rows.shape, dtype=bool)
    for r0, c0, radius in (PENDANT, SESSILE):
        inside |= (rows - r0) ** 2 + (cols - c0) ** 2 <= radius**2
    inside |= rows >= PLATE_ROW
    inside |= (cols >= NEEDLE[0]) & (cols <= NEEDLE[1]) & (rows <= PENDANT[0])
    return inside


def _render(factor=16):
    offsets = (np.arange(factor) + 0.5) / factor - 0.5
    rows, cols = np.mgrid[0 : SHAPE[0], 0 : SHAPE[1]].astype(float)
    cover = np.zeros(SHAPE)
    for dr in offsets:
        for dc in offsets:
            cover += _scene(rows + dr, cols + dc)
    cover /= factor**2
    light = 3000.0 * (1.0 + 0.15 * cols / SHAPE[1])  # a gradient, 12-bit-like counts
    return light * (1.0 - 0.95 * cover)


def test_pendant_and_sessile_drops_are_found_despite_needle_and_plate():
    frame = _render()
    trans = transmission(frame, fit_illumination(frame), dark_level(frame))
    pair = find_drop_pair(trans)
    top, bottom = pair.circles  # a vertical pair: drop 0 is the upper one
    # Within 0.3 px of the drawn circles: the outline is sub-pixel (marching
    # squares on supersampled coverage); the needle and the plate are left out.
    assert np.hypot(*(top.centre - PENDANT[:2])) < 0.3
    assert abs(top.radius - PENDANT[2]) < 0.3
    assert np.hypot(*(bottom.centre - SESSILE[:2])) < 0.3
    assert abs(bottom.radius - SESSILE[2]) < 0.3
    # The line of centres points from the pendant to the sessile drop.
    expected = np.subtract(SESSILE[:2], PENDANT[:2])
    assert pair.axis == pytest.approx(expected / np.hypot(*expected), abs=0.01)
    assert not pair.in_contact and pair.gap == pytest.approx(
        np.hypot(*expected) - PENDANT[2] - SESSILE[2], abs=0.5
    )


def test_an_empty_frame_has_no_drops():
    trans = np.ones((50, 60))
    with pytest.raises(MeasurementError, match="no drops"):
        find_drop_pair(trans)


def test_outline_points_equal_find_contours_on_the_whole_frame():
    # Tracing only the box around the drops gives scikit-image's contours of
    # the whole frame (ones away from the drops), point for point.
    from skimage import measure as skmeasure

    from dropkin.vision._pair import _outline_points

    frame = _render(factor=4)
    trans = transmission(frame, fit_illumination(frame), dark_level(frame))
    near = np.zeros(trans.shape, dtype=bool)
    near[20:150, 40:170] = True
    got = _outline_points(trans, near, 0.5)
    expected = np.concatenate(skmeasure.find_contours(np.where(near, trans, 1.0), 0.5))
    assert got.shape == expected.shape and len(got) > 100
    assert np.allclose(got, expected, rtol=0, atol=1e-12)


def test_largest_label_near_equals_a_grey_dilation():
    # Reference: scipy.ndimage.grey_dilation of the kept labels, looked up at the points.
    from scipy import ndimage

    from dropkin.vision._pair import _largest_label_near

    rng = np.random.default_rng(5)
    labels, _ = ndimage.label(rng.random((40, 50)) < 0.35)
    keep = np.array([2, 5])
    rows = rng.integers(0, 40, 300)
    cols = rng.integers(0, 50, 300)
    grown = ndimage.grey_dilation(np.where(np.isin(labels, keep), labels, 0), size=(5, 5))
    got = _largest_label_near(labels, keep, rows, cols, reach=2)
    assert np.array_equal(got, grown[rows, cols])
