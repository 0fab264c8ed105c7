"""Plots and the self-contained HTML report, on the real pipeline's outputs."""

from __future__ import annotations

import copy
import json
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from click.testing import CliRunner

import dropkin.cli
from dropkin.report import write_analysis_outputs, write_plots, write_report
from dropkin.series import read_radius_csv

SAMPLES = Path(__file__).resolve().parents[2] / "sample_frames"
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def _analyze(sample: Path, out: Path) -> Path:
    result = CliRunner().invoke(
        dropkin.cli.main, ["analyze", str(sample), "-o", str(out), "--bootstrap", "20"]
    )
    assert result.exit_code == 0, result.output
    return out


def _inputs(out: Path):
    return {
        "series": read_radius_csv(out / "radius.csv"),
        "measure_info": json.loads((out / "measure.json").read_text(encoding="utf-8")),
        "fit": json.loads((out / "fit.json").read_text(encoding="utf-8")),
    }


@pytest.fixture(scope="module", params=["fast_pair.tif", "spreading_drop"])
def analysed(request, tmp_path_factory):
    """One real `analyze` run per sample, then plots and report written from its files."""
    out = tmp_path_factory.mktemp(request.param.replace(".", "_")) / "out"
    _analyze(SAMPLES / request.param, out)
    report = write_analysis_outputs(out)
    return out, report


def test_plots_are_valid_png_and_svg(analysed):
    import matplotlib.image as mpimg

    out, _ = analysed
    for stem in ("radius", "local_exponent", "residuals", "overlays"):
        png = out / "plots" / f"{stem}.png"
        assert png.read_bytes()[:8] == PNG_SIGNATURE, png
        shape = mpimg.imread(png).shape
        # one column (3.4 in) at 300 dpi, trimmed by the tight bounding box
        assert 600 < shape[1] < 1100 and shape[0] > 200, (stem, shape)
        root = ET.parse(out / "plots" / f"{stem}.svg").getroot()
        assert root.tag.endswith("svg")


def test_write_plots_returns_the_files_it_wrote(analysed, tmp_path):
    out, _ = analysed
    written = write_plots(tmp_path, **_inputs(out))
    names = sorted(p.name for p in written)
    # no overlays folder in tmp_path, so no montage
    assert names == sorted(
        f"{s}.{e}" for s in ("radius", "local_exponent", "residuals") for e in ("png", "svg")
    )
    assert all(p.is_file() and p.parent == tmp_path / "plots" for p in written)
    assert not [p for p in (tmp_path / "plots").iterdir() if p.name.startswith(".")]


def test_report_is_self_contained(analysed):
    out, report = analysed
    assert report == out / "report.html"
    html = report.read_text(encoding="utf-8")
    sources = re.findall(r"<img\b[^>]*\bsrc=\"([^\"]*)\"", html)
    n_overlays = len(list((out / "overlays").glob("*.png")))
    assert len(sources) == 4 + n_overlays
    assert all(s.startswith("data:image/") for s in sources)
    assert "http://" not in html and "https://" not in html
    assert "<script" not in html.lower()
    assert "<link" not in html.lower()


def test_report_states_verdict_regime_and_provenance(analysed):
    out, report = analysed
    html = report.read_text(encoding="utf-8")
    inputs = _inputs(out)
    fit, info = inputs["fit"], inputs["measure_info"]
    from markupsafe import escape

    assert str(escape(fit["sentence"])) in html
    assert fit["dominant"]["regime"] in html
    assert f"{fit['dominant']['exponent_fit']:.4g}" in html
    assert info["provenance"]["sha256"] in html
    for cand in fit["candidates"]:
        assert f"<td>{cand['regime']}</td>" in html


def test_input_strings_are_escaped(analysed, tmp_path):
    out, _ = analysed
    inputs = _inputs(out)
    info = copy.deepcopy(inputs["measure_info"])
    info["provenance"]["input"] = "<script>x</script>"
    fit = copy.deepcopy(inputs["fit"])
    fit["sentence"] = "a <b>bold</b> & <script>alert(1)</script> claim"
    path = write_report(tmp_path, series=inputs["series"], measure_info=info, fit=fit)
    html = path.read_text(encoding="utf-8")
    assert "<script>" not in html
    assert "&lt;script&gt;x&lt;/script&gt;" in html
    assert "a &lt;b&gt;bold&lt;/b&gt; &amp; &lt;script&gt;" in html


def test_warnings_for_few_points_edge_frames_and_cut_regime(analysed, tmp_path):
    out, _ = analysed
    inputs = _inputs(out)
    series = dict(inputs["series"])
    fit = copy.deepcopy(inputs["fit"])
    t0 = fit["contact"]["t0_s"]
    start, stop = fit["dominant"]["window_s"]
    # pretend the window stopped halfway because the drop left the field of view
    end = (start * stop) ** 0.5
    fit["dominant"]["window_s"] = [start, end]
    status = list(series["status"])
    late = [i for i, t in enumerate(series["time_s"]) if t - t0 > end]
    assert late
    for i in late:
        status[i] = "at-edge"
    status[0] = "not-found"
    series["status"] = tuple(status)
    info = copy.deepcopy(inputs["measure_info"])
    info["status_counts"] = {s: status.count(s) for s in set(status)}
    info["status_counts"]["ok"] = 3
    html = write_report(tmp_path, series=series, measure_info=info, fit=inputs["fit"]).read_text(
        encoding="utf-8"
    )
    assert "Only 3 frames were measured as ok" in html
    assert "no drop found (status not-found)" in html
    assert f"{len(late)} frame(s) had the drop touching the image edge" in html
    assert "may be cut by the field of view" in html


def test_clean_run_has_no_warnings(analysed):
    _, report = analysed
    assert "<h2>Warnings</h2>" not in report.read_text(encoding="utf-8")


def test_experiment_strings_are_escaped_and_shown(analysed, tmp_path):
    from dropkin.experiment import Experiment, Fluid

    out, report = analysed
    assert "<th>liquid</th>" in report.read_text(encoding="utf-8")
    experiment = Experiment(liquid=Fluid(name="<script>y</script>", viscosity=1e-3))
    html = write_report(tmp_path, **_inputs(out), experiment=experiment).read_text(
        encoding="utf-8"
    )
    assert "&lt;script&gt;y&lt;/script&gt;, η = 1 mPa s" in html
    assert "<script>" not in html


def test_dominant_curve_follows_the_ok_points_in_its_window(analysed):
    import numpy as np

    from dropkin.report._plots import dominant_curve, fit_times

    out, _ = analysed
    inputs = _inputs(out)
    fit, series = inputs["fit"], inputs["series"]
    tau = fit_times(series, fit)
    lo, hi = fit["dominant"]["window_s"]
    ok = np.array([s == "ok" for s in series["status"]]) & (tau >= lo * 0.999)
    ok &= tau <= hi * 1.001
    assert ok.sum() > 10
    rel = series["radius_m"][ok] / dominant_curve(fit, tau[ok]) - 1
    assert np.max(np.abs(rel)) < 0.03


def test_crossovers_are_plotted_and_listed(analysed, tmp_path):
    out, _ = analysed
    inputs = _inputs(out)
    fit = copy.deepcopy(inputs["fit"])
    lo, hi = fit["dominant"]["window_s"]
    fit["crossovers"] = [
        {
            "from": "early-regime",
            "to": "late-regime",
            "time_s": (lo * hi) ** 0.5,
            "time_ci_s": [lo, hi],
            "predicted_time_s": None,
        }
    ]
    written = write_plots(
        tmp_path, series=inputs["series"], measure_info=inputs["measure_info"], fit=fit
    )
    assert tmp_path / "plots" / "radius.png" in written
    html = write_report(
        tmp_path, series=inputs["series"], measure_info=inputs["measure_info"], fit=fit
    ).read_text(encoding="utf-8")
    assert "Crossover early-regime → late-regime at τ =" in html
