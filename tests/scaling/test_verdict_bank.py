"""A seeded bank of synthetic radius series: is the verdict right, and are its numbers accurate?

Every series is made analytically in this file from a catalogue law
(``regime(key).law(numbers)``) or from the harmonic blend of two of them
(``harmonic_blend``, docs/physics.md §3), for a sample whose dimensionless numbers
allow that regime. The camera is simulated plainly: uniform frames; the
contact instant uniform inside its frame, bracketed by the last frame before
it and the first after it; frames before ``τ_a`` are ``unresolved``; the
pixel size makes the first ``ok`` radius at least 8 px and the last at least
100 px (docs/physics.md §4.4: r ≥ 5–10 px); Gaussian noise of 0.2–2 px (uniform)
is added and given as ``radius_err``.

Samples (20 °C unless stated; with air, η_o = 1.8e-5 Pa s and ρ_o = 1.2 kg/m³,
the values of docs/architecture.md's example file):

- water: γ = 72.74 mN/m, η = 1.0016 mPa s, ρ = 998.207 kg/m³ (docs/physics.md §5.1);
- glycerol: γ = 63.4 mN/m (CRC, M), η = 1.414 Pa s (Cheng), ρ = 1261.1 kg/m³ (§5.2);
- glycerol–water 50/80/90 wt %: η = 6.002/60.86/223.7 mPa s (Cheng, §5.5),
  ρ = 1126.23/1208.12/1235.13 kg/m³ (Volk & Kähler, §5.5); γ = 68/65/64 mN/m
  (not in docs/physics.md: from memory, M — the verdict only needs them consistent);
- silicone oils 100 and 1000 cSt at 25 °C: γ = 20.9, 21.2 mN/m; ρ = 964.5, 970.5
  kg/m³; η = 96.5, 970 mPa s (docs/physics.md §5.4, nominal grades);
- air bubbles in water and in 1000 cSt oil (A = 0.94 mm, as the Nat. Commun.
  2014 data of docs/physics.md §2 A4).

Prefactors are the catalogue's (D0 = 1.2, C1 = 1.2, D1 = 1.4, 1/π, 0.665,
0.83, 0.779, C_v = 1); the sessile laws have no published C, so the synthetic
data use invented values 0.9 (B2), 0.5 and 1.0 (B1).
"""

import math
from collections import Counter, defaultdict

import numpy as np
import pytest

from dropkin.fitting import harmonic_blend
from dropkin.scaling import analyze_series, regime, sample_numbers

AIR = {"outer_viscosity": 1.8e-5, "outer_density": 1.2}
WATER = {"surface_tension": 0.07274, "viscosity": 1.0016e-3, "density": 998.207}
GLYCEROL = {"surface_tension": 0.0634, "viscosity": 1.414, "density": 1261.1}
GW50 = {"surface_tension": 0.068, "viscosity": 6.002e-3, "density": 1126.23}
GW80 = {"surface_tension": 0.065, "viscosity": 60.86e-3, "density": 1208.12}
GW90 = {"surface_tension": 0.064, "viscosity": 223.7e-3, "density": 1235.13}
PDMS100 = {"surface_tension": 0.0209, "viscosity": 96.5e-3, "density": 964.5}
PDMS1000 = {"surface_tension": 0.0212, "viscosity": 0.970, "density": 970.5}


def drops(liquid, radius, **extra):
    return sample_numbers(**liquid, radius=radius, **AIR, **extra)


def bubbles(liquid, radius):
    return sample_numbers(
        surface_tension=liquid["surface_tension"],
        viscosity=AIR["outer_viscosity"],
        density=AIR["outer_density"],
        radius=radius,
        outer_viscosity=liquid["viscosity"],
        outer_density=liquid["density"],
    )


SIXTY = math.radians(60.0)
# key: (geometry, sample, C, end of the series: radius/R, uτ/R or time in s)
SINGLE = {
    "inertial": ("coalescence", drops(WATER, 1e-3), 1.2, ("r", 0.3)),
    "viscous": ("coalescence", drops(GLYCEROL, 1e-3), 1 / math.pi, ("x", 0.3)),
    "inertially-limited-viscous": ("coalescence", drops(GW90, 1e-3), 1.0, ("r", 0.1)),
    "viscous-outer": ("coalescence", bubbles(PDMS1000, 0.94e-3), 1.2, ("r", 0.3)),
    "inertial-outer": ("coalescence", bubbles(WATER, 1e-3), 1.4, ("r", 0.3)),
    "inertial-sessile": (
        "sessile-coalescence",
        drops(WATER, 1e-3, contact_angle=SIXTY),
        0.9,
        ("r", 0.3),
    ),
    "viscous-sessile": (
        "sessile-coalescence",
        drops(GW80, 1e-3, contact_angle=math.radians(30.0)),
        0.5,
        ("r", 0.3),
    ),
    "inertial-spreading": ("spreading", drops(WATER, 1e-3), 1.2, ("r", 1.0)),
    "viscous-spreading": ("spreading", drops(PDMS1000, 1e-3), 1 / math.pi, ("x", 0.3)),
    "hertz-like-spreading": ("spreading", drops(GLYCEROL, 1e-3), 0.665, ("r", 1.2)),
    "tanner": ("spreading", drops(PDMS100, 0.5e-3), 0.83, ("t", 100.0)),
    "gravity-spreading": ("spreading", drops(PDMS1000, 3e-3), 0.779, ("t", 300.0)),
}
# (early, late): (geometry, sample, C early, C late)
TWO = {
    ("inertially-limited-viscous", "inertial"): ("coalescence", drops(GW50, 1e-3), 1.0, 1.2),
    ("inertial-spreading", "tanner"): ("spreading", drops(WATER, 1e-3), 1.2, 0.83),
    ("hertz-like-spreading", "tanner"): ("spreading", drops(GLYCEROL, 1e-3), 0.665, 0.83),
    ("viscous-sessile", "inertial-sessile"): (
        "sessile-coalescence",
        drops(GW80, 1e-3, contact_angle=SIXTY),
        1.0,
        0.9,
    ),
}
N_SINGLE = 15  # per regime: 12 × 15 = 180
N_TWO = 8  # per pair: 4 × 8 = 32; 212 series in all
BOOTSTRAP = 10  # resamples per fit in the bank (the default 200 is for real use)


def record(law, tau_a, tau_b, rng, crossover=None):
    """Frames of a camera watching ``r = law(τ)``, ok from τ_a to τ_b."""
    dt = min(tau_b / rng.uniform(150, 1500), tau_a)
    if crossover is not None:  # at least 20 frames before the crossover
        dt = min(dt, (crossover - tau_a) / 20)
    first = 5
    t0 = (first + rng.uniform(0.02, 0.98)) * dt
    t = np.arange(int((t0 + tau_b) / dt) + 1) * dt
    tau = t - t0
    r_true = np.full(t.size, np.nan)
    r_true[tau > 0] = law(tau[tau > 0])
    ok = (tau >= tau_a) & (tau <= tau_b)
    r_a, r_b = law(np.array([tau_a, tau_b]))
    pixel = min(r_a / 8, r_b / 100)
    sigma = rng.uniform(0.2, 2.0) * pixel
    return {
        "time": t,
        "radius": np.where(ok, r_true + rng.normal(0.0, sigma, t.size), np.nan),
        "radius_err": np.where(ok, sigma, np.nan),
        "status": np.where(tau <= 0, "before-contact", np.where(ok, "ok", "unresolved")),
        "bracket": (first * dt, (first + 1) * dt),
        "tau": tau,
        "r_true": r_true,
        "sigma": sigma,
        "ok": ok,
    }


def single(key, rng):
    geometry, numbers, c, (kind, end) = SINGLE[key]
    entry = regime(key)
    bound = entry.law(numbers)

    def law(tau):
        return bound(tau, c)

    if kind == "x":
        tau_b = end * numbers.radius / numbers.capillary_speed
    elif kind == "r":
        tau_b = (end * numbers.radius / (c * entry.group(numbers))) ** (1 / float(entry.exponent))
    else:
        tau_b = end
    return geometry, numbers, law, tau_b / 10 ** rng.uniform(1.0, 3.0), tau_b


def two(keys, rng):
    geometry, numbers, c1, c2 = TWO[keys]
    early, late = regime(keys[0]), regime(keys[1])
    a1, a2 = c1 * early.group(numbers), c2 * late.group(numbers)
    n1, n2 = float(early.exponent), float(late.exponent)
    tc = (a2 / a1) ** (1 / (n1 - n2))  # where the two laws meet (analytic)

    def law(tau):
        return harmonic_blend(a1 * tau**n1, a2 * tau**n2)

    tau_a = tc / 10 ** rng.uniform(0.9, 1.2)
    return geometry, numbers, law, tau_a, tau_a * 10 ** rng.uniform(2.5, 3.0), tc


def verdict_of(rec, numbers, geometry, seed):
    return analyze_series(
        rec["time"],
        rec["radius"],
        rec["radius_err"],
        rec["status"],
        contact_time=sum(rec["bracket"]) / 2,
        contact_bracket=rec["bracket"],
        numbers=numbers,
        geometry=geometry,
        bootstrap=BOOTSTRAP,
        seed=seed,
    )


def label(keys) -> str:
    return " → ".join(regime(k).code for k in keys)


@pytest.fixture(scope="module")
def bank():
    rng = np.random.default_rng(20240601)
    rows = []
    for key in SINGLE:
        for i in range(N_SINGLE):
            geometry, numbers, law, tau_a, tau_b = single(key, rng)
            rec = record(law, tau_a, tau_b, rng)
            v = verdict_of(rec, numbers, geometry, i)
            rows.append({"truth": (key,), "verdict": v, "rec": rec, "decades": tau_b / tau_a})
    for keys in TWO:
        for i in range(N_TWO):
            geometry, numbers, law, tau_a, tau_b, tc = two(keys, rng)
            rec = record(law, tau_a, tau_b, rng, crossover=tc)
            v = verdict_of(rec, numbers, geometry, i)
            rows.append({"truth": keys, "verdict": v, "rec": rec, "crossover": tc})
    return rows


def outcome(v) -> str:
    if not v:
        return "no fit"
    return label(v.regimes) if v.decidable else "undecided"


def confusion(rows) -> str:
    table = defaultdict(Counter)
    for row in rows:
        table[label(row["truth"])][outcome(row["verdict"])] += 1
    columns = sorted({c for counts in table.values() for c in counts})
    lines = [f"{'truth':12}" + "".join(f"{c:>12}" for c in columns)]
    for truth, counts in table.items():
        lines.append(f"{truth:12}" + "".join(f"{counts.get(c, 0):>12}" for c in columns))
    return "\n".join(lines)


@pytest.mark.slow
def test_bank_verdicts_are_right(bank):
    # The bar: at least 95 % of at least 200 series right (one regime:
    # that regime, decided; two: both, in order, decided).
    assert len(bank) >= 200
    right = sum(outcome(r["verdict"]) == label(r["truth"]) for r in bank)
    table = confusion(bank)
    report = f"{right}/{len(bank)} right ({right / len(bank):.1%})\n{table}"
    print("\n" + report)
    assert right >= 0.95 * len(bank), report
    # Every regime and pair of the bank is decided right at least once.
    for truth in {label(r["truth"]) for r in bank}:
        assert any(label(r["truth"]) == truth and outcome(r["verdict"]) == truth for r in bank), (
            report
        )


@pytest.mark.slow
def test_bank_exponents_are_within_two_hundredths(bank):
    # Single regimes span 1 to 3 decades. Truth: for a power law its n; for
    # the log law, the slope numpy.polyfit finds for the exact law on the same
    # points with the same weights (r/σ), since a power-law fit of the ELS law
    # drifts with the window (docs/physics.md §2 A1). Bound 0.02 (the issue's).
    errors = []
    for row in bank:
        if len(row["truth"]) != 1:
            continue
        v, rec = row["verdict"], row["rec"]
        d = v.dominant
        assert d is not None and d.window is not None, v.sentence
        since = rec["time"] - v.t0
        inside = rec["ok"] & (since >= d.window[0]) & (since <= d.window[1])
        tau, r = rec["tau"][inside], rec["r_true"][inside]
        truth = np.polyfit(np.log(tau), np.log(r), 1, w=r / rec["sigma"])[0]
        errors.append(abs(d.exponent_fit - truth))
    print(f"\nexponent errors: median {np.median(errors):.2g}, max {max(errors):.2g}")
    assert len(errors) == len(SINGLE) * N_SINGLE
    assert max(errors) < 0.02


@pytest.mark.slow
def test_bank_crossovers_are_within_a_factor_one_and_a_half(bank):
    # Truth: t_c = (a2/a1)^(1/(n1 - n2)), where the two laws meet (analytic).
    factors = []
    for row in bank:
        if len(row["truth"]) != 2:
            continue
        v = row["verdict"]
        assert v.two_regime and len(v.crossovers) == 1, v.sentence
        factors.append(v.crossovers[0].time / row["crossover"])
    worst = max(max(factors), 1 / min(factors))
    print(f"\ncrossover time / truth: {np.round(sorted(factors), 3)}; worst factor {worst:.3f}")
    assert worst < 1.5
