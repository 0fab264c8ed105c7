"""Contact radius of a spreading drop seen from the side at small contact angles.

At 10 degrees the outline meets the substrate line at a slope of 0.18: an
error of the outline's height near the line moves the contact point by about
5.7 times as much along it. References, all outside the code under test:

- ``dropkin.synth``: a spherical cap of fixed volume rendered from exact pixel
  coverage, blurred by a Gaussian of known sigma, noised and quantised; its
  contact radius comes from the geometry alone.
- Analytic geometry of a spherical cap (volume ``pi h (3 a**2 + h**2) / 6``,
  angle ``theta = 2 atan(h / a)``), solved for the contact radius with
  ``scipy.optimize.brentq``.
- The profile of a Gaussian-blurred step averaged over a pixel, in closed form
  from ``scipy.special.ndtr`` (the pixel's integral of ``Phi``).
"""

import math

import numpy as np
import pytest
from scipy import optimize, special

from dropkin import synth
from dropkin.synth import RadiusLaw
from dropkin.vision import dark_level, fit_illumination, transmission
from dropkin.vision._spreading import (
    find_spreading_drop,
    measure_contact_lines,
    spreading_background_mask,
)
from dropkin.vision._strip import first_change_upward, probit_rise

PIXEL = 10e-6  # m; every length below is in pixels of this size
RATE = 1e4  # Hz


def _cap_contact_radius(drop, theta_deg):
    """Contact radius (px) of a spherical cap of the volume of a sphere of radius `drop`."""
    slope = math.tan(math.radians(theta_deg) / 2)
    volume = 4 / 3 * math.pi * drop**3

    def excess(a):
        h = a * slope
        return math.pi * h * (3 * a * a + h * h) / 6 - volume

    return optimize.brentq(excess, 1e-3, 100 * drop)


def _cap_bias(theta_deg, *, drop=45.0, blur=1.0, below_pixel_edge=0.0, frames=9, seed=3):
    """Mean error (px) of the measured contact radius of a still cap, over `frames` - 1
    frames (the first, before contact, prepares the measurement)."""
    a = _cap_contact_radius(drop, theta_deg)
    shape = (int(2 * drop + 40), int(2 * a + 60))
    law = RadiusLaw("still cap", lambda t: np.full(np.shape(t), a * PIXEL))
    setup = synth.Spreading(
        view="side",
        drop_radius=drop * PIXEL,
        substrate_row_px=shape[0] - 25 + below_pixel_edge,
        spot_fraction=0.0,
    )
    rec = synth.synthesize(
        setup,
        law,
        camera=synth.Camera(RATE, PIXEL, shape),
        frames=frames,
        contact_frame=0.5,
        optics=synth.Optics(blur_px=blur),
        seed=seed,
        sensor=synth.Sensor(bit_depth=12, full_well=20000.0),
    )
    raw = rec.render()
    first = raw[0].astype(np.float64)
    dark = dark_level(first)
    illumination = fit_illumination(first)
    found = find_spreading_drop(transmission(first, illumination, dark), view="side")
    illumination = fit_illumination(
        first, background=spreading_background_mask(first.shape, found)
    )
    found = find_spreading_drop(transmission(first, illumination, dark), view="side")
    corner = transmission(first[:12, :12], illumination[:12, :12], dark)
    noise = float(np.std(np.diff(corner, axis=1)) / math.sqrt(2))
    result = measure_contact_lines(
        raw[1:], found, illumination=illumination, dark=dark, noise=noise
    )
    truth = np.array([rec.scene(i).contact_radius_px for i in range(1, frames)])
    assert np.all(np.isfinite(result.radius))
    return float(np.mean(result.radius - truth))


@pytest.mark.parametrize("below_pixel_edge", [0.0, 0.5])
def test_contact_radius_at_10_degrees_is_unbiased(below_pixel_edge):
    # Before the strip reached past the contact points and the crossings were
    # placed on the blurred step's profile, this case measured -0.36 to
    # -0.45 px; after, -0.01 to -0.07 px over 32 frames at four places of the
    # line inside its pixel, most of it the substrate line's own error (a
    # few thousandths of a pixel, divided by tan 10 degrees).
    bias = _cap_bias(10.0, below_pixel_edge=below_pixel_edge)
    print(f"10 deg cap, line {below_pixel_edge} px below a pixel edge: bias {bias:+.3f} px")
    assert abs(bias) <= 0.12


def test_contact_radius_at_20_and_70_degrees_is_unbiased():
    biases = [_cap_bias(theta) for theta in (20.0, 70.0)]
    print(f"cap bias: 20 deg {biases[0]:+.3f} px, 70 deg {biases[1]:+.3f} px")
    assert abs(biases[0]) <= 0.05
    assert abs(biases[1]) <= 0.03


def _pixel_step(centres, edge, sigma):
    """Pixel averages of Phi((y - edge) / sigma) over [y - 1/2, y + 1/2] (closed form)."""

    def primitive(y):
        z = (y - edge) / sigma
        return sigma * (z * special.ndtr(z) + np.exp(-0.5 * z * z) / math.sqrt(2 * math.pi))

    return primitive(centres + 0.5) - primitive(centres - 0.5)


@pytest.mark.parametrize("sigma", [0.5, 1.0, 1.5])
def test_crossing_on_the_blurred_profile_does_not_depend_on_the_pixel_phase(sigma):
    # A column rising from the drop (0) to the background (1) across an edge at
    # every tenth of a pixel; the pixel's own averaging widens the profile to
    # about sqrt(sigma**2 + 1/12), which the interpolation in Phi^-1 absorbs.
    edges = 6.0 + np.arange(10) / 10.0
    samples = np.arange(14, dtype=np.float64)
    column = np.stack([_pixel_step(samples, e, sigma) for e in edges])[:, :, None]
    thr = np.full_like(column, 0.5)
    linear = first_change_upward(column, thr)[:, 0]
    refined = probit_rise(column, thr, first_change_upward(column, thr), 0.0, 0.5, sigma)[:, 0]
    print(
        f"sigma {sigma}: linear interpolation errs up to {np.abs(linear - edges).max():.4f} px, "
        f"on the profile {np.abs(refined - edges).max():.4f} px"
    )
    assert np.abs(refined - edges).max() <= 0.004
