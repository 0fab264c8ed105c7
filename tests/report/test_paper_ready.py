"""Issue 16, points 3 and 7: one time origin, a report for every fit, figures fit for a paper.

Every check runs the real command line (click's CliRunner) on the shipped
samples and reads what it wrote: ``fit.json``, ``radius.csv``, the figures
(redrawn from the same records to inspect their artists) and the HTML
report, parsed with the standard library's ``html.parser``.
"""

from __future__ import annotations

import csv
import json
import math
import re
import shutil
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

import dropkin.cli
from dropkin.pipeline import read_fit
from dropkin.series import read_series

SAMPLES = Path(__file__).resolve().parents[2] / "sample_frames"
SRC = Path(__file__).resolve().parents[2] / "src" / "dropkin"


def _run(*argv):
    return CliRunner().invoke(dropkin.cli.main, [str(a) for a in argv])


def _analyze(sample: str, out: Path) -> Path:
    result = _run("analyze", SAMPLES / sample, "-o", out, "--bootstrap", "20")
    assert result.exit_code == 0, result.output
    return out


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    """`analyze` on the three samples, once."""
    root = tmp_path_factory.mktemp("paper")
    return {
        name: _analyze(sample, root / name)
        for name, sample in (
            ("pair", "fast_pair.tif"),
            ("spreading", "spreading_drop"),
            ("viscous", "viscous_pair"),
        )
    }


class _Page(HTMLParser):
    """Elements by id, the text under each id, every <img>, <script> and heading."""

    def __init__(self, text: str):
        super().__init__()
        self.ids: dict[str, dict] = {}
        self.text: dict[str, str] = {}
        self.images: list[dict] = []
        self.headings: list[str] = []
        self.scripts: list[dict] = []
        self._open: list[tuple[str, str | None]] = []
        self._heading = False
        self.feed(text)

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        if "id" in attrs:
            self.ids[attrs["id"]] = {"tag": tag, **attrs}
            self.text[attrs["id"]] = ""
        if tag == "img":
            self.images.append(attrs)
        if tag == "script":
            self.scripts.append(attrs)
        self._heading = tag == "h2"
        if tag not in ("img", "input", "meta", "br"):
            self._open.append((tag, attrs.get("id")))

    def handle_endtag(self, tag):
        while self._open:
            if self._open.pop()[0] == tag:
                break
        self._heading = False

    def handle_data(self, data):
        for _, ident in self._open:
            if ident is not None:
                self.text[ident] += data
        if self._heading:
            self.headings.append(data.strip())


def _page(out: Path) -> _Page:
    return _Page((out / "report.html").read_text(encoding="utf-8"))


# -- point 3: a report for every fit; fit writes what analyze writes --------------------


def test_a_failed_fit_writes_its_radius_plot_and_a_report_that_says_why(runs, tmp_path):
    """The brief's case: the first rows of fast_pair's radius.csv, fitted alone (through
    frame 33: eleven resolved necks over less than a third of a decade)."""
    short = tmp_path / "short"
    short.mkdir()
    rows = (runs["pair"] / "radius.csv").read_text(encoding="utf-8").splitlines()[:35]
    (short / "radius.csv").write_text("\n".join(rows) + "\n", encoding="utf-8")
    shutil.copy(runs["pair"] / "measure.json", short)
    shutil.copytree(runs["pair"] / "overlays", short / "overlays")
    result = _run(
        "fit",
        *(short / "radius.csv", "-o", tmp_path / "out", "--bootstrap", "20"),
        *("--plot-formats", "png,svg"),
    )
    assert result.exit_code == 1
    out = tmp_path / "out"
    fit = json.loads((out / "fit.json").read_text(encoding="utf-8"))
    assert fit["success"] is False and fit["reason"].startswith("Too short")
    assert (out / "plots" / "radius.png").is_file() and (out / "plots" / "radius.svg").is_file()
    # no empty figures: there is no local exponent and no dominant fit to show
    assert not (out / "plots" / "local_exponent.png").exists()
    assert not (out / "plots" / "residuals.png").exists()
    page = _page(out)
    assert "failed-fit" in page.ids
    assert fit["reason"] in " ".join(page.text["failed-fit"].split())
    assert "exits with code 1" in " ".join(page.text["failed-fit"].split())
    # the radius plot and the overlay frames are in the report all the same
    assert any(i.get("alt") == "radius" for i in page.images)
    assert "overlay-slider" in page.ids
    # the reason is said once, as the error line; the files are named on stdout
    assert result.output.count(fit["reason"]) == 1
    assert "report.html" in result.output


def test_analyze_keeps_exit_code_1_and_writes_the_report_of_a_failed_fit(tmp_path):
    """analyze on the first 25 frames only (last_frame = 24): too short a series."""
    experiment = tmp_path / "short.toml"
    text = (SAMPLES / "fast_pair.toml").read_text(encoding="utf-8")
    experiment.write_text(
        text.replace('pixel_size = "20 um"', 'pixel_size = "20 um"\nlast_frame = 24'),
        encoding="utf-8",
    )
    out = tmp_path / "out"
    result = _run(
        "analyze", SAMPLES / "fast_pair.tif", "-o", out, "--experiment", experiment,
        "--bootstrap", "20",
    )  # fmt: skip
    assert result.exit_code == 1, result.output
    fit = json.loads((out / "fit.json").read_text(encoding="utf-8"))
    assert fit["success"] is False
    page = _page(out)
    assert fit["reason"] in " ".join(page.text["failed-fit"].split())
    assert (out / "plots" / "radius.png").is_file()


def test_fit_writes_the_plots_and_report_analyze_writes(runs, tmp_path):
    pair = runs["pair"]
    result = _run("fit", pair / "radius.csv", "-o", tmp_path, "--bootstrap", "20")
    assert result.exit_code == 0, result.output
    # the same verdict, byte for byte, before the provenance (written last): that
    # names another run, and the radius.csv from another folder
    fitted, analysed = (
        (folder / "fit.json").read_text(encoding="utf-8") for folder in (tmp_path, pair)
    )
    cut = '\n  "provenance": {'
    assert fitted.index(cut) == analysed.index(cut) > 0
    assert fitted[: fitted.index(cut)] == analysed[: analysed.index(cut)]
    provenance = json.loads(fitted)["provenance"]
    assert provenance["run"]["command_line"].startswith("dropkin fit ")
    assert (tmp_path / provenance["radius_csv"]).resolve() == (pair / "radius.csv").resolve()
    names = sorted(p.name for p in (pair / "plots").iterdir())
    assert sorted(p.name for p in (tmp_path / "plots").iterdir()) == names
    for name in names:  # same records, same figures, byte for byte
        assert (tmp_path / "plots" / name).read_bytes() == (pair / "plots" / name).read_bytes()
    # the report shows the overlay frames beside radius.csv: the same page
    assert (tmp_path / "report.html").read_bytes() == (pair / "report.html").read_bytes()


def test_one_time_origin_stated_in_every_output(runs):
    from dropkin.report._origin import time_origin
    from dropkin.report._plots import _plot_radius

    out = runs["pair"]
    fit = json.loads((out / "fit.json").read_text(encoding="utf-8"))
    measured = json.loads((out / "measure.json").read_text(encoding="utf-8"))
    origin = fit["time_origin"]
    assert origin["kind"] == "fitted" and origin["t0_s"] == fit["contact"]["t0_s"]
    assert origin["measured_contact_s"] == measured["contact_time_s"]
    # radius.csv is unchanged in its columns; since_contact_s relates to τ by the stated shift
    with (out / "radius.csv").open(encoding="utf-8") as handle:
        rows = list(csv.DictReader(handle))
    assert list(rows[0])[:6] == [
        "frame", "time_s", "since_contact_s", "radius_m", "radius_err_m", "status",
    ]  # fmt: skip
    shift = origin["since_contact_minus_tau_s"]
    for row in rows:
        if row["since_contact_s"]:
            tau = float(row["time_s"]) - origin["t0_s"]
            assert float(row["since_contact_s"]) == pytest.approx(tau - shift, abs=1e-12)
    # the report and the plots' axes name the origin
    page = _page(out)
    sentence = " ".join(page.text["time-origin"].split())
    # the numbers of fit.json, as the sentence writes them (3 significant digits, µs)
    t0_us, shift_us = origin["t0_s"] * 1e6, shift * 1e6
    sign = "−" if shift_us > 0 else "+"
    assert f"t₀ = {t0_us:.3g} µs" in sentence
    assert f"since_contact_s = τ {sign} {abs(shift_us):.3g} µs" in sentence
    series, verdict = read_series(out / "radius.csv"), read_fit(out / "fit.json")
    assert time_origin(series, verdict).t0 == origin["t0_s"]
    assert _plot_radius(series, verdict).axes[0].get_xlabel() == (
        "τ = t − t₀ (ms), t₀ fitted contact"
    )
    # the console says the same, once
    result = _run("fit", out / "radius.csv", "-o", out / "again", "--bootstrap", "20")
    assert result.output.count(sentence) == 1


# -- point 7: figures and report fit for a paper ----------------------------------------


def _figures(out: Path):
    from matplotlib import rc_context
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    from dropkin.report._angles import plot_contact_angles
    from dropkin.report._local import plot_local_exponent
    from dropkin.report._origin import time_origin
    from dropkin.report._plots import _plot_radius, _plot_residuals
    from dropkin.report._style import _RC

    series, verdict = read_series(out / "radius.csv"), read_fit(out / "fit.json")
    label = time_origin(series, verdict).axis_label
    with rc_context(_RC):
        figures = {
            "radius": _plot_radius(series, verdict),
            "local_exponent": plot_local_exponent(verdict, series, label),
            "residuals": _plot_residuals(series, verdict),
        }
        if series.angles is not None:
            figures["contact_angle"] = plot_contact_angles(series, verdict)
        for fig in figures.values():
            FigureCanvasAgg(fig).draw()  # the layout as saved
    return series, verdict, figures


@pytest.mark.parametrize("name", ["pair", "spreading", "viscous"])
def test_the_local_exponent_guides_are_named_below_the_axes(runs, name):
    series, verdict, figures = _figures(runs[name])
    fig = figures["local_exponent"]
    (ax,) = fig.axes
    (legend,) = fig.legends
    # the legend sits below the axes, so no guide's label is drawn over the data
    renderer = fig.canvas.get_renderer()
    assert legend.get_window_extent(renderer).y1 <= ax.get_window_extent(renderer).y0 + 1
    assert not ax.texts  # no labels inside the axes
    text = " ".join(t.get_text().replace("\n  ", " ") for t in legend.get_texts())
    text += " " + legend.get_title().get_text().replace("\n  ", " ")
    for cand in verdict.candidates:  # every candidate named, none hidden behind "+N"
        assert cand.key in text
    assert not re.search(r"\+\d", text)


def test_the_log_law_is_drawn_as_its_own_local_exponent_not_at_one(runs):
    """ELS: r = −C u τ ln(uτ/R); its slope on log axes, taken numerically from the
    library's law (dropkin.fitting viscous_log_law), is what the figure draws."""
    from dropkin.fitting._laws import viscous_log_law

    series, verdict, figures = _figures(runs["viscous"])
    assert any(c.regime.logarithmic for c in verdict.candidates)
    (ax,) = figures["local_exponent"].axes
    (line,) = [ln for ln in ax.get_lines() if ln.get_label().startswith("log law")]
    tau_ms, n = (np.asarray(v, dtype=float) for v in line.get_data())
    ok = np.isfinite(n)
    assert ok.sum() > 50 and np.all(n[ok] < 1.0)  # never the line n = 1
    u, big_r = verdict.numbers.capillary_speed, series.drop_radius
    tau = tau_ms[ok] * 1e-3
    r = viscous_log_law(tau, 1 / math.pi, capillary_speed=u, radius=big_r)
    slope = np.gradient(np.log(r), np.log(tau))
    assert np.allclose(n[ok][1:-1], slope[1:-1], atol=2e-3)


def test_the_log_law_local_exponent_matches_the_tabulated_values():
    # docs/physics.md §2 A1 (C): 1 + 1/ln(x) is 0.89, 0.86, 0.78 and 0.57 at
    # x = γt/(ηR) = 1e-4, 1e-3, 1e-2, 1e-1; past the peak (x ≥ 1/e) it is not defined
    from dropkin.report._local import log_law_local_exponent

    x = np.array([1e-4, 1e-3, 1e-2, 1e-1, 0.5])
    n = log_law_local_exponent(x, speed=1.0, drop_radius=1.0)
    assert np.round(n[:4], 2).tolist() == [0.89, 0.86, 0.78, 0.57]
    assert np.isnan(n[4])


@pytest.mark.parametrize("name", ["pair", "spreading", "viscous"])
def test_every_log_axis_labels_at_least_three_ticks(runs, name):
    _, _, figures = _figures(runs[name])
    for stem, fig in figures.items():
        for ax in fig.axes:
            for axis, (lo, hi) in ((ax.xaxis, ax.get_xlim()), (ax.yaxis, ax.get_ylim())):
                if axis.get_scale() != "log":
                    continue
                labelled = [
                    t
                    for t in axis.get_major_ticks()
                    if t.label1.get_visible()
                    and t.label1.get_text()
                    and min(lo, hi) <= t.get_loc() <= max(lo, hi)
                ]
                assert len(labelled) >= 3, (stem, axis.axis_name, lo, hi)


def _swatch_visible(handle) -> bool:
    """A legend handle a reader can see on the legend's white: a line, a marker,
    or a patch darker than near-white or outlined."""
    from matplotlib.colors import to_rgba
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    if isinstance(handle, Line2D):
        line = handle.get_linestyle() not in ("None", "none", "", " ")
        marker = handle.get_marker() not in (None, "None", "none", "", " ")
        return line or marker
    if isinstance(handle, Patch):
        face, edge = to_rgba(handle.get_facecolor()), to_rgba(handle.get_edgecolor())
        luminance = 0.2126 * face[0] + 0.7152 * face[1] + 0.0722 * face[2]
        return (face[3] > 0 and luminance < 0.9) or (edge[3] > 0 and handle.get_linewidth() > 0)
    return handle is not None and handle.get_visible()


@pytest.mark.parametrize("name", ["pair", "spreading", "viscous"])
def test_every_legend_entry_has_a_visible_swatch(runs, name):
    _, _, figures = _figures(runs[name])
    seen = 0
    for stem, fig in figures.items():
        for legend in [*fig.legends, *(a.get_legend() for a in fig.axes if a.get_legend())]:
            for handle, text in zip(legend.legend_handles, legend.get_texts(), strict=True):
                assert _swatch_visible(handle), (stem, text.get_text())
                seen += 1
    assert seen >= 6


def test_the_spreading_sample_plots_its_contact_angles(runs):
    out = runs["spreading"]
    assert (out / "plots" / "contact_angle.png").is_file()
    page = _page(out)
    assert any(i.get("alt") == "contact_angle" for i in page.images)
    series, verdict, figures = _figures(out)
    (ax,) = figures["contact_angle"].axes
    with (out / "angles.csv").open(encoding="utf-8") as handle:
        rows = {int(r["frame"]): r for r in csv.DictReader(handle)}
    t0 = verdict.t0
    for side, line in zip(("left", "right"), ax.get_lines(), strict=True):
        x, y = (np.asarray(v, dtype=float) for v in line.get_data())
        assert x.size > 20
        expected = {
            round((float(r["time_s"]) - t0) * 1e3, 9): float(r[f"angle_{side}_deg"])
            for r in rows.values()
            if r[f"angle_{side}_deg"] and float(r["time_s"]) > t0
        }
        got = dict(zip(np.round(x, 9), y, strict=True))
        assert got == pytest.approx(expected)
        assert np.all((y > 0) & (y < 180))
    # a coalescence has no contact angles, and no such figure
    assert not (runs["pair"] / "plots" / "contact_angle.png").exists()


def test_the_report_cites_each_law_shown_from_the_catalogue(runs):
    from dropkin.scaling import regime

    for name in ("pair", "spreading", "viscous"):
        out = runs[name]
        fit = json.loads((out / "fit.json").read_text(encoding="utf-8"))
        page = _page(out)
        listed = " ".join(page.text["references"].split()) if "references" in page.text else ""
        refs = {k: " ".join(v.split()) for k, v in page.text.items() if k.startswith("ref-")}
        for cand in fit["candidates"]:
            reference = regime(cand["regime"]).reference
            assert reference.strip()
            assert any(reference in text and cand["regime"] in text for text in refs.values()), (
                name,
                cand["regime"],
            )
        assert "Laws and references" in page.headings, listed
    # the report's code holds no reference of its own: the catalogue is the one place
    for path in (SRC / "report").rglob("*.*"):
        if path.suffix in (".py", ".j2"):
            text = path.read_text(encoding="utf-8")
            assert not re.search(r"Phys\. Rev|Fluid Mech|PNAS|Nat\. Commun|PRL", text), path


def test_the_report_has_a_glossary_of_its_codes(runs):
    from dropkin.status import STATUSES

    page = _page(runs["pair"])
    html = (runs["pair"] / "report.html").read_text(encoding="utf-8")
    assert "glossary" in page.ids and page.ids["glossary"]["tag"] == "h2"
    terms = re.findall(r"<dt>(.*?)</dt>", html)
    for code in ("(a)", "(b)", "(c)", "(d)", "V", "D", "M", "τ", "t₀", "t_c", "AIC"):
        assert code in terms, code
    for status in STATUSES:
        assert f"status {status}" in terms
    # the codes it explains are those the page uses
    assert "(b)" in page.text.get("glossary", "") or "(b);" in html


def test_the_overlay_section_is_shown_once_with_a_slider(runs):
    page = _page(runs["pair"])
    assert page.headings.count("Overlays") == 1
    assert not any(i.get("alt") == "overlays" for i in page.images)  # no montage too
    slider = page.ids["overlay-slider"]
    frames = json.loads(page.text["overlay-frames"])
    n = len(list((runs["pair"] / "overlays").glob("*.png")))
    assert slider["type"] == "range" and int(slider["max"]) == n - 1 == len(frames) - 1
    assert [s.get("id") for s in page.scripts] == ["overlay-frames", "overlay-stepper"]


def _colour_mask(image, bgr, tol=40):
    return np.all(np.abs(image.astype(int) - np.asarray(bgr)) <= tol, axis=-1)


def test_spreading_overlays_outline_only_the_drop_and_drop_the_first_circle(runs):
    import cv2

    from dropkin.report._overlays import _AXIS, _FIT, _OUTLINE, _STRIP

    out = runs["spreading"]
    series = read_series(out / "radius.csv")
    status = dict(zip(series.frame.tolist(), series.status, strict=True))
    files = sorted((out / "overlays").glob("frame_*.png"))
    assert any(status[int(p.stem[6:])] == "before-contact" for p in files)
    for path in files:
        image = cv2.imread(str(path))
        # the caption is on a dark strip above the frame: dark rows with white text
        strip = image[:4]
        assert np.all(np.abs(strip.astype(int) - np.asarray(_STRIP)) <= 2)
        assert (image[:30] > 200).all(axis=-1).any()
        rows = np.nonzero(_colour_mask(image, _AXIS, 60).sum(axis=1) > image.shape[1] // 2)[0]
        assert rows.size, path  # the substrate line, across the frame
        below = _colour_mask(image[rows.max() + 3 :], _OUTLINE, 60)
        assert below.sum() == 0, (path, int(below.sum()))  # the mirror image is not outlined
        amber = _colour_mask(image, _FIT, 40).sum()
        if status[int(path.stem[6:])] == "before-contact":
            assert amber > 50, path
        else:
            assert amber == 0, (path, int(amber))


def test_counted_words_take_their_number():
    from dropkin._words import count

    assert count(1, "recording") == "1 recording"
    assert count(2, "recording") == "2 recordings"
    assert count(0, "frame") == "0 frames"
    # no "1 recordings" left in the campaign and collapse texts
    for path in [*(SRC / "campaign").glob("*.py"), SRC / "cli" / "_campaign.py",
                 SRC / "report" / "_collapse.py"]:  # fmt: skip
        text = path.read_text(encoding="utf-8")
        assert not re.search(r"\}\s+recordings\b", text), path


def test_log_ticks_reach_the_end_of_the_floats_without_overflow():
    # Found by the fit property test (a series from 1e-10 s to 1e290 s): the axis view
    # reached past 1e308, where 10.0**k raises OverflowError (IEEE 754 double's range).
    from dropkin.report._style import _log_ticks

    ticks = _log_ticks(1e-10, 1.7e308)
    assert ticks and all(math.isfinite(v) and 1e-10 <= v <= 1.7e308 for v in ticks)
