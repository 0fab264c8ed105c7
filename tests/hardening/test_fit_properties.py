"""Property tests (hypothesis): the fits and the verdict on any series.

Random series go into :mod:`dropkin.scaling` the way ``dropkin fit`` sends
them (see ``dropkin.pipeline._fit.fit_measurement``): lengths from 0 up, NaN and
infinite values, constant, decreasing, negative and zero radii, magnitudes
from 1e-12 to 1e6 s and m (and single values down to 1e-292 and up to 1e300;
subnormal floats, below 2.2e-308, are left out: no clock or ruler gives them),
duplicate and unsorted times, statuses mixed.

The only outcomes allowed:

- a result whose numbers are finite and agree with each other: every
  interval holds its estimate, the origin lies in its bracket, every window
  lies inside the data (times since the origin of points that were given),
  the point count is what the data hold, and the record converts to the
  ``fit.json`` form with ``json.dumps(..., allow_nan=False)`` (as
  ``dropkin fit`` writes it);
- a falsy result whose message is one line (a fit the data cannot support);
- a :class:`~dropkin.errors.DropkinError` with a one-line message (a bad call).

The consistency rules are the definitions in the docstrings of ``LawFit``,
``BlendFit``, ``CandidateFit`` and ``RegimeVerdict`` (a 95 % interval holds
its estimate; a window is a span of the points used). Measured: 6 to 35 s on
2 cores shared with other work, depending on the examples drawn.
"""

from __future__ import annotations

import json
import math

import numpy as np
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st

from dropkin.errors import DropkinError
from dropkin.fitting import (
    MIN_DECADES,
    MIN_POINTS,
    fit_broken_power_law,
    fit_log_law,
    fit_power_law,
    guess_power_law,
    local_exponent,
)
from dropkin.scaling import analyze_series, format_verdict, sample_numbers, verdict_to_dict

# Water drops of 1 mm in air (docs/physics.md §5.1, 20 °C; air from memory: 0.0181 mPa s,
# 1.204 kg/m^3); the numbers only choose the candidates, any sample would do.
WATER = sample_numbers(
    surface_tension=0.07274,
    viscosity=1.0016e-3,
    density=998.2,
    radius=1e-3,
    outer_viscosity=1.81e-5,
    outer_density=1.204,
)
STATUSES = ("ok", "before-contact", "unresolved", "not-found", "at-edge")
# Spoilers; the tiny one stays above the subnormal floats (below 2.2e-308 once scaled).
SPECIAL = (math.nan, math.inf, -math.inf, 0.0, -1.0, 1e300, 1e-280)
COMMON = {"deadline": None, "suppress_health_check": [HealthCheck.too_slow]}


def _floats(draw, n, low, high):
    """n floats from [low, high], subnormals left out."""
    values = st.floats(low, high, allow_subnormal=False)
    return np.array(draw(st.lists(values, min_size=n, max_size=n)), dtype=float)


@st.composite
def series(draw, max_size=40):
    """(time, radius, radius_err or None, status): a law, then spoiled at random."""
    n = draw(st.integers(0, max_size))
    t_scale = 10.0 ** draw(st.integers(-12, 6))
    r_scale = 10.0 ** draw(st.integers(-12, 6))
    spacing = draw(st.sampled_from(["even", "geometric", "random"]))
    if spacing == "even":
        t = np.arange(n, dtype=float)
    elif spacing == "geometric":
        t = np.geomspace(1.0, 10.0 ** draw(st.integers(0, 4)), n) if n else np.array([])
    else:
        t = np.sort(_floats(draw, n, 0, 1000))
    t = t * t_scale
    shape = draw(st.sampled_from(["power", "power", "constant", "decreasing", "log", "noise"]))
    t0 = float(t[min(2, n - 1)] * 0.9) if n else 0.0
    tau = np.clip(t - t0, 0.0, None)
    if shape == "power":
        n_exp = draw(st.floats(0.05, 1.5))
        r = r_scale * (tau / t_scale) ** n_exp
    elif shape == "constant":
        r = np.full(n, r_scale)
    elif shape == "decreasing":
        r = r_scale / (1.0 + tau / t_scale)
    elif shape == "log":
        x = np.clip(tau / (t_scale * (n + 1)), 1e-12, 0.3)
        r = -r_scale * x * np.log(x)
    else:
        r = r_scale * _floats(draw, n, 0, 10)
    if n and draw(st.booleans()):  # multiplicative noise
        noise = _floats(draw, n, -0.2, 0.2)
        r = r * (1.0 + noise)
    err = None if draw(st.booleans()) else np.abs(r) * draw(st.floats(1e-4, 0.2))
    if n:
        for _ in range(draw(st.integers(0, 3))):  # spoil a few values
            i = draw(st.integers(0, n - 1))
            target = draw(st.sampled_from(["t", "r", "e"]))
            value = draw(st.sampled_from(SPECIAL))
            if target == "t":
                t[i] = value * t_scale if math.isfinite(value) else value
            elif target == "r":
                r[i] = value
            elif err is not None:
                err[i] = value
        if draw(st.booleans()):  # a duplicated time
            i = draw(st.integers(0, n - 1))
            t[i] = t[max(i - 1, 0)]
        if draw(st.integers(0, 4)) == 0:  # unsorted
            t = t[::-1].copy()
    status = [
        "ok" if k > 2 or draw(st.booleans()) else draw(st.sampled_from(STATUSES)) for k in range(n)
    ]
    return t, r, err, status, t0


def _one_line(text):
    assert isinstance(text, str) and text.strip() and "\n" not in text, repr(text)


def _finite(*values):
    for v in values:
        assert isinstance(v, int | float) and math.isfinite(v), values


def _holds(interval, value, *, name):
    lo, hi = interval
    _finite(lo, hi, value)
    # Relative slack of 1e-9: an interval computed as exp(ln A ± z s) may round.
    slack = 1e-9 * max(abs(lo), abs(hi), abs(value))
    assert lo - slack <= value <= hi + slack, f"{name}: {value!r} outside {interval!r}"


def _holds_or_flagged(interval, value, flagged, *, name):
    """The estimate lies in its interval, or outside it and the record says so (outside_ci).

    Bootstrap percentile intervals are no longer widened to contain the
    estimate (issue 13): an estimate outside its interval must be flagged,
    and a flagged one must really lie outside.
    """
    if not flagged:
        _holds(interval, value, name=name)
        return
    lo, hi = interval
    _finite(lo, hi, value)
    assert not lo <= value <= hi, f"{name}: {value!r} flagged but inside {interval!r}"


def _data_span(t, r):
    """First and last time of the points a fit may use (finite, positive radius)."""
    t, r = np.asarray(t, float), np.asarray(r, float)
    keep = np.isfinite(t) & np.isfinite(r) & (r > 0)
    return (float(t[keep].min()), float(t[keep].max()), int(keep.sum())) if keep.any() else None


def _inside(window, origin, span, *, name):
    w0, w1 = window
    _finite(w0, w1, origin)
    assert 0 < w0 <= w1, f"{name}: window {window!r}"
    first, last, _ = span
    slack = 1e-9 * max(abs(first), abs(last), abs(origin), 1e-300)
    assert origin + w0 >= first - slack and origin + w1 <= last + slack, (
        f"{name}: window {window!r} from {origin!r} outside the data [{first!r}, {last!r}]"
    )


def check_law_fit(fit, t, r):
    if not fit:
        _one_line(fit.message)
        return
    span = _data_span(t, r)
    assert span is not None
    _finite(fit.exponent, fit.prefactor, fit.t0, fit.chi2, fit.aic, fit.bic, fit.decades)
    _finite(fit.pivot_time, fit.pivot_radius, fit.residual_rms, fit.noise_scale)
    assert fit.prefactor > 0 and fit.pivot_radius > 0 and fit.pivot_time > 0
    assert fit.chi2 >= 0 and fit.residual_rms >= 0
    for key in ("exponent", "prefactor", "pivot_radius", "t0"):
        flagged = key in fit.outside_ci
        _holds_or_flagged(getattr(fit, f"{key}_ci"), getattr(fit, key), flagged, name=key)
    _holds(fit.t0_bracket, fit.t0, name="t0_bracket")
    _holds(fit.t0_bracket, fit.t0_ci[0], name="t0_ci in t0_bracket")
    _holds(fit.t0_bracket, fit.t0_ci[1], name="t0_ci in t0_bracket")
    _inside(fit.window, fit.t0, span, name="LawFit")
    assert MIN_POINTS <= fit.n_points <= span[2]
    assert fit.decades >= MIN_DECADES - 1e-9
    decades = math.log10(fit.window[1]) - math.log10(fit.window[0])
    assert math.isclose(fit.decades, decades, rel_tol=1e-9, abs_tol=1e-12)


def check_blend_fit(fit, t, r):
    if not fit:
        _one_line(fit.message)
        return
    span = _data_span(t, r)
    _finite(fit.early_exponent, fit.late_exponent, fit.crossover_time, fit.crossover_radius)
    _finite(fit.t0, fit.chi2, fit.aic, fit.bic)
    assert fit.crossover_time > 0 and fit.crossover_radius > 0
    for key in ("early_exponent", "late_exponent", "crossover_time", "t0"):
        flagged = key in fit.outside_ci
        _holds_or_flagged(getattr(fit, f"{key}_ci"), getattr(fit, key), flagged, name=key)
    _holds(fit.t0_bracket, fit.t0, name="t0_bracket")
    _inside(fit.window, fit.t0, span, name="BlendFit")
    assert fit.n_points <= span[2]


def check_verdict(verdict, t, r, status):
    data = verdict_to_dict(verdict)
    json.dumps(data, allow_nan=False)  # what dropkin fit writes
    assert isinstance(format_verdict(verdict), str)
    if not verdict:
        _one_line(verdict.reason)
        return
    ok = np.array([s == "ok" for s in status], dtype=bool)
    span = _data_span(np.asarray(t)[ok], np.asarray(r)[ok])
    assert span is not None
    _finite(verdict.t0)
    _holds(verdict.t0_bracket, verdict.t0, name="t0_bracket")
    assert MIN_POINTS <= verdict.n_points <= span[2]
    _inside(verdict.time_range, verdict.t0, span, name="time_range")
    _one_line(verdict.sentence)
    assert verdict.dominant is None or verdict.dominant in verdict.candidates
    assert set(verdict.regimes) <= {c.key for c in verdict.candidates}
    lo, hi = verdict.time_range
    for c in verdict.candidates:
        if c.window is not None:
            _inside(c.window, verdict.t0, span, name=f"{c.key} window")
            slack = 1e-9 * hi
            assert c.window[0] >= lo - slack and c.window[1] <= hi + slack, (c.key, c.window)
        if c.fit is not None and math.isfinite(c.exponent_fit):
            ci = c.exponent_ci
            if all(math.isfinite(v) for v in ci):
                flagged = any("exponent" in k for k in c.fit.outside_ci)
                _holds_or_flagged(ci, c.exponent_fit, flagged, name=f"{c.key} exponent_ci")
        if math.isfinite(c.prefactor_fit):
            assert c.prefactor_fit > 0, c.key
    for x in verdict.crossovers:
        _finite(x.time)
        assert lo * (1 - 1e-9) <= x.time <= hi * (1 + 1e-9), (x.time, verdict.time_range)


def _call(function, *args, **kwargs):
    """The call's result, or None after a DropkinError with a one-line message."""
    try:
        result = function(*args, **kwargs)
    except DropkinError as exc:
        _one_line(str(exc))
        event(f"{function.__name__}: {type(exc).__name__}")
        return None
    if hasattr(result, "success"):  # see the share of each outcome: --hypothesis-show-statistics
        event(f"{function.__name__}: {'result' if result else 'falsy result'}")
    return result


@settings(max_examples=250, **COMMON)
@given(series(), st.sampled_from(["fixed", "bracket", "zero"]), st.sampled_from([None, 0.5]))
def test_power_law_fit(data, origin, exponent):
    t, r, err, _, t0 = data
    kwargs = {"radius_err": err, "exponent": exponent}
    if origin == "fixed":
        kwargs["t0"] = t0
    elif origin == "bracket":
        span = abs(t0) * 0.5
        kwargs["t0_bracket"] = (t0 - span, t0 + span)
    fit = _call(fit_power_law, t, r, **kwargs)
    if fit is not None:
        check_law_fit(fit, t, r)


@settings(max_examples=60, **COMMON)
@given(series(max_size=25))
def test_power_law_fit_with_bootstrap(data):
    t, r, err, _, t0 = data
    fit = _call(fit_power_law, t, r, radius_err=err, t0_bracket=(0.5 * t0, t0), bootstrap=8)
    if fit is not None:
        check_law_fit(fit, t, r)


@settings(max_examples=120, **COMMON)
@given(series(), st.floats(1e-3, 10.0), st.floats(1e-5, 1e-2))
def test_log_law_fit(data, speed, radius):
    t, r, err, _, t0 = data
    fit = _call(fit_log_law, t, r, capillary_speed=speed, drop_radius=radius, t0=t0)
    if fit is not None:
        check_law_fit(fit, t, r)


@settings(max_examples=60, **COMMON)
@given(series())
def test_broken_power_law_fit(data):
    t, r, err, _, t0 = data
    fit = _call(fit_broken_power_law, t, r, radius_err=err, t0=t0)
    if fit is not None:
        check_blend_fit(fit, t, r)


@settings(max_examples=150, **COMMON)
@given(series())
def test_first_guess_and_local_exponent(data):
    t, r, err, _, t0 = data
    guess = _call(guess_power_law, t, r, t0=t0)
    if guess is not None:
        _finite(*guess)
        assert guess[0] > 0
    local = _call(local_exponent, t, r, radius_err=err, t0=t0)
    if local is not None and local:
        arrays = [np.asarray(a, float) for a in (local.time, local.exponent)]
        assert len(arrays[0]) == len(arrays[1])
        assert np.isfinite(arrays[0]).all() and (arrays[0] > 0).all()
        assert np.all(np.diff(arrays[0]) > 0)


@settings(max_examples=150, **COMMON)
@given(
    series(),
    st.sampled_from(["coalescence", "spreading"]),
    st.sampled_from(["side", "bottom"]),
    st.sampled_from(["measured", "bracketed", "fixed", "none"]),
    st.sampled_from([0, 4]),
)
def test_analyze_series(data, geometry, view, origin, bootstrap):
    t, r, err, status, t0 = data
    kwargs = {"contact_time": t0, "numbers": WATER, "geometry": geometry, "view": view}
    if origin == "bracketed":
        kwargs["contact_bracket"] = (t0 - abs(t0) * 0.1, t0 + abs(t0) * 0.1)
    elif origin == "fixed":
        kwargs.update(contact_time=None, t0=t0)
    elif origin == "none":
        kwargs["contact_time"] = None
    verdict = _call(analyze_series, t, r, err, status, bootstrap=bootstrap, **kwargs)
    if verdict is not None:
        check_verdict(verdict, t, r, status)


def _cell(value) -> str:
    return "" if value is None or not math.isfinite(value) else repr(float(value))


@settings(max_examples=40, **COMMON)
@given(series(max_size=30))
def test_dropkin_fit_on_random_series(tmp_path_factory, data):
    """End to end: the series as a radius.csv through ``dropkin fit`` (click's CliRunner).

    Exit 0 with a complete fit.json whose verdict succeeded, or exit 1 with one
    line on stderr (and, when fit.json was written, a complete failed verdict).
    """
    from click.testing import CliRunner

    from dropkin.cli import main

    t, r, err, status, t0 = data
    folder = tmp_path_factory.mktemp("fit")
    rows = ["frame,time_s,since_contact_s,radius_m,radius_err_m,status"]
    # A well-formed file (the reader's refusals are the corpus's business): rows
    # in time order, a frame without a usable radius marked not-found.
    previous = -math.inf
    for k in np.argsort(t, kind="stable"):
        if not (math.isfinite(t[k]) and t[k] > previous):
            continue
        previous = t[k]
        e = None if err is None or not err[k] >= 0 else err[k]
        radius, state = r[k], status[k]
        if not (math.isfinite(radius) and radius > 0):
            radius, e, state = None, None, "not-found"
        since = t[k] - t0 if t[k] >= t0 else None
        cells = (_cell(t[k]), _cell(since), _cell(radius), _cell(e), state)
        rows.append(f"{len(rows) - 1}," + ",".join(cells))
    (folder / "radius.csv").write_text("\n".join(rows) + "\n", encoding="utf-8")
    (folder / "experiment.toml").write_text(
        '[setup]\ngeometry = "coalescence"\n[liquid]\nname = "water"\n[drops]\nradius = "1 mm"\n',
        encoding="utf-8",
    )
    out = folder / "out"
    result = CliRunner().invoke(
        main, ["fit", str(folder / "radius.csv"), "-o", str(out), "--bootstrap", "4"]
    )
    crashed = result.exception is not None and not isinstance(result.exception, SystemExit)
    assert not crashed, result.exc_info
    assert result.exit_code in (0, 1), result.output
    written = out / "fit.json"
    fit = json.loads(written.read_text(encoding="utf-8")) if written.exists() else None
    if result.exit_code == 0:
        assert fit is not None and fit["success"] is True
        event("dropkin fit: exit 0")
    else:
        lines = result.stderr.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("dropkin: error: "), result.stderr
        assert fit is None or fit["success"] is False
        event("dropkin fit: exit 1")
