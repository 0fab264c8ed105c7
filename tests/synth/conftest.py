"""Fixtures for the synth tests: optics and sensor for exact, noise-free frames."""

import pytest

from dropkin.synth import Optics, Sensor


@pytest.fixture
def flat_optics():
    """No blur, flat full-scale backlight, black drops, no bright spot, no dust.

    With it and :func:`exact_sensor`, a frame is rint(255 * (1 - opacity)): a
    pixel is darker than 127.5 exactly when more than half of it is covered.
    """
    return Optics(
        blur_px=0.0,
        background=1.0,
        gradient=0.0,
        vignette=0.0,
        drop_transmission=0.0,
        spot_brightness=0.0,
    )


@pytest.fixture
def exact_sensor():
    """8-bit sensor without noise."""
    return Sensor(bit_depth=8, full_well=None)
