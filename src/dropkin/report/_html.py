"""The self-contained HTML report of one analysis.

One file, ``OUT/report.html``, made from the analysis' records (the
:class:`~dropkin.series.RadiusSeries`, the
:class:`~dropkin.scaling.RegimeVerdict` and the experiment) with the package
template ``templates/report.html.j2``: CSS inline, every image a base64
``data:`` URI, no external reference; the only script is a few inline lines
that step the overlay frames with a slider. Every string from the inputs
passes through jinja2's autoescaping (the frames' list through ``tojson``).
A failed or undecided fit gets a report too, that says why.
"""

from __future__ import annotations

import base64
import functools
import json
import math
from pathlib import Path

import numpy as np

from .._atomic import write_text_atomic
from .._version import __version__
from .._words import count
from ..status import status_mask
from ._dense import BINS, MAX_DRAWN
from ._origin import origin_sentence, time_origin
from ._plots import PLOT_NAMES, write_plots
from ._sections import glossary, law_references, overlay_frames
from ._style import _finite, _num

__all__ = ["write_report", "write_analysis_report", "report_warnings", "FEW_OK_POINTS"]

#: Fewer ok frames than this earn a warning.
FEW_OK_POINTS = 15

#: Said under each figure of points: how a long group of points is drawn.
_BINNED_NOTE = (
    f" A group of more than {MAX_DRAWN} frames is drawn binned: the median of each of {BINS} "
    "log-spaced τ bins, its bar from the 16th to the 84th percentile of the bin's rows."
)
_PLOT_CAPTIONS = {
    "radius": "Radius against τ (log-log). Solid: dominant fit over its window; dashed: "
    "consistent candidate laws; grey: frames not measured as ok, a marker per status."
    + _BINNED_NOTE,
    "local_exponent": "Local exponent d ln r / d ln τ with its band; horizontal lines at the "
    "power laws' exponents, and the logarithmic laws' own local exponent "
    "1 + 1/ln(γτ/(ηR)) as a curve; the legend below names every regime of each.",
    "residuals": "Relative residuals of the dominant fit for the ok frames; shaded: its window."
    + _BINNED_NOTE,
    "contact_angle": "Apparent contact angles at the left and right contact points, from a "
    "local fit of the outline (angles.csv)." + _BINNED_NOTE,
}
#: The figures the report shows (the overlay montage is in plots/ for a paper;
#: the report steps through the frames themselves).
_REPORT_PLOTS = tuple(name for name in PLOT_NAMES if name != "overlays")

# The sample's numbers (attributes of the verdict's numbers), in the order of fit.json.
_NUMBER_LABELS = (
    ("ohnesorge", "Ohnesorge number Oh"),
    ("bond", "Bond number Bo"),
    ("viscosity_ratio", "viscosity ratio η/η_o"),
    ("ohnesorge_outer", "outer Ohnesorge number Oh_o"),
    ("density_ratio", "density ratio ρ_o/ρ"),
    ("viscous_time", "viscous time (s)"),
    ("inertial_time", "inertial time (s)"),
    ("capillary_length", "capillary length (m)"),
    ("capillary_speed", "capillary speed γ/η (m/s)"),
)


def _g(value, digits=4) -> str:
    if value is None:
        return "—"
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return str(value)
    return f"{value:.{digits}g}" if math.isfinite(value) else "—"


def _pair(pair, digits=4, scale=1.0, unit="") -> str:
    values = [] if pair is None or len(pair) != 2 else [_num(v) for v in pair]
    if len(values) != 2 or None in values:
        return "—"
    return f"[{_g(values[0] * scale, digits)}, {_g(values[1] * scale, digits)}]{unit}"


def _ms_window(pair) -> str:
    return _pair(pair, 3, 1e3, " ms")


def _data_uri(path: Path) -> str:
    kind = {".png": "png", ".svg": "svg+xml", ".jpg": "jpeg", ".jpeg": "jpeg"}
    mime = kind.get(path.suffix.lower(), "png")
    data = base64.b64encode(path.read_bytes()).decode("ascii")
    return f"data:image/{mime};base64,{data}"


def report_warnings(*, series, verdict) -> list[str]:
    """Plain-text warnings about the measurement and the verdict.

    A lossy source (measure.json's ``lossy_source``), few ok frames, frames
    whose drop was not found or touched the image edge,
    a dominant regime whose window ends where at-edge frames begin (the field
    of view cut it), a failed or undecided verdict, and the verdict's own
    warnings (``verdict.warnings``, each with its code).
    """
    out = []
    lossy = series.details.get("lossy_source")
    if isinstance(lossy, dict) and lossy.get("compression"):
        out.append(
            f"The recording went through lossy compression ({lossy['compression']}): "
            f"{lossy.get('caution') or 'sub-pixel accuracy is not expected'}."
        )
    counts = series.status_counts
    if counts["ok"] < FEW_OK_POINTS:
        out.append(
            f"Only {counts['ok']} frames were measured as ok (fewer than {FEW_OK_POINTS}); "
            "exponents and intervals rest on few points."
        )
    if counts["not-found"]:
        found = count(counts["not-found"], "frame had", "frames had")
        out.append(f"{found} no drop found (status not-found).")
    if counts["at-edge"]:
        edge = count(counts["at-edge"], "frame had", "frames had")
        out.append(f"{edge} the drop touching the image edge (status at-edge).")
    dom = verdict.dominant if verdict else None
    end = _num(dom.window[1]) if dom and dom.window else None
    t0 = _num(verdict.t0) if verdict else None
    if end is not None and t0 is not None:
        tau = np.asarray(series.time, dtype=np.float64) - t0
        at_edge = status_mask(series.status, "at-edge")
        after = np.flatnonzero(at_edge & np.isfinite(tau) & (tau >= end * (1 - 1e-9)))
        if len(after):
            out.append(
                f"The {dom.key} regime may be cut by the field of view: its window "
                f"ends at τ = {end * 1e3:.3g} ms and "
                f"{count(len(after), 'later frame is', 'later frames are')} "
                "at-edge; the regime may last longer than the data show."
            )
    said = [f"{w.message[0].upper()}{w.message[1:]} [{w.code}]." for w in verdict.warnings]
    if not verdict.success:
        out.append(f"The fit did not succeed: {verdict.reason or 'no reason given'}.")
    elif not verdict.decidable and not any(w.code == "undecidable" for w in verdict.warnings):
        out.append("The data do not decide between the candidate regimes.")
    out += said
    if not dom:
        out.append("No dominant regime was found.")
    return out


def _fluid_text(fluid) -> str:
    parts = [str(fluid.name) if fluid.name else "unnamed"]
    if _finite(fluid.glycerol_mass_fraction):
        parts.append(f"glycerol mass fraction {fluid.glycerol_mass_fraction:.3g}")
    if _finite(fluid.temperature):
        parts.append(f"{fluid.temperature - 273.15:.4g} °C")
    if _finite(fluid.surface_tension):
        parts.append(f"γ = {fluid.surface_tension * 1e3:.4g} mN/m")
    if _finite(fluid.viscosity):
        parts.append(f"η = {fluid.viscosity * 1e3:.4g} mPa s")
    if _finite(fluid.density):
        parts.append(f"ρ = {fluid.density:.4g} kg/m³")
    return ", ".join(parts)


def _sample_rows(series, experiment) -> list[tuple[str, str]]:
    origin = series.details.get("drop_radius_origin", "origin not given")
    rows = [
        ("geometry", str(series.geometry)),
        ("view", str(series.view)),
        ("frame rate", f"{_g(_num(series.frame_rate), 6)} Hz"),
        ("pixel size", f"{_g((_num(series.pixel_size) or math.nan) * 1e6)} µm"),
        ("drop radius", f"{_g((_num(series.drop_radius) or math.nan) * 1e3)} mm ({origin})"),
    ]
    for role in ("liquid", "medium") if experiment is not None else ():
        fluid = getattr(experiment, role, None)
        if fluid is not None:
            rows.append((role, _fluid_text(fluid)))
    return rows


def _dominant_row(verdict) -> dict | None:
    dom = verdict.dominant if verdict else None
    if not dom:
        return None
    return {
        "regime": dom.key,
        "exponent_fit": _g(_num(dom.exponent_fit)),
        "exponent_ci": _pair(dom.exponent_ci),
        "exponent_sys_ci": _pair(dom.exponent_sys_ci),
        "exponent_combined_ci": _pair(dom.exponent_combined_ci),
        "exponent_theory": _g(_num(dom.exponent_theory)),
        "exponent_inside": bool(dom.exponent_inside),
        "coefficient_fit": _g(_num(dom.coefficient_fit)),
        "coefficient_ci": _pair(dom.coefficient_ci),
        "coefficient_sys_ci": _pair(dom.coefficient_sys_ci),
        "coefficient_combined_ci": _pair(dom.coefficient_combined_ci),
        "coefficient_theory": _g(None if dom.regime.prefactor is None else dom.regime.prefactor),
        "prefactor_fit": _g(_num(dom.prefactor_fit)),
        "prefactor_ci": _pair(dom.prefactor_fit_ci),
        "prefactor_sys_ci": _pair(dom.prefactor_sys_ci),
        "prefactor_combined_ci": _pair(dom.prefactor_combined_ci),
        "prefactor_unit": dom.prefactor_unit,
        "window": _ms_window(dom.window),
    }


def _candidate_row(c, references) -> dict:
    n = _num(c.exponent_fit)
    return {
        "reference": references.get(c.key),
        "rank": c.rank,
        "regime": c.key,
        "exponent_theory": "ELS log" if c.regime.logarithmic else _g(_num(c.exponent_theory)),
        "exponent_fit": "—" if n is None else f"{_g(n)} {_pair(c.exponent_ci, 3)}",
        "exponent_combined": _pair(c.exponent_combined_ci, 3),
        "coefficient_fit": (
            f"{_g(_num(c.coefficient_fit), 3)} {_pair(c.coefficient_combined_ci, 3)}"
        ),
        "coefficient_theory": _g(None if c.regime.prefactor is None else c.regime.prefactor, 3),
        "prefactor_fit": f"{_g(_num(c.prefactor_fit))} {c.prefactor_unit}".strip(),
        "window": _ms_window(c.window),
        "aic": _g(_num(c.aic)),
        "consistent": bool(c.consistent),
        "note": c.note or c.reason or "",
    }


def _crossover_text(x) -> str:
    return (
        f"{x.early} → {x.late} at τ = {_g((_num(x.time) or 0) * 1e3)} "
        f"ms (95 % {_ms_window(x.time_ci)}; predicted "
        f"{_g((_num(x.predicted_time) or math.nan) * 1e3)} ms)"
    )


def _measurement_rows(series, verdict) -> list[tuple[str, str]]:
    counts = series.status_counts
    t0 = _num(verdict.t0) if verdict else None
    measured = (
        f"{_g((_num(series.contact_time) or math.nan) * 1e3)} ± "
        f"{_g((_num(series.contact_time_err) or math.nan) * 1e3, 2)} ms"
    )
    fitted = (
        f"{_g((t0 or math.nan) * 1e3)} ms, bracket "
        f"{_ms_window(verdict.t0_bracket if verdict else None)}"
    )
    return [
        ("frames", _g(len(series))),
        ("status counts", ", ".join(f"{k}: {v}" for k, v in counts.items()) or "—"),
        ("contact time t_c (measured)", measured),
        ("contact method", str(series.details.get("contact_method", "—"))),
        ("contact signals disagree", str(series.details.get("contact_disagreement") or "no")),
        ("contact time t₀ (fit)", fitted),
        ("time origin", origin_sentence(time_origin(series, verdict))),
        ("unresolved criterion", str(series.details.get("unresolved_criterion", "—"))),
        ("local exponent method", str(verdict.local.method if verdict and verdict.local else "—")),
    ]


def _provenance_rows(series, verdict) -> list[tuple[str, str]]:
    prov = series.provenance
    settings = verdict.settings if verdict else {}
    options = {k: settings[k] for k in ("bootstrap", "seed", "loss") if k in settings}
    return [
        ("tool", f"{prov.get('tool', 'dropkin')} {prov.get('version', '?')}"),
        ("report written by", f"dropkin {__version__}"),
        ("input", str(prov.get("input", "—"))),
        ("SHA-256", str(prov.get("sha256", "—"))),
        ("experiment file", str(prov.get("experiment_file") or "—")),
        ("measure options", json.dumps(prov.get("options") or {}, ensure_ascii=False)),
        ("fit options", json.dumps(options, ensure_ascii=False)),
        *_run_rows(prov.get("run")),
    ]


def _run_rows(run) -> list[tuple[str, str]]:
    """The measuring run of ``measure.json`` (absent from files of older versions)."""
    if not isinstance(run, dict):
        return []
    versions = run.get("versions") or {}
    return [
        ("command line", str(run.get("command_line") or "— (called from Python)")),
        ("measured (UTC)", str(run.get("created_utc", "—"))),
        ("python, platform", f"{run.get('python', '?')}, {run.get('platform', '?')}"),
        ("versions", ", ".join(f"{k} {v}" for k, v in versions.items() if v)),
    ]


def _context(series, verdict, experiment, plot_files, overlays_dir):
    numbers = verdict.numbers
    crossovers = verdict.crossovers if verdict else ()
    title = Path(str(series.provenance.get("input") or Path(overlays_dir).parent.name)).name
    references, cited = law_references(verdict)
    return {
        "title": title,
        "success": bool(verdict.success),
        "reason": verdict.reason or "no reason given",
        "sentence": verdict.sentence or verdict.reason or "No verdict.",
        "decidable": bool(verdict.decidable),
        "origin": origin_sentence(time_origin(series, verdict)),
        "dominant": _dominant_row(verdict),
        "crossovers": [{"text": _crossover_text(x)} for x in crossovers],
        "warnings": report_warnings(series=series, verdict=verdict),
        "sample": _sample_rows(series, experiment),
        "numbers": [(label, _g(_num(getattr(numbers, name)))) for name, label in _NUMBER_LABELS]
        if numbers is not None
        else [],
        "candidates": [_candidate_row(c, cited) for c in verdict.candidates],
        "references": references,
        "glossary": glossary(verdict),
        "plots": [
            {"name": p.stem, "uri": _data_uri(p), "caption": _PLOT_CAPTIONS.get(p.stem, p.stem)}
            for p in plot_files
        ],
        "overlays": overlay_frames(overlays_dir, series, verdict),
        "measurement": _measurement_rows(series, verdict),
        "provenance": _provenance_rows(series, verdict),
    }


@functools.cache
def _template():
    import jinja2

    env = jinja2.Environment(
        loader=jinja2.PackageLoader("dropkin.report", "templates"),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
    )
    return env.get_template("report.html.j2")


def write_report(out_dir, *, series, verdict, experiment=None, overlays_dir=None) -> Path:
    """Write ``out_dir/report.html``, one self-contained file; return its path.

    Parameters
    ----------
    out_dir : path
        The analysis folder. PNG figures already in ``out_dir/plots/`` (from
        `write_plots`; the overlay montage is left out) are inlined as base64
        data URIs, and so are the overlay frames, shown one at a time with a
        slider.
    series : RadiusSeries
        The radius series, with what ``measure.json`` holds.
    verdict : RegimeVerdict
        The regime verdict; a failed one gives a report that says why.
    experiment : dropkin.experiment.Experiment, optional
        Adds the liquid and the medium to the sample table.
    overlays_dir : path, optional
        The annotated frames (default ``out_dir/overlays``).

    Notes
    -----
    CSS is inline, there is no external URL; the one script steps the
    overlay frames. Every string from the inputs is HTML-escaped (jinja2
    autoescape). The file is written atomically.
    """
    out_dir = Path(out_dir)
    plot_files = [
        out_dir / "plots" / f"{name}.png"
        for name in _REPORT_PLOTS
        if (out_dir / "plots" / f"{name}.png").is_file()
    ]
    overlays_dir = Path(overlays_dir) if overlays_dir is not None else out_dir / "overlays"
    html = _template().render(**_context(series, verdict, experiment, plot_files, overlays_dir))
    return write_text_atomic(out_dir / "report.html", html)


def write_analysis_report(
    out_dir, *, series, verdict, experiment=None, overlays_dir=None, formats=("png",)
) -> Path:
    """Write an analysis' plots (``plots/``, in `formats`) and its report; return the
    report's path.

    See :func:`~dropkin.report.write_plots` and :func:`write_report`; the
    report inlines the PNG figures, so ``png`` is always written.
    """
    formats = ("png", *(f for f in formats if f != "png"))
    write_plots(
        out_dir, series=series, verdict=verdict, overlays_dir=overlays_dir, formats=formats
    )
    return write_report(
        out_dir, series=series, verdict=verdict, experiment=experiment, overlays_dir=overlays_dir
    )
