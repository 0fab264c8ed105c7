"""The self-contained HTML report of one analysis.

One file, ``OUT/report.html``: CSS inline, every image a base64 ``data:`` URI,
no external reference and no JavaScript. Every string from the inputs passes
through jinja2's autoescaping.
"""

from __future__ import annotations

import base64
import json
import math
from pathlib import Path

from .._atomic import completed_files, write_text_atomic
from .._version import __version__
from ._plots import PLOT_NAMES, write_plots

__all__ = ["write_report", "write_analysis_outputs", "report_warnings", "FEW_OK_POINTS"]

#: Fewer ok frames than this earn a warning.
FEW_OK_POINTS = 15

_PLOT_CAPTIONS = {
    "radius": "Radius against time since contact (log-log). Solid: dominant fit over its "
    "window; dashed: consistent candidate laws; grey: frames not measured as ok.",
    "local_exponent": "Local exponent d ln r / d ln τ with its band; horizontal lines at "
    "the candidates' theoretical exponents.",
    "residuals": "Relative residuals of the dominant fit for the ok frames.",
    "overlays": "Annotated frames (montage).",
}

_TEMPLATE = """<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<title>dropkin report: {{ title }}</title>
<style>
body { font-family: sans-serif; font-size: 14px; color: #1a1a1a; max-width: 62em;
       margin: 1.5em auto; padding: 0 1em; line-height: 1.45; }
h1 { font-size: 1.5em; border-bottom: 3px solid #0072B2; padding-bottom: .2em; }
h2 { font-size: 1.15em; margin-top: 1.8em; color: #0a3d62; }
.scroll { overflow-x: auto; margin: .5em 0; }
table { border-collapse: collapse; }
th, td { border-bottom: 1px solid #d0d0d0; padding: .2em .7em; text-align: left;
         vertical-align: top; }
th { background: #eef3f7; }
td.num { font-variant-numeric: tabular-nums; }
tr.yes td:first-child { border-left: 4px solid #009E73; }
tr.no td:first-child { border-left: 4px solid #cccccc; }
.verdict { background: #f3f8fc; border-left: 5px solid #0072B2; padding: .6em 1em; }
.undecided { border-left-color: #D55E00; }
.warn { background: #fff6ea; border-left: 5px solid #E69F00; padding: .4em 1em; }
.warn li { margin: .2em 0; }
figure { margin: 1em 0; }
figure img { max-width: 100%; height: auto; border: 1px solid #e0e0e0; }
figcaption { font-size: .9em; color: #444; }
.overlays img { width: 30%; margin: .3%; border: 1px solid #e0e0e0; }
code { font-size: .92em; word-break: break-all; }
</style>
</head>
<body>
<h1>dropkin report: {{ title }}</h1>

<h2>Verdict</h2>
<div class="verdict{% if not decidable %} undecided{% endif %}">
<p>{{ sentence }}</p>
{% if dominant %}
<p><strong>Dominant regime: {{ dominant.regime }}</strong> —
exponent n = {{ dominant.exponent_fit }} (95 % interval {{ dominant.exponent_ci }};
theory {{ dominant.exponent_theory }}),
prefactor C = {{ dominant.prefactor_fit }} (95 % interval {{ dominant.prefactor_ci }};
theory {{ dominant.prefactor_theory }}), window τ = {{ dominant.window }}.</p>
{% endif %}
{% for c in crossovers %}
<p>Crossover {{ c.text }}</p>
{% endfor %}
</div>

{% if warnings %}
<h2>Warnings</h2>
<ul class="warn">
{% for w in warnings %}<li>{{ w }}</li>
{% endfor %}</ul>
{% endif %}

<h2>Sample</h2>
<div class="scroll"><table>
{% for label, value in sample %}<tr><th>{{ label }}</th><td>{{ value }}</td></tr>
{% endfor %}</table></div>

<h2>Dimensionless numbers and scales</h2>
<div class="scroll"><table>
{% for label, value in numbers %}<tr><th>{{ label }}</th><td class="num">{{ value }}</td></tr>
{% endfor %}</table></div>

<h2>Candidate regimes</h2>
<div class="scroll"><table>
<tr><th>rank</th><th>regime</th><th>n theory</th><th>n fit [95 %]</th><th>C fit</th>
<th>C theory</th><th>window τ</th><th>AIC</th><th>consistent</th><th>note</th></tr>
{% for c in candidates %}<tr class="{{ 'yes' if c.consistent else 'no' }}">
<td>{{ c.rank }}</td><td>{{ c.regime }}</td><td class="num">{{ c.exponent_theory }}</td>
<td class="num">{{ c.exponent_fit }}</td><td class="num">{{ c.prefactor_fit }}</td>
<td class="num">{{ c.prefactor_theory }}</td><td class="num">{{ c.window }}</td>
<td class="num">{{ c.aic }}</td><td>{{ 'yes' if c.consistent else 'no' }}</td>
<td>{{ c.note }}</td></tr>
{% endfor %}</table></div>

<h2>Plots</h2>
{% for p in plots %}
<figure><img src="{{ p.uri }}" alt="{{ p.name }}">
<figcaption>{{ p.caption }}</figcaption></figure>
{% else %}<p>No plots.</p>
{% endfor %}

<h2>Overlays</h2>
<div class="overlays">
{% for o in overlays %}<img src="{{ o.uri }}" alt="{{ o.name }}" title="{{ o.name }}">
{% else %}<p>No overlay frames.</p>
{% endfor %}</div>

<h2>Measurement</h2>
<div class="scroll"><table>
{% for label, value in measurement %}<tr><th>{{ label }}</th><td>{{ value }}</td></tr>
{% endfor %}</table></div>

<h2>Provenance</h2>
<div class="scroll"><table>
{% for label, value in provenance %}<tr><th>{{ label }}</th><td><code>{{ value }}</code></td></tr>
{% endfor %}</table></div>
</body>
</html>
"""


def _finite(value) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)


def _g(value, digits=4) -> str:
    if value is None:
        return "—"
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return str(value)
    return f"{value:.{digits}g}" if math.isfinite(value) else "—"


def _pair(pair, digits=4, scale=1.0, unit="") -> str:
    if not pair or len(pair) != 2 or not all(_finite(v) for v in pair):
        return "—"
    return f"[{_g(pair[0] * scale, digits)}, {_g(pair[1] * scale, digits)}]{unit}"


def _ms_window(pair) -> str:
    return _pair(pair, 3, 1e3, " ms")


def _data_uri(path: Path) -> str:
    kind = {".png": "png", ".svg": "svg+xml", ".jpg": "jpeg", ".jpeg": "jpeg"}
    mime = kind.get(path.suffix.lower(), "png")
    data = base64.b64encode(path.read_bytes()).decode("ascii")
    return f"data:image/{mime};base64,{data}"


def report_warnings(*, series: dict, measure_info: dict, fit: dict) -> list[str]:
    """Plain-text warnings about the measurement and the verdict.

    Few ok frames, frames whose drop was not found or touched the image edge,
    a dominant regime whose window ends where at-edge frames begin (the field
    of view cut it), a failed or undecided verdict.
    """
    out = []
    status = list(series.get("status", ()))
    counts = dict(measure_info.get("status_counts") or {})
    for name in ("ok", "not-found", "at-edge", "unresolved"):
        counts.setdefault(name, status.count(name))
    if counts["ok"] < FEW_OK_POINTS:
        out.append(
            f"Only {counts['ok']} frames were measured as ok (fewer than {FEW_OK_POINTS}); "
            "exponents and intervals rest on few points."
        )
    if counts["not-found"]:
        out.append(f"{counts['not-found']} frame(s) had no drop found (status not-found).")
    if counts["at-edge"]:
        out.append(
            f"{counts['at-edge']} frame(s) had the drop touching the image edge (status at-edge)."
        )
    dom = fit.get("dominant") or {}
    window = dom.get("window_s")
    t0 = (fit.get("contact") or {}).get("t0_s")
    if window and _finite(window[1]) and _finite(t0) and "time_s" in series:
        after = [
            t - t0
            for t, s in zip(series["time_s"], status, strict=False)
            if s == "at-edge" and _finite(t) and t - t0 >= window[1] * (1 - 1e-9)
        ]
        if after:
            out.append(
                f"The {dom.get('regime')} regime may be cut by the field of view: its window "
                f"ends at τ = {window[1] * 1e3:.3g} ms and {len(after)} later frame(s) are "
                "at-edge; the regime may last longer than the data show."
            )
    if not fit.get("success", True):
        out.append(f"The fit did not succeed: {fit.get('reason') or 'no reason given'}.")
    elif not fit.get("decidable", True):
        out.append("The data do not decide between the candidate regimes.")
    if not dom:
        out.append("No dominant regime was found.")
    return out


def _sample_rows(measure_info: dict, experiment) -> list[tuple[str, str]]:
    rows = [
        ("geometry", str(measure_info.get("geometry", "—"))),
        ("view", str(measure_info.get("view", "—"))),
        ("frame rate", f"{_g(measure_info.get('frame_rate_hz'), 6)} Hz"),
        ("pixel size", f"{_g((measure_info.get('pixel_size_m') or math.nan) * 1e6)} µm"),
        (
            "drop radius",
            (
                f"{_g((measure_info.get('drop_radius_m') or math.nan) * 1e3)} mm"
                f" ({measure_info.get('drop_radius_origin', 'origin not given')})"
            ),
        ),
    ]
    if experiment is None:
        return rows
    for role in ("liquid", "medium"):
        fluid = getattr(experiment, role, None)
        if fluid is None:
            continue
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
        rows.append((role, ", ".join(parts)))
    return rows


_NUMBER_LABELS = {
    "ohnesorge": "Ohnesorge number Oh",
    "bond": "Bond number Bo",
    "viscosity_ratio": "viscosity ratio η/η_o",
    "ohnesorge_outer": "outer Ohnesorge number Oh_o",
    "density_ratio": "density ratio ρ_o/ρ",
    "viscous_time_s": "viscous time (s)",
    "inertial_time_s": "inertial time (s)",
    "capillary_length_m": "capillary length (m)",
    "capillary_speed_m_per_s": "capillary speed γ/η (m/s)",
}


def _context(out_dir, series, measure_info, fit, experiment, plot_files):
    prov = measure_info.get("provenance") or {}
    dom = fit.get("dominant")
    dominant = None
    if dom:
        match = next(
            (c for c in fit.get("candidates") or [] if c.get("regime") == dom.get("regime")), {}
        )
        dominant = {
            "regime": dom.get("regime"),
            "exponent_fit": _g(dom.get("exponent_fit")),
            "exponent_ci": _pair(dom.get("exponent_ci")),
            "exponent_theory": _g(dom.get("exponent_theory")),
            "prefactor_fit": _g(dom.get("prefactor_fit")),
            "prefactor_ci": _pair(match.get("prefactor_fit_ci")),
            "prefactor_theory": _g(dom.get("prefactor_theory")),
            "window": _ms_window(dom.get("window_s")),
        }
    candidates = [
        {
            "rank": c.get("rank", "—"),
            "regime": c.get("regime", "?"),
            "exponent_theory": "ELS log" if c.get("logarithmic") else _g(c.get("exponent_theory")),
            "exponent_fit": (
                f"{_g(c.get('exponent_fit'))} {_pair(c.get('exponent_ci'), 3)}"
                if _finite(c.get("exponent_fit"))
                else "—"
            ),
            "prefactor_fit": _g(c.get("prefactor_fit")),
            "prefactor_theory": _g(c.get("prefactor_theory")),
            "window": _ms_window(c.get("window_s")),
            "aic": _g(c.get("aic")),
            "consistent": bool(c.get("consistent")),
            "note": c.get("note") or c.get("numbers_reason") or "",
        }
        for c in fit.get("candidates") or []
    ]
    crossovers = [
        {
            "text": f"{x.get('from')} → {x.get('to')} at τ = {_g((x.get('time_s') or 0) * 1e3)} "
            f"ms (95 % {_ms_window(x.get('time_ci_s'))}; predicted "
            f"{_g((x.get('predicted_time_s') or math.nan) * 1e3)} ms)"
        }
        for x in fit.get("crossovers") or []
    ]
    numbers = [(_NUMBER_LABELS.get(k, k), _g(v)) for k, v in (fit.get("numbers") or {}).items()]
    plots = [
        {"name": p.stem, "uri": _data_uri(p), "caption": _PLOT_CAPTIONS.get(p.stem, p.stem)}
        for p in plot_files
    ]
    overlays = [
        {"name": p.stem, "uri": _data_uri(p)}
        for p in completed_files(Path(out_dir) / "overlays", "*.png")
    ]
    counts = measure_info.get("status_counts") or {}
    contact = fit.get("contact") or {}
    measurement = [
        ("frames", _g(measure_info.get("frames"))),
        ("status counts", ", ".join(f"{k}: {v}" for k, v in counts.items()) or "—"),
        (
            "contact time (measured)",
            (
                f"{_g((measure_info.get('contact_time_s') or math.nan) * 1e3)} ± "
                f"{_g((measure_info.get('contact_time_err_s') or math.nan) * 1e3, 2)} ms"
            ),
        ),
        ("contact method", str(measure_info.get("contact_method", "—"))),
        (
            "contact time (fit)",
            (
                f"{_g((contact.get('t0_s') or math.nan) * 1e3)} ms, bracket "
                f"{_ms_window(contact.get('bracket_s'))}"
            ),
        ),
        ("unresolved criterion", str(measure_info.get("unresolved_criterion", "—"))),
        ("local exponent method", str((fit.get("local_exponent") or {}).get("method", "—"))),
    ]
    settings = fit.get("settings") or {}
    provenance = [
        ("tool", f"{prov.get('tool', 'dropkin')} {prov.get('version', '?')}"),
        ("report written by", f"dropkin {__version__}"),
        ("input", str(prov.get("input", "—"))),
        ("SHA-256", str(prov.get("sha256", "—"))),
        ("experiment file", str(prov.get("experiment_file") or "—")),
        ("measure options", json.dumps(prov.get("options") or {}, ensure_ascii=False)),
        (
            "fit options",
            json.dumps(
                {k: settings[k] for k in ("bootstrap", "seed", "loss") if k in settings},
                ensure_ascii=False,
            ),
        ),
    ]
    title = Path(str(prov.get("input") or Path(out_dir).name)).name
    return {
        "title": title,
        "sentence": fit.get("sentence") or fit.get("reason") or "No verdict.",
        "decidable": bool(fit.get("decidable")),
        "dominant": dominant,
        "crossovers": crossovers,
        "warnings": report_warnings(series=series, measure_info=measure_info, fit=fit),
        "sample": _sample_rows(measure_info, experiment),
        "numbers": numbers,
        "candidates": candidates,
        "plots": plots,
        "overlays": overlays,
        "measurement": measurement,
        "provenance": provenance,
    }


def write_report(out_dir, *, series: dict, measure_info: dict, fit: dict, experiment=None) -> Path:
    """Write ``out_dir/report.html``, one self-contained file; return its path.

    Parameters
    ----------
    out_dir : path
        The analysis folder. PNG figures already in ``out_dir/plots/`` (from
        `write_plots`) and overlay frames in ``out_dir/overlays/`` are inlined
        as base64 data URIs.
    series : dict
        The radius series, as `dropkin.series.read_radius_csv` returns it.
    measure_info : dict
        The contents of ``measure.json``.
    fit : dict
        The contents of ``fit.json``.
    experiment : dropkin.experiment.Experiment, optional
        Adds the liquid and the medium to the sample table.

    Notes
    -----
    CSS is inline, there is no external URL and no JavaScript; every string
    from the inputs is HTML-escaped (jinja2 autoescape). The file is written
    atomically.
    """
    import jinja2

    out_dir = Path(out_dir)
    plot_files = [
        out_dir / "plots" / f"{name}.png"
        for name in PLOT_NAMES
        if (out_dir / "plots" / f"{name}.png").is_file()
    ]
    env = jinja2.Environment(autoescape=True, undefined=jinja2.StrictUndefined)
    html = env.from_string(_TEMPLATE).render(
        **_context(out_dir, series, measure_info, fit, experiment, plot_files)
    )
    return write_text_atomic(out_dir / "report.html", html)


def _read_experiment(measure_info: dict):
    from ..errors import DropkinError
    from ..experiment import read_experiment

    path = (measure_info.get("provenance") or {}).get("experiment_file")
    if not path:
        return None
    try:
        return read_experiment(path)
    except (DropkinError, OSError, ValueError):
        return None


def write_analysis_outputs(out_dir, *, experiment=None) -> Path:
    """Read an analysis folder's three files; write its plots and its report.

    The files are ``radius.csv``, ``measure.json`` and ``fit.json``.

    Without `experiment`, the experiment file named in the measurement's
    provenance is read, when it is still there. Returns the report's path.
    """
    from ..series import read_radius_csv

    out_dir = Path(out_dir)
    series = read_radius_csv(out_dir / "radius.csv")
    measure_info = json.loads((out_dir / "measure.json").read_text(encoding="utf-8"))
    fit = json.loads((out_dir / "fit.json").read_text(encoding="utf-8"))
    if experiment is None:
        experiment = _read_experiment(measure_info)
    write_plots(out_dir, series=series, measure_info=measure_info, fit=fit)
    return write_report(
        out_dir, series=series, measure_info=measure_info, fit=fit, experiment=experiment
    )
