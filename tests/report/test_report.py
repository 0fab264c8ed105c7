"""Plots and the self-contained HTML report, on the real pipeline's outputs."""

from __future__ import annotations

import copy
import dataclasses
import json
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from click.testing import CliRunner

import dropkin.cli
from dropkin.pipeline import read_fit, write_analysis_outputs
from dropkin.report import origin_dict, time_origin, write_plots, write_report
from dropkin.scaling import verdict_from_dict
from dropkin.series import read_series

SAMPLES = Path(__file__).resolve().parents[2] / "sample_frames"
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def _analyze(sample: Path, out: Path) -> Path:
    result = CliRunner().invoke(
        dropkin.cli.main, ["analyze", str(sample), "-o", str(out), "--bootstrap", "20"]
    )
    assert result.exit_code == 0, result.output
    return out


def _inputs(out: Path):
    """The records of an analysis folder, as the report takes them."""
    return {"series": read_series(out / "radius.csv"), "verdict": read_fit(out / "fit.json")}


def _files(out: Path):
    """The contents of an analysis folder's ``measure.json`` and ``fit.json``."""
    return {
        "measure_info": json.loads((out / "measure.json").read_text(encoding="utf-8")),
        "fit": json.loads((out / "fit.json").read_text(encoding="utf-8")),
    }


@pytest.fixture(scope="module", params=["fast_pair.tif", "spreading_drop"])
def analysed(request, tmp_path_factory):
    """One real `analyze` run per sample, then plots and report written from its files.

    The report of the run itself is kept beside the folder, as ``run_report.html``.
    """
    out = tmp_path_factory.mktemp(request.param.replace(".", "_")) / "out"
    _analyze(SAMPLES / request.param, out)
    (out.parent / "run_report.html").write_bytes((out / "report.html").read_bytes())
    report = write_analysis_outputs(out)
    return out, report


def _angle_plot(out: Path) -> tuple[str, ...]:
    """``("contact_angle",)`` for a folder with contact angles (spreading, side view)."""
    return ("contact_angle",) if (out / "angles.csv").is_file() else ()


def test_report_from_the_files_is_the_report_of_the_run(analysed):
    # The run passes its records in memory; the files read back give the same ones.
    out, report = analysed
    assert report.read_bytes() == (out.parent / "run_report.html").read_bytes()


def test_records_read_back_give_their_files_again(analysed):
    from dropkin.scaling import verdict_to_dict
    from dropkin.series import series_to_csv, series_to_dict

    out, _ = analysed
    inputs, files = _inputs(out), _files(out)
    assert series_to_csv(inputs["series"]) == (out / "radius.csv").read_text(encoding="utf-8")
    assert series_to_dict(inputs["series"]) == files["measure_info"]
    # fit.json is the verdict's dict plus the time origin of the run's outputs
    fit = dict(files["fit"])
    origin = fit.pop("time_origin")
    provenance = fit.pop("provenance")  # of the run, not of the verdict (issue 16, point 4)
    assert provenance["radius_csv"] == "radius.csv" and provenance["run"]["versions"]
    assert verdict_to_dict(inputs["verdict"]) == fit
    assert origin == origin_dict(time_origin(inputs["series"], inputs["verdict"]))


def test_plots_are_valid_png_and_png_only_by_default(analysed):
    import matplotlib.image as mpimg

    out, _ = analysed
    for stem in ("radius", "local_exponent", "residuals", "overlays", *_angle_plot(out)):
        png = out / "plots" / f"{stem}.png"
        assert png.read_bytes()[:8] == PNG_SIGNATURE, png
        shape = mpimg.imread(png).shape
        # one column (3.4 in) at 300 dpi
        assert 600 < shape[1] < 1100 and shape[0] > 200, (stem, shape)
    assert sorted({p.suffix for p in (out / "plots").iterdir()}) == [".png"]


def test_plots_in_every_format_asked_for_and_no_other(analysed, tmp_path):
    import matplotlib.image as mpimg

    out, _ = analysed
    stems = ("radius", "local_exponent", "residuals", *_angle_plot(out))
    written = write_plots(tmp_path, **_inputs(out), formats=("png", "svg", "pdf"))
    assert sorted(p.name for p in written) == sorted(
        f"{s}.{e}" for s in stems for e in ("png", "svg", "pdf")
    )
    for stem in stems:
        root = ET.parse(tmp_path / "plots" / f"{stem}.svg").getroot()
        assert root.tag.endswith("svg")
        assert (tmp_path / "plots" / f"{stem}.pdf").read_bytes()[:5] == b"%PDF-"
        # the PNG's size is the figure's, as laid out once for every format
        height, width = mpimg.imread(tmp_path / "plots" / f"{stem}.png").shape[:2]
        assert width == 1020  # 3.4 in at 300 dpi
    # a later run that asks for PNG only leaves no figure of the earlier one
    write_plots(tmp_path, **_inputs(out))
    assert sorted(p.name for p in (tmp_path / "plots").iterdir()) == sorted(
        f"{s}.png" for s in stems
    )


def test_write_plots_returns_the_files_it_wrote(analysed, tmp_path):
    out, _ = analysed
    written = write_plots(tmp_path, **_inputs(out))
    names = sorted(p.name for p in written)
    # no overlays folder in tmp_path, so no montage; contact angles for spreading
    stems = ("radius", "local_exponent", "residuals", *_angle_plot(out))
    assert names == sorted(f"{s}.png" for s in stems)
    assert all(p.is_file() and p.parent == tmp_path / "plots" for p in written)
    assert not [p for p in (tmp_path / "plots").iterdir() if p.name.startswith(".")]


def test_report_is_self_contained(analysed):
    out, report = analysed
    assert report == out / "report.html"
    html = report.read_text(encoding="utf-8")
    sources = re.findall(r"<img\b[^>]*\bsrc=\"([^\"]*)\"", html)
    # radius, local exponent, residuals (and contact angles), and one overlay
    # frame: the overlays are shown once, stepped by the slider
    assert len(sources) == 3 + len(_angle_plot(out)) + 1
    assert all(s.startswith("data:image/") for s in sources)
    assert "http://" not in html and "https://" not in html
    # the only scripts: the overlay frames' data and the few lines that step them
    scripts = re.findall(r"<script\b([^>]*)>(.*?)</script>", html.lower(), flags=re.S)
    assert [attrs.strip() for attrs, _ in scripts] == [
        'type="application/json" id="overlay-frames"',
        'id="overlay-stepper"',
    ]
    code = scripts[1][1]
    for word in ("fetch", "xmlhttprequest", "import", "eval(", "websocket", '.src = "http'):
        assert word not in code, word
    assert "<link" not in html.lower()


def test_report_states_verdict_regime_and_provenance(analysed):
    out, report = analysed
    html = report.read_text(encoding="utf-8")
    files = _files(out)
    fit, info = files["fit"], files["measure_info"]
    from markupsafe import escape

    assert str(escape(fit["sentence"])) in html
    assert fit["dominant"]["regime"] in html
    assert f"{fit['dominant']['exponent_fit']:.4g}" in html
    assert info["provenance"]["sha256"] in html
    for cand in fit["candidates"]:
        assert f"<td>{cand['regime']}</td>" in html


def test_input_strings_are_escaped(analysed, tmp_path):
    out, _ = analysed
    series = _inputs(out)["series"]
    series = dataclasses.replace(
        series, provenance={**series.provenance, "input": "<script>x</script>"}
    )
    fit = copy.deepcopy(_files(out)["fit"])
    fit["sentence"] = "a <b>bold</b> & <script>alert(1)</script> claim"
    path = write_report(tmp_path, series=series, verdict=verdict_from_dict(fit))
    html = path.read_text(encoding="utf-8")
    assert "<script>" not in html
    assert "&lt;script&gt;x&lt;/script&gt;" in html
    assert "a &lt;b&gt;bold&lt;/b&gt; &amp; &lt;script&gt;" in html


def test_warnings_for_few_points_edge_frames_and_cut_regime(analysed, tmp_path):
    out, _ = analysed
    inputs = _inputs(out)
    series = inputs["series"]
    fit = copy.deepcopy(_files(out)["fit"])
    t0 = fit["contact"]["t0_s"]
    start, stop = fit["dominant"]["window_s"]
    # pretend the window stopped halfway because the drop left the field of view
    end = (start * stop) ** 0.5
    fit["dominant"]["window_s"] = [start, end]
    status = list(series.status)
    late = [i for i, t in enumerate(series.time) if t - t0 > end]
    assert late
    for i in late:
        status[i] = "at-edge"
    status[0] = "not-found"
    # only 3 frames left ok: the counts are the statuses' own (the record has no others)
    ok = [i for i, s in enumerate(status) if s == "ok"]
    for i in ok[3:]:
        status[i] = "unresolved"
    series = dataclasses.replace(series, status=tuple(status))
    html = write_report(tmp_path, series=series, verdict=inputs["verdict"]).read_text(
        encoding="utf-8"
    )
    assert "Only 3 frames were measured as ok" in html
    assert "no drop found (status not-found)" in html
    assert f"{len(late)} frames had the drop touching the image edge" in html
    assert "may be cut by the field of view" in html


def test_clean_run_has_no_warnings_but_the_verdicts_own(analysed):
    # Issue 13: the verdict's warnings (fit.json "warnings") are shown in the
    # Warnings section. fast_pair does carry some (its t0 sits at a bracket end,
    # its window is 0.49 decades, 31 % of its frames after contact are
    # unresolved); a clean run has no others, and none when fit.json has none.
    out, report = analysed
    html = report.read_text(encoding="utf-8")
    codes = [w["code"] for w in _files(out)["fit"]["warnings"]]
    if not codes:
        assert "<h2>Warnings</h2>" not in html
    else:
        section = html.split("<h2>Warnings</h2>")[1].split("<h2>")[0]
        assert section.count("<li>") == len(codes)
        assert all(f"[{code}].</li>" in section for code in codes)


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
    verdict, series = inputs["verdict"], inputs["series"]
    tau = fit_times(series, verdict)
    lo, hi = verdict.dominant.window
    ok = np.array([s == "ok" for s in series.status]) & (tau >= lo * 0.999)
    ok &= tau <= hi * 1.001
    assert ok.sum() > 10
    rel = series.radius[ok] / dominant_curve(verdict, tau[ok]) - 1
    assert np.max(np.abs(rel)) < 0.03


def test_crossovers_are_plotted_and_listed(analysed, tmp_path):
    out, _ = analysed
    inputs = _inputs(out)
    fit = copy.deepcopy(_files(out)["fit"])
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
    verdict = verdict_from_dict(fit)
    written = write_plots(tmp_path, series=inputs["series"], verdict=verdict)
    assert tmp_path / "plots" / "radius.png" in written
    html = write_report(tmp_path, series=inputs["series"], verdict=verdict).read_text(
        encoding="utf-8"
    )
    assert "Crossover early-regime → late-regime at τ =" in html
