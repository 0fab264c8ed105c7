"""Sessile-drop coalescence end to end: synthetic recording -> ``dropkin analyze``.

Issue 14's check: side view (bridge height) and bottom view (bridge width) at
two contact angles; measured bridge RMS at most 0.5 px on the frames measured
``ok``, fitted exponent within ±0.03 of the one the recording was made with,
and the right regime named. The reference is the synthetic truth
(``truth.json``, dropkin.synth). The exponents are those published for the
bridge height: h ∝ t (viscous, Phys. Rev. Lett. 109, 184502 (2012)) and
h ∝ t^(2/3) (inertial, θ < 90°, Phys. Rev. Lett. 111, 144502 (2013)); seen
from below, the synthetic bridge is sqrt(2 a h / tan θ) wide (a geometric model
of ours, dropkin.synth._sessile), so its half-width grows as t^(1/2) where the
height grows as t, the exponent of the catalogue's width entry (B3).
"""

from __future__ import annotations

import csv
import json

import numpy as np
import pytest
from click.testing import CliRunner

from dropkin import synth
from dropkin.cli import main

PIXEL = 5e-6
FOOTPRINT = 0.4e-3
WATER = synth.Liquid()
VISCOUS = synth.Liquid(name=None, surface_tension=0.063, viscosity=1.0, density=1260.0,
                       temperature=None)  # fmt: skip


def _write(tmp_path, theta, kind, view, frames=50, optics=None):
    setup = synth.SessileCoalescence(view=view, drop_radius=FOOTPRINT, contact_angle_deg=theta)
    liquid = WATER if kind == "inertial" else VISCOUS
    law = synth.sessile_law(
        kind,
        surface_tension=liquid.surface_tension,
        viscosity=liquid.viscosity,
        density=liquid.density,
        theta_deg=theta,
    )
    exponent = 1.0 if kind == "viscous" else 2.0 / 3.0
    if view == "side":
        h_end = 0.6 * setup.apex_height
        shape = (int(setup.apex_height / PIXEL) + 50, int(4.6 * FOOTPRINT / PIXEL))
    else:  # the half-width reaches 0.7 a (h = 0.49 a tan(θ) / 2), or h 0.6 of the caps'
        h_end = min(0.245 * FOOTPRINT * np.tan(np.radians(theta)), 0.6 * setup.apex_height)
        shape = (int(2.6 * FOOTPRINT / PIXEL), int(4.6 * FOOTPRINT / PIXEL))
    end = (h_end / law.parameters["prefactor"]) ** (1.0 / exponent)
    camera = synth.Camera((frames - 6) / end, PIXEL, shape)
    rec = synth.synthesize(
        setup,
        law,
        camera=camera,
        frames=frames,
        contact_frame=4.5,
        liquid=liquid,
        seed=7,
        optics=optics or synth.Optics(),
    )
    out = tmp_path / f"sessile_{view}_{int(theta)}.tif"
    synth.write_recording(rec, out)
    seen_exponent = exponent if view == "side" else exponent / 2.0
    return out, seen_exponent


def _rms_px(folder, truth_file):
    truth = json.loads(truth_file.read_text())
    with open(folder / "radius.csv", newline="") as handle:
        rows = list(csv.DictReader(handle))
    ok = [i for i, row in enumerate(rows) if row["status"] == "ok"]
    measured = np.array([float(rows[i]["radius_m"]) for i in ok])
    true = np.array([truth["radius_m"][i] for i in ok])
    return float(np.sqrt(np.mean((measured - true) ** 2))) / PIXEL, len(ok)


@pytest.mark.parametrize(
    ("view", "theta", "kind", "regime"),
    [
        ("side", 40.0, "inertial", "inertial-sessile"),
        ("side", 70.0, "viscous", "viscous-sessile"),
        ("bottom", 40.0, "viscous", "viscous-sessile-width"),
        ("bottom", 70.0, "viscous", "viscous-sessile-width"),
    ],
)
def test_sessile_recording_analysed_end_to_end(tmp_path, view, theta, kind, regime):
    recording, exponent = _write(tmp_path, theta, kind, view)
    out = tmp_path / "out"
    result = CliRunner().invoke(
        main, ["analyze", str(recording), "-o", str(out), "--overlays", "0"]
    )
    assert result.exit_code == 0, result.output
    truth = recording.with_name(recording.stem + ".truth.json")
    rms, n_ok = _rms_px(out, truth)
    fit = json.loads((out / "fit.json").read_text())
    dominant = fit["dominant"]
    n_fit = dominant["exponent_fit"]
    print(f"{view} θ={theta:g}: RMS {rms:.3f} px on {n_ok} ok frames; {dominant['regime']}")
    print(f"  n = {n_fit:.4f} (true {exponent:.4f})")
    assert n_ok >= 30
    assert rms <= 0.5
    assert abs(n_fit - exponent) <= 0.03
    assert dominant["regime"] == regime
    assert fit["success"] and fit["decidable"]


@pytest.mark.parametrize(
    ("view", "theta", "kind", "regime", "glow"),
    [
        ("side", 40.0, "inertial", "inertial-sessile", 0.0),
        ("side", 40.0, "inertial", "inertial-sessile", 0.6),
        ("bottom", 40.0, "viscous", "viscous-sessile-width", 0.0),
    ],
)
def test_bright_sessile_drops_analysed_end_to_end(tmp_path, view, theta, kind, regime, glow):
    # The same recordings as above, front-lit or fluorescent (bright drops on
    # a dark field, plain or glowing; the plate rendered bright, as the
    # backlit picture turned inside out): the contrast told from the frames,
    # the same bounds.
    optics = synth.Optics(contrast="bright-drops", glow=glow)
    recording, exponent = _write(tmp_path, theta, kind, view, optics=optics)
    out = tmp_path / "out"
    result = CliRunner().invoke(
        main, ["analyze", str(recording), "-o", str(out), "--overlays", "0"]
    )
    assert result.exit_code == 0, result.output
    assert json.loads((out / "measure.json").read_text())["contrast"] == "bright-drops"
    rms, n_ok = _rms_px(out, recording.with_name(recording.stem + ".truth.json"))
    dominant = json.loads((out / "fit.json").read_text())["dominant"]
    assert n_ok >= 30
    assert rms <= 0.5
    assert abs(dominant["exponent_fit"] - exponent) <= 0.03
    assert dominant["regime"] == regime
