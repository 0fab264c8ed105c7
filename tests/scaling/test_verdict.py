"""The regime verdict: its sentence, its fit.json structure, undecidable cases, failure paths."""

import json
import math

import numpy as np
import pytest

from dropkin.errors import FitError
from dropkin.fitting import harmonic_blend
from dropkin.scaling import (
    RegimeVerdict,
    analyze_series,
    format_verdict,
    regime,
    sample_numbers,
    verdict_to_dict,
)

AIR = {"outer_viscosity": 1.8e-5, "outer_density": 1.2}  # docs/architecture.md's example medium
# docs/physics.md §5.1 (water, 20 °C), §5.2 (glycerol, 20 °C; γ from CRC, M), §5.5
# (50 wt % glycerol–water: Cheng viscosity, Volk density; γ from memory, M),
# §5.4 (100 cSt silicone oil, nominal).
WATER = sample_numbers(
    surface_tension=0.07274, viscosity=1.0016e-3, density=998.207, radius=1e-3, **AIR
)
GLYCEROL = sample_numbers(
    surface_tension=0.0634, viscosity=1.414, density=1261.1, radius=1e-3, **AIR
)
GW50 = sample_numbers(
    surface_tension=0.068, viscosity=6.002e-3, density=1126.23, radius=1e-3, **AIR
)
PDMS100 = sample_numbers(
    surface_tension=0.0209, viscosity=96.5e-3, density=964.5, radius=0.5e-3, **AIR
)

DESIGN_CANDIDATE_KEYS = {
    "regime",
    "exponent_theory",
    "prefactor_theory",
    "prefactor_fit",
    "exponent_fit",
    "exponent_ci",
    "window_s",
    "aic",
    "consistent",
}
DESIGN_DOMINANT_KEYS = {
    "regime",
    "exponent_theory",
    "exponent_fit",
    "exponent_ci",
    "prefactor_fit",
    "prefactor_theory",
    "window_s",
}
DESIGN_CROSSOVER_KEYS = {"from", "to", "time_s", "radius_m", "predicted_time_s"}


def camera(law, tau_a, tau_b, *, frame, offset=0.4, noise=1e-6, seed=0, first=5):
    """Seeded synthetic recording of ``r = law(τ)``: ok frames from τ_a to τ_b."""
    rng = np.random.default_rng(seed)
    t0 = (first + offset) * frame
    t = np.arange(int((t0 + tau_b) / frame) + 1) * frame
    tau = t - t0
    ok = (tau >= tau_a) & (tau <= tau_b)
    r = np.full(t.size, np.nan)
    r[ok] = law(tau[ok]) + rng.normal(0.0, noise, ok.sum())
    status = np.where(tau <= 0, "before-contact", np.where(ok, "ok", "unresolved"))
    err = np.where(ok, noise, np.nan)
    return t, r, err, status, (first * frame, (first + 1) * frame), t0


def analyze(t, r, err, status, bracket, numbers, geometry="coalescence", **kw):
    kw.setdefault("bootstrap", 50)
    return analyze_series(
        t,
        r,
        err,
        status,
        contact_time=sum(bracket) / 2,
        contact_bracket=bracket,
        numbers=numbers,
        geometry=geometry,
        **kw,
    )


def inertial_water(seed=0, **kw):
    law = regime("inertial").law(WATER)
    frame = 2e-6
    data = camera(lambda tau: law(tau, 1.2), 4e-6, 2e-3, frame=frame, noise=2e-6, seed=seed)
    return data, analyze(*data[:5], WATER, seed=seed, **kw)


def test_inertial_water_verdict_names_the_regime_and_the_evidence():
    (t, r, err, status, bracket, t0), v = inertial_water()
    assert v and v.decidable and v.regimes == ("inertial",)
    # Synthetic truth n = 1/2 and D0 = 1.2 (catalogue value); 2.7 decades with
    # 1-px noise give n to a few 1e-3 (bound 0.01) and C to 2 %.
    assert abs(v.dominant.exponent_fit - 0.5) < 0.01
    assert v.dominant.coefficient_fit == pytest.approx(1.2, rel=0.02)
    assert bracket[0] <= v.t0 <= bracket[1] and abs(v.t0 - t0) < 0.2 * 2e-6
    s = v.sentence
    assert "\n" not in s and s.count(". ") == 0 and s.endswith(".")
    assert s.startswith("Inertial over") and "agrees with 1/2" in s and "C = 1.2" in s
    # Issue 13: the dimensionless coefficient and the dimensional prefactor, named apart.
    assert "coefficient C = 1.20" in s and "prefactor A = 0.0197" in s and "m s^-1/2" in s
    assert "Oh = 0.00372" in s and "viscous-outer" in s  # the same-exponent rival it beat
    top = [c for c in v.candidates if c.rank == 1]
    assert [c.key for c in top] == ["inertial"] and top[0].consistent
    rivals = {c.key: c for c in v.candidates}
    # Same exponent, other groups: told apart by (b) and (c), not by (a) or (d).
    for key in ("viscous-outer", "inertial-outer", "diffusive"):
        assert rivals[key].exponent_ok and not rivals[key].numbers_ok
        assert rivals[key].delta_aic == pytest.approx(0.0, abs=1e-9)
    assert not rivals["inertially-limited-viscous"].exponent_ok


def test_fit_json_has_the_design_structure():
    (t, r, err, status, bracket, t0), v = inertial_water()
    d = verdict_to_dict(v)
    json.dumps(d, allow_nan=False)  # JSON-ready, no NaN
    assert {"numbers", "candidates", "dominant", "crossovers"} <= set(d)
    assert {"ohnesorge", "bond", "viscosity_ratio"} <= set(d["numbers"])
    assert d["numbers"]["ohnesorge"] == pytest.approx(WATER.ohnesorge)
    for c in d["candidates"]:
        assert DESIGN_CANDIDATE_KEYS <= set(c)
    assert DESIGN_DOMINANT_KEYS <= set(d["dominant"]) and d["crossovers"] == []
    top = d["candidates"][0]
    assert top["regime"] == d["dominant"]["regime"] == "inertial"
    assert top["exponent_theory"] == 0.5 and top["consistent"] is True
    # SI, times from the contact instant: the window starts at the first ok
    # frame's time since the fitted t0 (to rounding).
    first_ok = t[status == "ok"][0]
    assert top["window_s"][0] == pytest.approx(first_ok - v.t0, rel=1e-9)
    assert top["prefactor_theory"] == pytest.approx(1.2 * regime("inertial").group(WATER))
    lo, hi = top["exponent_ci"]
    assert lo <= top["exponent_fit"] <= hi
    assert d["sentence"] == v.sentence and d["decidable"] is True
    assert d["contact"]["t0_s"] == pytest.approx(v.t0) and "pivot" in d
    assert len(d["local_exponent"]["time_s"]) == len(v.local.time)


def test_verdict_is_reproducible_with_its_seed():
    a = json.dumps(verdict_to_dict(inertial_water(seed=3)[1]), allow_nan=False)
    b = json.dumps(verdict_to_dict(inertial_water(seed=3)[1]), allow_nan=False)
    assert a == b


def test_terminal_table_lists_every_candidate():
    _, v = inertial_water()
    text = format_verdict(v)
    lines = text.splitlines()
    assert lines[0] == v.sentence and "regime" in lines[2] and "a b c" in lines[2]
    for c in v.candidates:
        assert any(c.key in line for line in lines[3:])
    assert "✓ ✓ ✓" in next(line for line in lines if line.startswith("* "))


def test_viscous_log_law_verdict_on_glycerol():
    # ELS law with C = 1/π (docs/physics.md §2 A1), glycerol: u = γ/η ≈ 4.5 cm/s.
    u, big_r = GLYCEROL.capillary_speed, GLYCEROL.radius
    law = regime("viscous").law(GLYCEROL)
    tau_b = 0.3 * big_r / u
    data = camera(lambda tau: law(tau), tau_b / 300, tau_b, frame=tau_b / 1000, noise=2e-8)
    v = analyze(*data[:5], GLYCEROL)
    assert v.decidable and v.regimes == ("viscous",)
    assert "the log law's" in v.sentence
    assert v.dominant.coefficient_fit == pytest.approx(1 / math.pi, rel=0.02)
    # A pure power-law fit of this law reads well below 1 (docs/physics.md §2 A1:
    # its local exponent is 1 + 1/ln(uτ/R), 0.86 to 0.17 here), and agrees with
    # the law's own apparent exponent over the window (0.02, check (a)); the
    # linear ILV law (n = 1) fails check (a).
    d = v.dominant
    assert d.exponent_fit < 0.9 and abs(d.exponent_fit - d.exponent_expected) < 0.02
    ilv = next(c for c in v.candidates if c.key == "inertially-limited-viscous")
    assert not ilv.exponent_ok


def test_two_regimes_with_their_crossover():
    # Harmonic blend of ILV (C_v = 1) and inertial (D0 = 1.2) for 50 wt %
    # glycerol–water; the laws meet at t_c = (a2/a1)² (analytic), and the
    # catalogue predicts t_c = (D0/C_v)² Oh² τ_i (docs/physics.md §3): the same.
    a1 = GW50.capillary_speed
    a2 = 1.2 * regime("inertial").group(GW50)
    tc = (a2 / a1) ** 2
    data = camera(
        lambda tau: harmonic_blend(a1 * tau, a2 * tau**0.5),
        tc / 10,
        tc * 100,
        frame=tc / 25,
        noise=5e-8,
    )
    v = analyze(*data[:5], GW50, bootstrap=20)
    assert v.two_regime and v.decidable
    assert v.regimes == ("inertially-limited-viscous", "inertial")
    (x,) = v.crossovers
    assert x.time == pytest.approx(tc, rel=0.05)  # 5 %: noise of 1 % of the crossover radius
    assert x.radius == pytest.approx(a1 * tc, rel=0.05)
    assert x.predicted_time == pytest.approx(1.2**2 * GW50.ohnesorge**2 * GW50.inertial_time)
    d = verdict_to_dict(v)
    json.dumps(d, allow_nan=False)
    (cross,) = d["crossovers"]
    assert DESIGN_CROSSOVER_KEYS <= set(cross)
    assert (cross["from"], cross["to"]) == v.regimes
    assert cross["time_s"] == pytest.approx(x.time)
    assert {c["segment"] for c in d["candidates"]} == {"early", "late"}
    assert v.sentence.startswith("Inertially-limited-viscous then inertial, crossover at")


def test_an_exponent_no_regime_has_is_undecidable_and_says_so():
    # Synthetic n = 0.75 (between the ILV 1 and the inertial 1/2) for water.
    data = camera(lambda tau: 0.05 * tau**0.75, 4e-6, 2e-3, frame=2e-6, noise=1e-6)
    v = analyze(*data[:5], WATER)
    assert v and not v.decidable
    assert v.sentence.startswith("The data cannot decide: no catalogue regime passes the checks")
    assert "\n" not in v.sentence


def test_two_regimes_that_both_pass_are_a_tie():
    # Half a decade of a noisy Tanner law (C = 0.83; noise 7 % of r) for a small
    # 100 cSt drop:
    # the interval of n covers both 1/10 and 1/8, both prefactors are of order
    # one, and the numbers allow both (Bo < 1; gravity is always allowed).
    law = regime("tanner").law(PDMS100)
    data = camera(lambda tau: law(tau), 10.0, 30.0, frame=1.0, noise=1e-4)
    v = analyze(*data[:5], PDMS100, geometry="spreading")
    assert v and not v.decidable
    assert "cannot decide between" in v.sentence
    assert "tanner" in v.sentence and "gravity-spreading" in v.sentence


def test_origin_fixed_by_the_user_or_bracketed_by_default():
    (t, r, err, status, bracket, t0), _ = inertial_water()
    fixed = analyze_series(
        t,
        r,
        err,
        status,
        contact_time=None,
        t0=t0,
        numbers=WATER,
        geometry="coalescence",
        bootstrap=0,
    )
    assert fixed.t0 == t0 and fixed.t0_fixed and fixed.t0_bracket == (t0, t0)
    assert fixed.regimes == ("inertial",)
    c = sum(bracket) / 2
    by_err = analyze_series(
        t,
        r,
        err,
        status,
        contact_time=c,
        contact_time_err=1e-7,
        numbers=WATER,
        geometry="coalescence",
        bootstrap=0,
    )
    # Issue 13: the default bracket is the one the frames prove (last frame
    # before contact, first frame in contact, cut 1 % of a frame before that
    # measured point), whatever the contact instant's error; no ± 2 σ.
    last_apart = t[status == "before-contact"][-1]
    first_ok = t[status == "ok"][0]
    touching = np.isin(status, ["ok", "unresolved", "at-edge"]) & (t > last_apart)
    proven = (last_apart, min(t[touching][0], first_ok - 0.01 * 2e-6))
    assert by_err.t0_bracket == pytest.approx(proven, rel=0, abs=1e-12)
    by_frame = analyze_series(
        t, r, err, status, contact_time=c, numbers=WATER, geometry="coalescence", bootstrap=0
    )
    assert by_frame.t0_bracket == by_err.t0_bracket
    assert by_frame.settings["material_uncertainty"]["surface_tension"] == 0.02
    # Without a frame before contact the frames prove only the frame interval
    # that holds the contact instant.
    later = t[status == "ok"]
    k = 5
    inside = 0.5 * (later[k] + later[k + 1])
    no_gap = analyze_series(
        later,
        r[status == "ok"],
        err[status == "ok"],
        ["ok"] * len(later),
        contact_time=inside,
        numbers=WATER,
        geometry="coalescence",
        bootstrap=0,
    )
    assert no_gap.t0_bracket[0] == later[k]
    assert later[k] < no_gap.t0_bracket[1] < later[k + 1]
    # A bracket reaching past the first ok frame is cut just before it (a
    # measured bridge means contact has happened), and that frame is used.
    first_ok = t[status == "ok"][0]
    wide = analyze(t, r, err, status, (bracket[0], first_ok + 1e-4), WATER, bootstrap=0)
    assert bracket[0] <= wide.t0 < wide.t0_bracket[1] < first_ok
    # Issue 13: frames beyond the inertial law's validity, r > 0.5 R (docs/physics.md §2 A3,
    # an M bound), are left out and counted; every ok frame within it is used.
    ok = status == "ok"
    within = ok & (r <= 0.5 * WATER.radius)
    assert wide.validity_ratio == 0.5 and wide.validity_regime == "inertial"
    assert wide.n_points == int(within.sum()) and wide.regimes == ("inertial",)
    assert wide.n_beyond_validity == int((ok & ~within).sum()) > 0


def test_series_the_data_cannot_support_give_a_falsy_verdict_with_a_reason():
    law = regime("inertial").law(WATER)
    few = camera(lambda tau: law(tau, 1.2), 1e-5, 2e-5, frame=2e-6)
    v = analyze(*few[:5], WATER)
    assert not v and v.reason == "Too few points: 5 after contact, at least 8 needed."
    assert format_verdict(v) == "no verdict: " + v.reason
    assert verdict_to_dict(v)["success"] is False
    short = camera(lambda tau: law(tau, 1.2), 1e-4, 1.8e-4, frame=2e-6)
    v = analyze(*short[:5], WATER)
    assert not v and "at least 1/3 decade (0.3333) needed" in v.reason
    t, r, err, status, bracket, _ = inertial_water()[0]
    late = (t[-1] + 1e-6, t[-1] + 3e-6)
    v = analyze_series(
        t,
        r,
        err,
        status,
        contact_time=sum(late) / 2,
        contact_bracket=late,
        numbers=WATER,
        geometry="coalescence",
    )
    n_ok = int((status == "ok").sum())
    assert not v and v.reason.startswith(f"All {n_ok} usable points lie before contact")
    assert isinstance(v, RegimeVerdict) and v.sentence == ""


def test_bad_calls_raise_fit_error():
    t, r, err, status, bracket, _ = inertial_water()[0]
    kw = {"contact_time": 1e-5, "numbers": WATER, "geometry": "coalescence"}
    with pytest.raises(FitError, match="status: has 10 values, time has"):
        analyze_series(t, r, err, status[:10], **kw)
    with pytest.raises(FitError, match="radius: has 3 values, time has"):
        analyze_series(t, r[:3], err, status, **kw)
    with pytest.raises(FitError, match="radius_err: has 3 values"):
        analyze_series(t, r, err[:3], status, **kw)
    with pytest.raises(FitError, match="geometry = 'merging': is not a known choice"):
        analyze_series(t, r, err, status, **{**kw, "geometry": "merging"})
    with pytest.raises(FitError, match="view = 'top'"):
        analyze_series(t, r, err, status, view="top", **kw)
    with pytest.raises(FitError, match="bootstrap = 1.5"):
        analyze_series(t, r, err, status, bootstrap=1.5, **kw)
    with pytest.raises(FitError, match="contact_bracket"):
        analyze_series(t, r, err, status, contact_bracket=(2e-5, 1e-5), **kw)
    with pytest.raises(FitError, match="contact_time = nan"):
        analyze_series(t, r, err, status, **{**kw, "contact_time": float("nan")})
    with pytest.raises(FitError, match="numbers: must be a SampleNumbers"):
        analyze_series(t, r, err, status, **{**kw, "numbers": {"ohnesorge": 0.1}})
    with pytest.raises(FitError, match="material_uncertainty = 'colour'"):
        analyze_series(t, r, err, status, material_uncertainty={"colour": 0.1}, **kw)
