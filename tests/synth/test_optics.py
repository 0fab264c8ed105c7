"""Optics and sensor: bit depths, noise statistics, seeds, blur and backlight."""

import math

import numpy as np
import pytest

from dropkin.errors import ExperimentError
from dropkin.synth import (
    Camera,
    Coalescence,
    Optics,
    Sensor,
    apply_optics,
    backlight,
    expose,
    power_law,
    synthesize,
)


def test_twelve_bit_frames_stay_within_4095_in_uint16():
    light = np.linspace(0.0, 1.5, 64 * 64).reshape(64, 64)  # over-exposed part saturates
    rng = np.random.default_rng(1)
    frame = expose(light, sensor=Sensor(bit_depth=12), rng=rng)
    assert frame.dtype == np.uint16
    assert frame.max() == 4095  # saturated, never rescaled to 65535
    assert frame.min() >= 0
    exact = expose(np.full((4, 4), 0.5), sensor=Sensor(bit_depth=12, full_well=None))
    assert np.all(exact == round(0.5 * 4095))


def test_eight_bit_frames_are_uint8():
    frame = expose(np.full((8, 8), 2.0), sensor=Sensor(bit_depth=8, full_well=None))
    assert frame.dtype == np.uint8 and np.all(frame == 255)


def test_sensor_refuses_other_bit_depths():
    with pytest.raises(ExperimentError, match="bit_depth = 10: must be 8 or 12"):
        Sensor(bit_depth=10)


def test_shot_and_read_noise_have_the_poisson_and_gaussian_variance():
    # Poisson: variance = mean (in electrons); read noise adds its variance. In counts
    # the gain is 4095 / full_well. 200 x 200 samples: the sample variance has a
    # relative SD of sqrt(2 / 40000) = 0.7 %, so 4 % is over 5 SD.
    full_well, read_noise, level = 10000.0, 20.0, 0.6
    sensor = Sensor(bit_depth=12, full_well=full_well, read_noise=read_noise)
    frame = expose(np.full((200, 200), level), sensor=sensor, rng=np.random.default_rng(7))
    gain = 4095 / full_well
    electrons = level * full_well
    assert frame.mean() == pytest.approx(level * 4095, rel=2e-3)
    expected_var = (electrons + read_noise**2) * gain**2 + 1 / 12  # + rounding
    assert frame.astype(float).var() == pytest.approx(expected_var, rel=0.04)


def test_blur_keeps_the_total_light_and_spreads_an_edge():
    opacity = np.zeros((40, 40))
    opacity[:, 20:] = 1.0
    flat = Optics(blur_px=2.0, background=1.0, gradient=0.0, vignette=0.0, drop_transmission=0.0)
    image = apply_optics(opacity, np.zeros_like(opacity), optics=flat)
    # Away from the image edges the Gaussian (sigma 2 px) turns the step into an erf:
    # 1 - Phi((col - 19.5) / 2) (normal CDF, via math.erf).
    cols = np.arange(12, 28)
    expected = [1 - 0.5 * (1 + math.erf((c - 19.5) / (2.0 * math.sqrt(2)))) for c in cols]
    # scipy samples the kernel at whole pixels, which differs from the continuous
    # Gaussian by a few 1e-3 at sigma = 2 px.
    np.testing.assert_allclose(image[20, cols], expected, atol=4e-3)
    # Flat at the image edges ("nearest" padding), so the light is kept exactly.
    unblurred = 1.0 - opacity
    assert image.sum() == pytest.approx(unblurred.sum(), rel=1e-12)


def test_backlight_has_the_requested_vignette_and_gradient():
    optics = Optics(background=0.8, gradient=0.0, vignette=0.2)
    light = backlight((101, 101), optics)
    assert light[50, 50] == pytest.approx(0.8)
    assert light[0, 0] == pytest.approx(0.8 * (1 - 0.2))
    tilted = backlight(
        (101, 101), Optics(background=0.8, gradient=0.1, gradient_angle_deg=0.0, vignette=0.0)
    )
    assert tilted[50, 100] / tilted[50, 0] == pytest.approx(1.05 / 0.95)


def _recording(seed, **optics):
    law = power_law(prefactor=0.02, exponent=0.5)
    return synthesize(
        Coalescence(drop_radius=0.3e-3),
        law,
        camera=Camera(frame_rate=1e4, pixel_size=10e-6, shape=(48, 80)),
        frames=4,
        contact_frame=1.25,
        optics=Optics(**optics),
        seed=seed,
    )


def test_same_seed_gives_identical_frames_and_another_seed_other_noise():
    first = _recording(3, dust_count=4).render()
    again = _recording(3, dust_count=4).render()
    other = _recording(4, dust_count=4).render()
    np.testing.assert_array_equal(first, again)
    assert np.any(first != other)
    # Noise differs between frames of one recording, too.
    clean = _recording(3).render()
    assert np.any(clean[0, :5, :5] != clean[1, :5, :5])


def test_dust_specks_stay_put_across_frames():
    optics = {"dust_count": 6, "dust_depth": 0.8, "blur_px": 0.0}
    dusty = _recording(5, **optics)
    clean_rec = synthesize(
        dusty.setup,
        dusty.truth.law,
        camera=dusty.camera,
        frames=4,
        contact_frame=1.25,
        optics=Optics(blur_px=0.0),
        sensor=Sensor(full_well=None),
        seed=5,
    )
    dusty_exact = synthesize(
        dusty.setup,
        dusty.truth.law,
        camera=dusty.camera,
        frames=4,
        contact_frame=1.25,
        optics=Optics(**optics),
        sensor=Sensor(full_well=None),
        seed=5,
    )
    clean, speckled = clean_rec.render().astype(int), dusty_exact.render().astype(int)
    darker = speckled < clean - 5
    assert darker[0].any()
    # Specks over the background are the same in every frame (drops move, dust does not).
    background = (clean[0] > 150) & (clean[-1] > 150)
    for k in range(1, 4):
        np.testing.assert_array_equal(darker[k] & background, darker[0] & background)
