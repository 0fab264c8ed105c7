"""Geometry of the scenes: bridge fillet tangency and the spherical cap of fixed volume."""

import math

import pytest
from scipy import integrate

from dropkin.synth import bridge_fillet, cap_height, cap_sphere


@pytest.mark.parametrize(
    ("r1", "r2", "neck"),
    [(50, 50, 10), (50, 50, 45), (60, 25, 5), (60, 25, 20), (25, 60, 12), (80, 79, 0.5)],
)
def test_fillet_is_tangent_to_both_drops_and_touches_the_neck(r1, r2, neck):
    # Analytic geometry: two circles are externally tangent iff the distance of their
    # centres equals the sum of their radii; the tangent point lies on that segment.
    b = bridge_fillet(r1, r2, neck)
    d = r1 + r2
    rho = b.fillet_radius
    assert math.hypot(b.centre_u, b.centre_v) == pytest.approx(r1 + rho, rel=1e-12)
    assert math.hypot(b.centre_u - d, b.centre_v) == pytest.approx(r2 + rho, rel=1e-12)
    assert b.centre_v - rho == pytest.approx(neck, rel=1e-12)  # closest approach to the axis
    assert math.hypot(b.tangent_u1, b.tangent_v1) == pytest.approx(r1, rel=1e-12)
    assert math.hypot(b.tangent_u2 - d, b.tangent_v2) == pytest.approx(r2, rel=1e-12)
    assert math.hypot(b.tangent_u1 - b.centre_u, b.tangent_v1 - b.centre_v) == pytest.approx(rho)
    assert b.tangent_u1 < b.centre_u < b.tangent_u2


def test_equal_drops_fillet_radius_is_r_squared_over_two_r_minus_r():
    # The formula for equal drops touching at a point: rho = r^2 / (2 (R - r)).
    for neck in (1.0, 10.0, 30.0):
        assert bridge_fillet(50.0, 50.0, neck).fillet_radius == pytest.approx(
            neck**2 / (2 * (50.0 - neck)), rel=1e-12
        )


def test_fillet_refuses_a_neck_as_wide_as_the_smaller_drop():
    with pytest.raises(ValueError, match="neck must lie between 0 and the smaller radius 20"):
        bridge_fillet(50.0, 20.0, 20.0)


@pytest.mark.parametrize("contact_radius", [0.0, 0.05, 0.5, 1.0, 2.0, 5.0])
def test_cap_has_the_volume_of_the_drop(contact_radius):
    # Volume by slicing (scipy quad of pi (R_s^2 - (z - z_c)^2) over 0..h), against the
    # unit sphere's 4/3 pi; and the cap-volume formula V = pi h (3 a^2 + h^2) / 6.
    volume = 4 / 3 * math.pi
    h = cap_height(volume, contact_radius)
    assert math.pi * h * (3 * contact_radius**2 + h**2) / 6 == pytest.approx(volume, rel=1e-12)
    sphere, zc = cap_sphere(volume, contact_radius)
    sliced, _ = integrate.quad(lambda z: math.pi * (sphere**2 - (z - zc) ** 2), 0.0, h)
    assert sliced == pytest.approx(volume, rel=1e-10)
    # The sphere passes through the contact line.
    assert math.hypot(contact_radius, zc) == pytest.approx(sphere, rel=1e-12)


def test_cap_of_zero_contact_radius_is_the_whole_sphere():
    sphere, zc = cap_sphere(4 / 3 * math.pi * 2.0**3, 0.0)
    assert sphere == pytest.approx(2.0, rel=1e-12)
    assert zc == pytest.approx(2.0, rel=1e-12)
