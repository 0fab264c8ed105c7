"""The neck band: bilinear sampling against scipy.ndimage as the reference."""

import numpy as np
import pytest
from scipy import ndimage

from dropkin.vision import make_band, sample_band


@pytest.mark.parametrize("dtype", [np.uint8, np.uint16, np.float64])
def test_band_samples_equal_bilinear_interpolation(dtype):
    # Reference: scipy.ndimage.map_coordinates with order=1 (bilinear) at the
    # band's points, frame by frame; float32 sampling, so 1e-6 relative.
    rng = np.random.default_rng(3)
    frames = (rng.random((5, 70, 90)) * 4000).astype(dtype)
    band = make_band(
        frames.shape[1:],
        (35.3, 44.8),
        (np.sin(0.3), np.cos(0.3)),
        s_centre=1.3,
        s_half=9.0,
        u_half=0.0,
        s_step=0.5,
        u_values=[0.0, 6.0, 7.0, 8.0, 9.0, 10.0, 11.0, 12.0],
    )
    got = sample_band(frames, band)
    assert got.shape == (5, len(band.u), len(band.s)) and got.dtype == np.float32
    points = band.points
    for k in range(len(frames)):
        ref = ndimage.map_coordinates(frames[k].astype(np.float64), points, order=1)
        assert np.allclose(got[k][band.valid], ref[band.valid], rtol=1e-6, atol=1e-3)


def test_band_near_the_border_marks_samples_outside():
    band = make_band((30, 40), (2.0, 20.0), (0.0, 1.0), s_centre=0.0, s_half=4.0, u_half=5.0)
    # Rows above the frame (row < 0) are invalid; all others are inside.
    rows = band.points[0]
    assert np.array_equal(band.valid, (rows >= 0) & (rows <= 28))


def test_distinct_pixels_equal_numpy_unique():
    # Reference: numpy.unique(return_inverse=True).
    from dropkin.vision._band import _distinct

    rng = np.random.default_rng(9)
    index = rng.integers(1000, 5000, size=(4, 7, 11))
    values, where = _distinct(index)
    ref_values, ref_where = np.unique(index, return_inverse=True)
    assert np.array_equal(values, ref_values)
    assert np.array_equal(where, ref_where.reshape(index.shape))


def test_a_band_with_a_gap_reads_one_box_per_stretch():
    # Axis row plus rows 6..12 on each side: three boxes, none holding the
    # pixels between the axis and the dense rows (rows 2 to 4 away from it).
    band = make_band(
        (70, 90),
        (35.0, 45.0),
        (0.0, 1.0),
        s_centre=0.0,
        s_half=5.0,
        u_half=0.0,
        s_step=1.0,
        u_values=[0.0, 6.0, 7.0, 8.0, 9.0, 10.0, 11.0, 12.0],
    )
    assert len(band.boxes) == 3
    for r0, r1, _, _ in band.boxes:
        assert not any(r0 <= row < r1 for row in (31, 32, 33, 37, 38, 39))


@pytest.fixture(scope="module")
def unequal_pair():
    """A tilted pair of unequal drops merging (synthetic, from dropkin.synth),
    and what measure_necks needs from its first frame."""
    from dropkin import synth
    from dropkin.vision import (
        dark_level,
        edge_blur,
        find_drop_pair,
        fit_illumination,
        transmission,
    )

    law = synth.inertial_law(surface_tension=0.072, density=998.0, drop_radius=1e-3)
    rec = synth.synthesize(
        synth.Coalescence(drop_radius=1e-3, second_radius=0.7e-3, angle_deg=35.0),
        law,
        camera=synth.Camera(2e5, 15e-6, (300, 360)),
        frames=48,
        contact_frame=4.6,
        optics=synth.Optics(blur_px=1.2, dust_count=4),
        sensor=synth.Sensor(bit_depth=8),
        seed=3,
    )
    frames = rec.render()
    first = frames[0]
    light = fit_illumination(first)
    dark = dark_level(first)
    trans = transmission(first, light, dark)
    pair = find_drop_pair(trans)
    setup = dict(illumination=light, dark=dark, noise=0.01, blur=edge_blur(trans, pair))
    return frames, pair, setup


def test_necks_do_not_depend_on_the_hint_or_the_chunks(unequal_pair):
    # The band around the neck is chosen from a rough look and the hint;
    # frames whose neck it misses are measured again on the full band, so a
    # wrong hint, or other chunks, change nothing (a property of the method).
    from dropkin.vision import measure_necks

    frames, pair, setup = unequal_pair
    whole = measure_necks(frames, pair, **setup)
    assert np.isfinite(whole.radius).sum() > 40
    for hint in (None, 2.0, 60.0):
        again = measure_necks(frames[10:], pair, **setup, hint=hint)
        assert np.array_equal(again.radius, whole.radius[10:], equal_nan=True)
        assert np.array_equal(again.status, whole.status[10:])
    parts = [measure_necks(frames[a : a + 5], pair, **setup) for a in range(0, 48, 5)]
    assert np.array_equal(np.concatenate([p.radius for p in parts]), whole.radius, equal_nan=True)


@pytest.mark.parametrize(
    "dtype", [np.uint8, np.uint16, np.int16, np.int32, np.int64, np.float32, np.float64]
)
def test_transposed_copies_equal_numpy_transpose(dtype):
    # Reference: numpy's .T (OpenCV's transpose is used for the types it takes).
    from dropkin.vision._band import _transposed

    a = (np.arange(7 * 300) % 251).astype(dtype).reshape(7, 300)
    for block in (a, a[:1]):
        got = _transposed(block)
        assert got.dtype == block.dtype and np.array_equal(got, block.T)
