"""Bright drops on a dark field: which way a frame is lit, the signed span, the
drops' own level and the edge width, checked against scikit-image and scipy.

References: skimage.util.invert (the inverse of an image in its dtype's range),
skimage.measure.find_contours (the half-way outline), skimage.draw.disk,
scipy.ndimage.gaussian_filter (the blur whose sigma the edge width must give).
The frames whose contrast is told come from :mod:`dropkin.synth`, which knows
how it lit them, and from the shipped sample of a zoomed-in viscous pair.
"""

from pathlib import Path

import numpy as np
import pytest
from scipy import ndimage
from skimage import draw, util
from skimage import measure as skmeasure

from dropkin import synth, vision
from dropkin.recording import open_recording

SAMPLES = Path(__file__).resolve().parents[2] / "sample_frames"
LAW = synth.inertial_law(surface_tension=0.072, density=998.0, drop_radius=1e-3)
CAMERA = synth.Camera(2e5, 15e-6, (300, 360))


def _backlit_frame():
    rec = synth.synthesize(
        synth.Coalescence(drop_radius=1e-3),
        LAW,
        camera=CAMERA,
        frames=8,
        contact_frame=4.6,
        optics=synth.Optics(dust_count=3),
        seed=2,
    )
    return rec.render()[-1]


def test_inverted_frame_has_the_same_transmission_and_outline():
    # skimage.util.invert turns a backlit frame into bright drops on a dark
    # field (255 - x for 8 bits); with the field and drop levels inverted too,
    # the signed span gives the same transmission, hence the same outline.
    frame = _backlit_frame()
    light = vision.fit_illumination(frame)
    dark = vision.dark_level(frame)
    inverse = util.invert(frame)
    assert inverse.dtype == np.uint8 and int(inverse[0, 0]) == 255 - int(frame[0, 0])
    inv_light = vision.fit_illumination(inverse, contrast="bright-drops")
    inv_dark = vision.dark_level(inverse, contrast="bright-drops")
    assert np.allclose(inv_light, 255.0 - light, atol=1e-6)
    assert inv_dark == 255.0 - dark
    assert (vision.light_span(inv_light, inv_dark) < 0).all()
    t = vision.transmission(frame, light, dark)
    t_inv = vision.transmission(inverse, inv_light, inv_dark)
    assert np.allclose(t, t_inv, atol=1e-5)
    ours = max(skmeasure.find_contours(t_inv, 0.5), key=len)
    ref = max(skmeasure.find_contours(t, 0.5), key=len)
    assert ours.shape == ref.shape and np.abs(ours - ref).max() < 1e-3


def _first_and_last(setup, contrast, glow=0.0):
    rec = synth.synthesize(
        setup,
        LAW,
        camera=CAMERA,
        frames=20,
        contact_frame=4.6,
        optics=synth.Optics(contrast=contrast, glow=glow),
        seed=1,
    )
    frames = rec.render()
    return frames[0], frames[-1]


SETUPS = {
    "pair-side": synth.Coalescence(drop_radius=1e-3),
    "pair-tilted-unequal": synth.Coalescence(drop_radius=1e-3, second_radius=0.7e-3, angle_deg=35),
    "pair-bottom": synth.Coalescence(view="bottom", drop_radius=1e-3),
    "spreading-side": synth.Spreading(drop_radius=1e-3),
    "sessile-side": synth.SessileCoalescence(drop_radius=1e-3),
}


@pytest.mark.parametrize("name", list(SETUPS))
@pytest.mark.parametrize(
    ("contrast", "glow"), [("dark-drops", 0.0), ("bright-drops", 0.0), ("bright-drops", 0.6)]
)
def test_contrast_told_from_the_frame_as_synth_lit_it(name, contrast, glow):
    for frame in _first_and_last(SETUPS[name], contrast, glow):
        told, vote, share = vision.frame_contrast(frame)
        assert told == contrast
        # told by the outlines, clearly, not by the fallback
        assert abs(vote) >= 0.3
        assert 0.0 < share < 1.0


def test_a_zoomed_in_pair_filling_the_frame_is_told_by_its_outlines():
    # The shipped viscous pair: two backlit drops fill the sides of the frame
    # (91 % of it dark); the histogram alone would call them bright drops.
    rec = open_recording(SAMPLES / "viscous_pair", frame_rate=1e5, pixel_size=2.5e-6)
    frame = rec[0]
    told, vote, share = vision.frame_contrast(frame)
    assert share < 0.2 and told == "dark-drops" and vote > 0.5
    assert vision.frame_contrast(util.invert(frame))[0] == "bright-drops"


def test_the_fallback_decides_when_the_outlines_are_straight():
    # A dark band across the frame: straight outlines, no vote; three bright
    # sides call it a backlight, and its inverse a dark field.
    frame = np.full((60, 80), 200, np.uint8)
    frame[25:35, :] = 20
    told, vote, _ = vision.frame_contrast(frame)
    assert abs(vote) < 0.2 and told == "dark-drops"
    assert vision.frame_contrast(util.invert(frame))[0] == "bright-drops"


def test_drop_level_is_read_just_inside_the_outline():
    # A disc (skimage.draw.disk, radius 30) brighter towards its centre: 100
    # at its outline plus 2 per pixel inward. The level 4-8 px inside is the
    # median there: 100 + 2 x 6 = 112 give or take the pixel grid, not the
    # brightest 160.
    frame = np.full((100, 100), 10.0)
    rr, cc = draw.disk((50, 50), 30, shape=frame.shape)
    depth = 30.0 - np.hypot(rr - 50, cc - 50)
    frame[rr, cc] = 100.0 + 2.0 * depth
    trans = vision.transmission(frame, np.full(frame.shape, 10.0), float(frame.max()))
    level = vision.rim_level(frame, trans)
    assert level == pytest.approx(112.0, abs=2.5)
    assert vision.rim_level(frame[:8, :8], trans[:8, :8]) is None  # too few pixels


def test_edge_width_from_each_edge_own_step():
    # Two discs blurred by scipy's Gaussian (sigma 1.3 px), brighter on one
    # side than the other (a step of 0.5 to 1 of the transmission): the
    # width read from each edge's own step is the blur's sigma (with the
    # pixel's own averaging, sqrt(1.3^2 + 1/12)), the unit-step reading is not.
    sigma = 1.3
    shape = (160, 260)
    rows, cols = np.mgrid[0 : shape[0], 0 : shape[1]]
    inside = np.zeros(shape)
    for centre in ((80, 75), (80, 185)):
        rr, cc = draw.disk(centre, 50, shape=shape)
        inside[rr, cc] = 1.0
    step = 0.5 + 0.5 * cols / (shape[1] - 1)  # the drops' level changes across
    trans = ndimage.gaussian_filter(1.0 - inside * step, sigma)
    pair = vision.find_drop_pair(trans.astype(np.float32))
    expected = np.hypot(sigma, 1 / np.sqrt(12))
    own = vision.edge_blur(trans, pair, own_step=True)
    assert own == pytest.approx(expected, rel=0.1)
    assert vision.edge_blur(trans, pair) > 1.2 * expected


def test_light_span_keeps_its_sign_away_from_zero():
    # Bright drops (level 90) on a dark field: the span is negative; where
    # the field model is not below the drops' level it is held at -1e-6
    # (the mean over the array decides the side).
    span = vision.light_span(np.array([[5.0, 90.0, 100.0]]), 90.0)
    assert span.dtype == np.float32
    assert span[0, 0] == -85.0 and (span[0, 1:] == np.float32(-1e-6)).all()
    backlit = vision.light_span(np.array([100.0, 3.0, 2.0]), 3.0)
    assert backlit[0] == 97.0 and backlit[1] > 0 and backlit[2] > 0
