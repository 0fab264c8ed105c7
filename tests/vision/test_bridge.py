"""The bridge height of two sessile drops in side view, on synthetic frames.

The reference is the synthetic truth (dropkin.synth, which shares no code with
dropkin.vision): caps of contact angle θ on a plate, joined by a bridge whose
height follows a power law. Standard as for the free neck
(tests/vision/test_neck.py): RMS error at most 0.5 px on the frames measured
``ok``, frames well before contact ``before-contact``.
"""

from __future__ import annotations

import numpy as np
import pytest

from dropkin import synth, vision
from dropkin.errors import MeasurementError

PIXEL = 5e-6
FOOTPRINT = 0.4e-3


def _recording(theta, kind, *, reflectivity=0.0, frames=40):
    setup = synth.SessileCoalescence(
        view="side", drop_radius=FOOTPRINT, contact_angle_deg=theta, reflectivity=reflectivity
    )
    law = synth.sessile_law(
        kind, surface_tension=0.063, viscosity=1.0, density=1260.0, theta_deg=theta
    )
    exponent = 1.0 if kind == "viscous" else 2.0 / 3.0
    end = (0.6 * setup.apex_height / law.parameters["prefactor"]) ** (1.0 / exponent)
    shape = (int(setup.apex_height / PIXEL) + 50, int(4.6 * FOOTPRINT / PIXEL))
    camera = synth.Camera((frames - 6) / end, PIXEL, shape)
    return synth.synthesize(setup, law, camera=camera, frames=frames, contact_frame=4.5, seed=3)


def _measured(rec):
    frames = rec.render()
    illumination = vision.fit_illumination(frames[0])
    dark = vision.dark_level(frames[0])
    pair = vision.find_sessile_pair(vision.transmission(frames[0], illumination, dark))
    result = vision.measure_bridges(
        frames, pair, illumination=illumination, dark=dark, noise=0.01, levels=(0.4, 0.6)
    )
    return pair, result


@pytest.mark.parametrize(
    ("theta", "kind", "reflectivity"),
    [(40.0, "inertial", 0.0), (70.0, "viscous", 0.0), (40.0, "viscous", 0.5)],
)
def test_bridge_height_within_half_a_pixel(theta, kind, reflectivity):
    rec = _recording(theta, kind, reflectivity=reflectivity)
    pair, result = _measured(rec)
    truth = rec.truth.radius / PIXEL
    names = np.array(vision.STATUS_NAMES)[result.status]
    ok = names == "ok"
    rms = float(np.sqrt(np.mean((result.radius[ok] - truth[ok]) ** 2)))
    assert rms <= 0.5, rms
    # Every frame with a bridge of 4 px and more is measured ok.
    assert (names[truth >= 4.0] == "ok").all()
    # Frames whose footprints are still more than 1.5 px apart are before contact.
    assert (names[rec.truth.gap / PIXEL > 1.5] == "before-contact").all()
    # The footprints and the caps' circles agree with the scene.
    sphere = FOOTPRINT / np.sin(np.radians(theta)) / PIXEL
    assert np.allclose(pair.footprints, FOOTPRINT / PIXEL, atol=0.5)
    assert np.allclose([c.radius for c in pair.caps], sphere, rtol=0.01)
    # The other edge levels bracket the main one where measured.
    both = ok & np.isfinite(result.level_radius).all(axis=1)
    assert (result.level_radius[both, 0] <= result.radius[both] + 0.05).all()
    assert (result.level_radius[both, 1] >= result.radius[both] - 0.05).all()


def test_a_frame_without_two_drops_is_refused():
    trans = np.ones((80, 200))
    trans[60:] = 0.2  # a plate, nothing on it
    with pytest.raises(MeasurementError):
        vision.find_sessile_pair(trans)
