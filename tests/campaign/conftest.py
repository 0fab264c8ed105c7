"""A synthetic campaign: a viscosity series of five recordings and one corrupt file.

Invented scenario: glycerol-water-like drops of R = 1 mm whose viscosity goes
from 50 to 250 mPa s, filmed so that the neck grows about 2.5 px per frame in
each. Every neck follows the inertially limited viscous law of docs/physics.md A2,
r = C (gamma / eta) t with C = 1 (the value the recordings are made with), so
on the regime's own scales (r / R against t / tau_v, tau_v = eta R / gamma)
all five fall on the line r / R = t / tau_v.
"""

from __future__ import annotations

import json
from pathlib import Path
from types import SimpleNamespace

import pytest

from dropkin import synth

SURFACE_TENSION = 65e-3  # N/m (invented sample)
DENSITY = 1221.0  # kg/m^3 (invented sample)
DROP_RADIUS = 1e-3  # m
PIXEL = 2.5e-6  # m
VISCOSITIES = (0.05, 0.08, 0.12, 0.18, 0.25)  # Pa s
TRUE_PREFACTOR = 1.0  # C of the law the recordings are made with
GROWTH_PX_PER_FRAME = 2.5


def _render(viscosity: float, seed: int):
    speed = SURFACE_TENSION / viscosity
    frame_rate = speed / (GROWTH_PX_PER_FRAME * PIXEL)
    law = synth.power_law(
        prefactor=TRUE_PREFACTOR * speed, exponent=1.0, name="inertially-limited-viscous"
    )
    liquid = synth.Liquid(
        name="campaign-liquid",
        surface_tension=SURFACE_TENSION,
        viscosity=viscosity,
        density=DENSITY,
    )
    return synth.synthesize(
        synth.Coalescence(drop_radius=DROP_RADIUS),
        law,
        camera=synth.Camera(frame_rate=frame_rate, pixel_size=PIXEL, shape=(352, 320)),
        frames=64,
        contact_frame=4.3 + 0.1 * seed,
        optics=synth.Optics(blur_px=1.0),
        sensor=synth.Sensor(bit_depth=8, full_well=20000 / 0.6**2, read_noise=4.0),
        liquid=liquid,
        seed=seed,
    ), frame_rate


def write_manifest(folder: Path, entries: list[str], *, bootstrap: int = 40) -> Path:
    text = [
        "[campaign]",
        'name = "invented viscosity series"',
        "",
        "[shared]",
        'recording = { pixel_size = "2.5 um" }',
        'setup = { geometry = "coalescence", view = "side" }',
        (
            f'liquid = {{ surface_tension = "{SURFACE_TENSION * 1e3} mN/m", '
            f'density = "{DENSITY} kg/m^3" }}'
        ),
        f'drops = {{ radius = "{DROP_RADIUS * 1e3} mm" }}',
        f"analysis = {{ bootstrap = {bootstrap}, overlays = 2, seed = 7 }}",
        "",
        *entries,
    ]
    path = folder / "campaign.toml"
    path.write_text("\n".join(text) + "\n", encoding="utf-8")
    return path


@pytest.fixture(scope="session")
def viscosity_campaign(tmp_path_factory):
    """The folder, its manifest and the truth: five good recordings and a corrupt one.

    Also carries the constants and ``write_manifest`` for the tests.
    """
    folder = tmp_path_factory.mktemp("campaign")
    entries = []
    truth = {}
    for i, viscosity in enumerate(VISCOSITIES):
        label = f"mu{round(viscosity * 1e3):03d}"
        rec, frame_rate = _render(viscosity, seed=11 + i)
        written = synth.write_recording(rec, folder / f"{label}.tif")
        # The manifest, not a file beside the recording, describes the sample.
        Path(written.experiment).unlink()
        truth[label] = {"viscosity": viscosity, "contact_time": rec.truth.contact_time}
        entries += [
            "[[recordings]]",
            f'path = "{label}.tif"',
            f'recording = {{ frame_rate = "{frame_rate!r} Hz" }}',
            f'liquid = {{ viscosity = "{viscosity * 1e3} mPa*s" }}',
            "",
        ]
    # The corrupt one: a good recording cut to a third of its bytes.
    good = (folder / "mu050.tif").read_bytes()
    (folder / "cut.tif").write_bytes(good[: len(good) // 3])
    entries += [
        "[[recordings]]",
        'path = "cut.tif"',
        'recording = { frame_rate = "100 kHz" }',
        'liquid = { viscosity = "100 mPa*s" }',
        "",
    ]
    manifest = write_manifest(folder, entries)
    (folder / "truth.json").write_text(json.dumps(truth), encoding="utf-8")
    return SimpleNamespace(
        folder=folder,
        manifest=manifest,
        truth=truth,
        good=sorted(truth),
        viscosities=VISCOSITIES,
        true_prefactor=TRUE_PREFACTOR,
        write_manifest=write_manifest,
    )
