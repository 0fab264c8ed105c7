"""End to end: dropkin analyze and dropkin fit on the shipped sample frames.

The samples were rendered by ``sample_frames/make_samples.py`` from known
laws (their ``truth.json`` names the law): the verdict must name it.
"""

import json
from pathlib import Path

import pytest
from click.testing import CliRunner

from dropkin.cli import main

SAMPLES = Path(__file__).resolve().parents[1] / "sample_frames"


@pytest.mark.parametrize(
    ("source", "truth", "regime"),
    [
        ("viscous_pair", "viscous_pair/truth.json", "inertially-limited-viscous"),
        ("fast_pair.tif", "fast_pair.truth.json", "inertial"),
        ("spreading_drop", "spreading_drop/truth.json", "inertial-spreading"),
    ],
)
def test_analyze_names_the_law_the_sample_was_made_with(tmp_path, source, truth, regime):
    law = json.loads((SAMPLES / truth).read_text())["law"]
    assert law["name"] == regime  # the sample's own truth
    out = tmp_path / "out"
    result = CliRunner().invoke(
        main, ["analyze", str(SAMPLES / source), "-o", str(out), "--bootstrap", "50"]
    )
    assert result.exit_code == 0, result.output
    fit = json.loads((out / "fit.json").read_text())
    assert fit["dominant"]["regime"] == regime
    # The fit.json contract of the design notes.
    for key in ("numbers", "candidates", "dominant", "crossovers"):
        assert key in fit
    for key in (
        "regime",
        "exponent_theory",
        "prefactor_theory",
        "prefactor_fit",
        "exponent_fit",
        "exponent_ci",
        "window_s",
        "aic",
        "consistent",
    ):
        assert key in fit["candidates"][0]
    # Every window counts from the contact instant (starts after 0).
    assert fit["dominant"]["window_s"][0] > 0
    assert (out / "radius.csv").exists() and (out / "measure.json").exists()


def test_fit_refuses_a_series_too_short_with_one_line(tmp_path):
    # The first 30 frames of the inertial sample: its measured neck is
    # resolved over far less than the third of a decade a fit needs.
    out = tmp_path / "out"
    runner = CliRunner()
    measured = runner.invoke(main, ["measure", str(SAMPLES / "fast_pair.tif"), "-o", str(out)])
    assert measured.exit_code == 0, measured.output
    csv = (out / "radius.csv").read_text().splitlines()
    (out / "radius.csv").write_text("\n".join(csv[:31]) + "\n")
    result = runner.invoke(main, ["fit", str(out / "radius.csv"), "-o", str(out)])
    assert result.exit_code == 1
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and "radius.csv" in lines[0]
    assert "Traceback" not in result.output


def test_fit_with_initial_radius_option_records_it_and_keeps_the_verdict(tmp_path):
    # --initial-radius lets the AIC choose between r = A τ^n and r = r0 + A τ^n. The
    # fast_pair sample was rendered from the inertial law with r0 = 0 (its truth.json):
    # the option is recorded in fit.json's settings and the verdict stays inertial.
    out = tmp_path / "out"
    runner = CliRunner()
    first = runner.invoke(main, ["measure", str(SAMPLES / "fast_pair.tif"), "-o", str(out)])
    assert first.exit_code == 0, first.output
    result = runner.invoke(
        main,
        ["fit", str(out / "radius.csv"), "-o", str(out), "--bootstrap", "20", "--initial-radius"],
    )
    assert result.exit_code == 0, result.output
    fit = json.loads((out / "fit.json").read_text())
    assert fit["settings"]["initial_radius"] is True
    assert fit["dominant"]["regime"] == "inertial"
