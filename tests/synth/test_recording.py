"""Truth of a synthetic recording against the law, and the scenes built from it."""

import math

import numpy as np
import pytest

from dropkin.errors import ExperimentError
from dropkin.synth import (
    Camera,
    Coalescence,
    Spreading,
    cap_sphere,
    inertial_law,
    power_law,
    synthesize,
    viscous_law,
)

GAMMA, RHO, R = 72.74e-3, 998.2, 1e-3


def test_truth_follows_the_law_with_a_sub_frame_contact():
    # docs/physics.md A3 written out here: r = D0 (gamma R / rho)^(1/4) t^(1/2), D0 = 1.
    rate, contact = 2e4, 3.4
    law = inertial_law(surface_tension=GAMMA, density=RHO, drop_radius=R)
    rec = synthesize(
        Coalescence(drop_radius=R),
        law,
        camera=Camera(frame_rate=rate, pixel_size=20e-6, shape=(64, 96)),
        frames=12,
        contact_frame=contact,
    )
    truth = rec.truth
    k = np.arange(12)
    np.testing.assert_allclose(truth.frame_times, k / rate, rtol=0, atol=1e-15)
    assert truth.contact_time == pytest.approx(contact / rate, rel=1e-15)
    since = k / rate - contact / rate
    expected = np.where(since > 0, (GAMMA * R / RHO) ** 0.25 * np.sqrt(np.abs(since)), 0.0)
    np.testing.assert_allclose(truth.radius, expected, rtol=1e-12, atol=0)
    assert truth.radius[3] == 0 and truth.radius[4] > 0
    # The first frame after contact is 0.6 frame intervals after it.
    assert truth.radius[4] == pytest.approx((GAMMA * R / RHO) ** 0.25 * math.sqrt(0.6 / rate))


def test_gap_closes_at_constant_speed_and_the_contact_point_stays():
    rate, px = 1e4, 10e-6
    rec = synthesize(
        Coalescence(drop_radius=0.2e-3, angle_deg=30.0, approach_speed=0.02),
        power_law(prefactor=0.002, exponent=0.5),
        camera=Camera(frame_rate=rate, pixel_size=px, shape=(80, 120)),
        frames=8,
        contact_frame=2.5,
    )
    np.testing.assert_allclose(rec.truth.gap[:3], 0.02 * np.array([2.5, 1.5, 0.5]) / rate)
    assert np.all(rec.truth.gap[3:] == 0)
    for index in range(8):
        scene = rec.scene(index)
        (r1, c1), (r2, c2) = scene.centre_1_px, scene.centre_2_px
        distance = math.hypot(r2 - r1, c2 - c1)
        assert distance == pytest.approx(40.0 + rec.truth.gap[index] / px, rel=1e-12)
        # Midway between the surfaces along the axis: the image centre (39.5, 59.5).
        ar, ac = (r2 - r1) / distance, (c2 - c1) / distance
        half = 20.0 + rec.truth.gap[index] / px / 2
        assert (r1 + half * ar, c1 + half * ac) == pytest.approx((39.5, 59.5))
        # Angle 30 deg counter-clockwise from +col: drop 2 is up (smaller row) and right.
        assert math.degrees(math.atan2(-(r2 - r1), c2 - c1)) == pytest.approx(30.0)
        assert scene.neck_px == pytest.approx(rec.truth.radius[index] / px)


def test_spreading_drop_hangs_above_the_plate_then_becomes_a_cap():
    px, rate = 10e-6, 1e4
    rec = synthesize(
        Spreading(drop_radius=0.3e-3),
        power_law(prefactor=0.05, exponent=0.5),
        camera=Camera(frame_rate=rate, pixel_size=px, shape=(100, 100)),
        frames=6,
        contact_frame=1.7,
    )
    before = rec.scene(0)
    assert before.sphere_radius_px == pytest.approx(30.0)
    assert before.centre_height_px == pytest.approx(30.0 + rec.truth.gap[0] / px)
    assert before.contact_radius_px == 0
    after = rec.scene(4)
    volume = 4 / 3 * math.pi * 0.3e-3**3
    sphere, height = cap_sphere(volume, rec.truth.radius[4])
    assert after.sphere_radius_px == pytest.approx(sphere / px)
    assert after.centre_height_px == pytest.approx(height / px)
    assert after.contact_radius_px == pytest.approx(rec.truth.radius[4] / px, rel=1e-9)


def test_bottom_view_of_spreading_uses_the_drop_outline():
    rec = synthesize(
        Spreading(view="bottom", drop_radius=0.3e-3),
        power_law(prefactor=0.05, exponent=0.5),
        camera=Camera(frame_rate=1e4, pixel_size=10e-6, shape=(80, 80)),
        frames=4,
        contact_frame=0.5,
    )
    assert rec.scene(0).contact_radius_px == 0
    assert rec.scene(0).outline_radius_px == pytest.approx(30.0)
    later = rec.scene(3)
    assert later.contact_radius_px == pytest.approx(rec.truth.radius[3] / 10e-6)
    assert later.outline_radius_px >= later.contact_radius_px


def test_unequal_drops_use_the_harmonic_radius():
    setup = Coalescence(drop_radius=1e-3, second_radius=0.5e-3)
    assert setup.effective_radius == pytest.approx(2 * 1e-3 * 0.5e-3 / 1.5e-3)
    assert setup.volume == pytest.approx(4 / 3 * math.pi * (1e-9 + 0.125e-9))


def _camera():
    return Camera(frame_rate=1e4, pixel_size=10e-6, shape=(64, 64))


def test_contact_must_lie_within_the_recording():
    law = power_law(prefactor=0.01, exponent=0.5)
    with pytest.raises(ExperimentError, match="contact_frame = 10: must lie within"):
        synthesize(Coalescence(), law, camera=_camera(), frames=10, contact_frame=10)


def test_neck_may_not_reach_the_drop_radius():
    law = power_law(prefactor=1.0, exponent=0.5)  # 10 mm after 0.1 ms
    with pytest.raises(ExperimentError, match="frame 1: law = 'power': reaches the smaller"):
        synthesize(Coalescence(drop_radius=1e-4), law, camera=_camera(), frames=5, contact_frame=0)


def test_viscous_law_past_its_peak_is_refused():
    law = viscous_law(surface_tension=0.063, viscosity=1.4, drop_radius=1e-3)  # tau = 22 ms
    with pytest.raises(ExperimentError, match="stops describing a growing radius"):
        synthesize(Coalescence(), law, camera=_camera(), frames=200, contact_frame=0)


def test_unknown_view_is_refused():
    with pytest.raises(ExperimentError, match="view = 'top': is not a known view"):
        synthesize(
            Coalescence(view="top"),
            power_law(prefactor=0.01, exponent=0.5),
            camera=_camera(),
            frames=3,
            contact_frame=1,
        )


def test_bottom_view_of_sessile_drops_is_the_bridged_footprint_pair(flat_optics, exact_sensor):
    from skimage import measure

    rec = synthesize(
        Coalescence(view="bottom", drop_radius=0.3e-3, needle_width=0.1e-3),
        power_law(prefactor=0.01, exponent=0.5),
        camera=Camera(frame_rate=1e4, pixel_size=10e-6, shape=(80, 140)),
        frames=4,
        contact_frame=0.5,
        optics=flat_optics,
        sensor=exact_sensor,
    )
    assert rec.scene(3).needle_width_px == 0  # no needle seen from below
    frames = rec.render()
    # skimage: one dark region (the two footprints joined by the bridge), clear of the
    # top edge, whose narrowest column is the bridge width 2 r to within +-1 px plus the
    # fillet sagitta (see test_coverage).
    regions = measure.regionprops(measure.label(frames[3] < 127.5))
    assert len(regions) == 1 and regions[0].bbox[0] > 0
    r_px = rec.truth.radius[3] / 10e-6
    rho = r_px**2 / (2 * (30.0 - r_px))  # equal drops: rho = r^2 / (2 (R - r))
    sagitta = 2 * (rho - math.sqrt(rho**2 - 0.25))  # contact at col 69.5, half a pixel off
    column = int((frames[3][:, 69] < 127.5).sum())
    assert 2 * r_px - 1 <= column <= 2 * r_px + 1 + sagitta


def test_synth_shares_no_code_with_vision_or_measure():
    # The design's wall: the truth must not be computed by the code it checks.
    import ast
    from pathlib import Path

    import dropkin.synth

    for path in Path(dropkin.synth.__file__).parent.glob("*.py"):
        tree = ast.parse(path.read_text())
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom):
                name = ("." * node.level) + (node.module or "")
            elif isinstance(node, ast.Import):
                name = " ".join(alias.name for alias in node.names)
            else:
                continue
            assert "vision" not in name and "measure" not in name, (path.name, name)
