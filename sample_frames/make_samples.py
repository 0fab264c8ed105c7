"""Make the four synthetic sample recordings in this folder (deterministic, seeded).

Run from anywhere with the project installed::

    python sample_frames/make_samples.py            # writes next to this script
    python sample_frames/make_samples.py --out DIR  # or somewhere else

Every scenario is invented; the truth of each recording (true radius per frame,
contact instant) is written beside it by dropkin.synth. Material values and
their status labels (C computed, M from memory) are those of docs/physics.md.
"""

from __future__ import annotations

import argparse
import math
import time
from pathlib import Path

from dropkin import synth

HERE = Path(__file__).resolve().parent


def viscous_pair() -> synth.SyntheticRecording:
    """(a) Two glycerol-water drops (85 wt %, 21 degC) merging in air; zoomed on the neck.

    The neck opens at a constant speed set by the capillary velocity gamma/eta
    (the inertially limited viscous regime, docs/physics.md A2, r = C (gamma/eta) t,
    with C = 1 assumed), up to about a third of the drop radius. Zoomed so
    that the drop radius is 400 px: a neck beside a gap of less than three
    blur widths cannot be resolved, which in side view hides r below
    sqrt(3 sigma R), here 35 px, so the drops must be large in the image.
    """
    liquid = synth.Liquid(
        name="glycerol-water",
        glycerol_mass_fraction=0.85,
        temperature=294.15,
        surface_tension=65e-3,  # assumed (M): between water 72.7 and glycerol 63.4 mN/m
        viscosity=103.7e-3,  # Cheng (2008) formula at 85 wt %, 21 degC (C)
        density=1221.0,  # Volk & Kaehler (2018) formula at 85 wt %, 21 degC (C)
    )
    speed = liquid.surface_tension / liquid.viscosity  # capillary velocity, m/s
    law = synth.power_law(prefactor=1.0 * speed, exponent=1.0, name="inertially-limited-viscous")
    return synth.synthesize(
        synth.Coalescence(drop_radius=1e-3, angle_deg=0.0),
        law,
        camera=synth.Camera(frame_rate=100e3, pixel_size=2.5e-6, shape=(352, 320)),
        frames=60,
        contact_frame=4.4,
        optics=synth.Optics(blur_px=1.0, dust_count=3),
        sensor=synth.Sensor(bit_depth=8, full_well=20000 / 0.6**2, read_noise=6.0),
        liquid=liquid,
        seed=101,
    )


def fast_pair() -> synth.SyntheticRecording:
    """(b) Two water drops (20 degC) merging fast, one above the other, on a needle."""
    liquid = synth.Liquid()  # water at 20 degC, docs/physics.md 5.1 (C)
    law = synth.inertial_law(
        surface_tension=liquid.surface_tension, density=liquid.density, drop_radius=1e-3
    )  # D0 = 1.0, an assumed value
    return synth.synthesize(
        synth.Coalescence(drop_radius=1e-3, angle_deg=-90.0, needle_width=0.3e-3),
        law,
        camera=synth.Camera(frame_rate=60e3, pixel_size=20e-6, shape=(224, 144)),
        frames=60,
        contact_frame=4.5,
        optics=synth.Optics(blur_px=1.2, gradient=0.15, vignette=0.2),
        sensor=synth.Sensor(bit_depth=12, full_well=20000 / 0.25**2, read_noise=2.5),
        liquid=liquid,
        seed=202,
    )


def spreading_drop() -> synth.SyntheticRecording:
    """(c) A drop of a 10 cSt silicone-oil-like liquid (25 degC) spreading on a glossy plate."""
    liquid = synth.Liquid(
        name="silicone-oil-10cSt",
        temperature=298.15,
        surface_tension=20.1e-3,  # typical data sheet value (M)
        viscosity=9.35e-3,  # 10 cSt x 0.935 g/cm^3 (M)
        density=935.0,  # (M)
    )
    law = synth.inertial_spreading_law(
        surface_tension=liquid.surface_tension, density=liquid.density, drop_radius=1e-3
    )  # C = 1.2, an assumed value
    return synth.synthesize(
        synth.Spreading(drop_radius=1e-3, reflectivity=0.5, substrate_row_px=163.5),
        law,
        camera=synth.Camera(frame_rate=25e3, pixel_size=14e-6, shape=(224, 320)),
        frames=80,
        contact_frame=5.3,
        optics=synth.Optics(blur_px=1.0, gradient=0.08, vignette=0.12, dust_count=4),
        sensor=synth.Sensor(bit_depth=8, full_well=20000 / 0.5**2, read_noise=5.0),
        liquid=liquid,
        seed=303,
    )


def sessile_pair() -> synth.SyntheticRecording:
    """(d) Two water drops (20 degC) on a glossy plate, contact angle 50 degrees, merging.

    Side view along the plate: the bridge between the caps rises as h ∝ t^(2/3)
    (Phys. Rev. Lett. 111, 144502 (2013); the prefactor (γθ⁴/ρ)^(1/3) with
    C = 1 is an assumed value, its angle dependence from memory).
    """
    liquid = synth.Liquid()  # water at 20 degC, docs/physics.md 5.1 (C)
    theta = 50.0
    law = synth.sessile_law(
        "inertial",
        surface_tension=liquid.surface_tension,
        viscosity=liquid.viscosity,
        density=liquid.density,
        theta_deg=theta,
    )
    return synth.synthesize(
        synth.SessileCoalescence(
            drop_radius=0.25e-3, contact_angle_deg=theta, reflectivity=0.5, substrate_row_px=45.5
        ),
        law,
        camera=synth.Camera(frame_rate=300e3, pixel_size=5e-6, shape=(64, 232)),
        frames=44,
        contact_frame=4.5,
        optics=synth.Optics(blur_px=1.0, gradient=0.05),
        sensor=synth.Sensor(bit_depth=8, full_well=20000 / 0.2**2, read_noise=1.0),
        liquid=liquid,
        seed=404,
    )


SAMPLES = {
    "viscous_pair": (viscous_pair, "viscous_pair"),
    "fast_pair": (fast_pair, "fast_pair.tif"),
    "spreading_drop": (spreading_drop, "spreading_drop"),
    "sessile_pair": (sessile_pair, "sessile_pair"),
}


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=HERE, help="Folder to write into.")
    args = parser.parse_args(argv)
    for name, (build, target) in SAMPLES.items():
        start = time.perf_counter()
        recording = build()
        written = synth.write_recording(
            recording, args.out / target, overwrite=True, png_compression=9
        )
        truth = recording.truth
        after = truth.time_since_contact[truth.time_since_contact > 0]
        radius_px = truth.radius[truth.time_since_contact > 0] / recording.camera.pixel_size
        print(
            f"{name}: {recording.frames} frames -> {written.frames.name}"
            f" ({time.perf_counter() - start:.1f} s); after contact"
            f" {after[0]:.3g}..{after[-1]:.3g} s ({math.log10(after[-1] / after[0]):.2f} decades),"
            f" radius {radius_px[0]:.1f}..{radius_px[-1]:.1f} px"
        )


if __name__ == "__main__":
    main()
