"""Master curves: a campaign's series on their regime's own scales.

For a power-law regime r = C G t^n (G the regime's group, see
:class:`dropkin.scaling.Regime`), the drop radius R and the time
tau = (R / G)^(1/n) make the law r / R = C (t / tau)^n: inertial coalescence
gets tau = sqrt(rho R^3 / gamma), the viscous regimes tau = eta R / gamma.
The logarithmic (ELS) law becomes r / R = -C x ln x with x = t / tau_v.
Every series that follows the law then falls on one curve, whatever its
liquid or drop size.

Each recording's prefactor C_i, on its own regime's curve, is the one of its
own fixed-exponent fit (as its report gives it), with the standard error
its 95 % interval implies (which carries the contact-instant uncertainty).
Put on another regime's scales (``regime=``), it is the weighted mean of
ln(y / f(x)) over its ``ok`` points (f the law with C = 1), with the larger
of the points' scatter and their own errors as its standard error.
The collective prefactor combines the ln C_i with a random-effects model
(:mod:`._pooling`). A recording does not collapse
when its ln C_i lies more than three standard errors (its own and the
collective's, without the between-recording spread) from the collective, or
when its points do not have the law's shape: the slope of ln(y / f(x))
against ln x (its exponent minus the law's) exceeds both three standard
errors and the verdict's exponent tolerance.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from ..errors import DropkinError
from ..pipeline import read_fit
from ..series import read_radius_csv
from ._pooling import Pooled, pool_log_prefactors

__all__ = ["Member", "MasterCurve", "master_curves", "curve_to_dict", "write_collapse"]

FLAG_SIGMAS = 3.0


@dataclass(frozen=True)
class Member:
    """One recording on the master curve.

    Attributes
    ----------
    label : str
    x, y : ndarray
        t / tau and r / R of its ``ok`` points after contact.
    in_window : ndarray of bool
        The points inside the window of its fit (those that set C_i).
    tau, drop_radius : float
        Its time scale (s) and drop radius (m).
    prefactor : float
        C_i.
    log_se : float
        Standard error of ln C_i.
    slope, slope_se : float
        Slope of ln(y / f(x)) against ln x over its window, and its standard
        error: its exponent minus the law's.
    deviation : float
        (ln C_i - ln C) over the combined standard error; NaN until pooled.
    collapses : bool
    note : str
        Why it does not collapse, or which prefactor interval set its error.
    """

    label: str
    x: np.ndarray = field(repr=False)
    y: np.ndarray = field(repr=False)
    in_window: np.ndarray = field(repr=False)
    tau: float
    drop_radius: float
    prefactor: float
    log_se: float
    slope: float = math.nan
    slope_se: float = math.nan
    deviation: float = math.nan
    collapses: bool = True
    note: str = ""


@dataclass(frozen=True)
class MasterCurve:
    """The master curve of one regime.

    Attributes
    ----------
    regime : str
    exponent : float
    logarithmic : bool
    pooled : Pooled
        The collective prefactor.
    published : float or None
        The catalogue's prefactor, for comparison.
    members : tuple of Member
    left_out : tuple of (str, str)
        Recordings of the catalogue not on this curve, with the reason.
    """

    regime: str
    exponent: float
    logarithmic: bool
    pooled: Pooled
    published: float | None
    members: tuple[Member, ...]
    left_out: tuple[tuple[str, str], ...] = ()

    @property
    def flagged(self) -> list[str]:
        return [m.label for m in self.members if not m.collapses]


def _law_unit(x, exponent, logarithmic):
    """The dimensionless law with C = 1: x^n, or -x ln x."""
    x = np.asarray(x, dtype=float)
    return -x * np.log(x) if logarithmic else x**exponent


def _numbers(row):
    from ..scaling import sample_numbers

    return sample_numbers(
        surface_tension=row["surface_tension_n_per_m"],
        viscosity=row["viscosity_pa_s"],
        density=row["density_kg_per_m3"],
        radius=row["drop_radius_m"],
        outer_viscosity=row.get("medium_viscosity_pa_s"),
        outer_density=row.get("medium_density_kg_per_m3"),
    )


def _time_scale(regime, numbers) -> float:
    if regime.logarithmic:
        return numbers.viscous_time
    group = regime.group(numbers)
    if group is None:
        raise DropkinError(f"regime {regime.key!r} has no group for this sample")
    return (numbers.radius / group) ** (1.0 / float(regime.exponent))


def _points_prefactor(x, y, rel, regime) -> tuple[float, float]:
    """ln C and its standard error from points (x, y) and their relative errors."""
    resid = np.log(y) - np.log(_law_unit(x, float(regime.exponent), regime.logarithmic))
    finite = np.isfinite(rel) & (rel > 0)
    sigma = np.where(finite, rel, np.median(rel[finite]) if finite.any() else 1.0)
    w = 1.0 / sigma**2
    log_c = float(np.sum(w * resid) / np.sum(w))
    scatter = math.sqrt(float(np.sum(w * (resid - log_c) ** 2)) / ((resid.size - 1) * np.sum(w)))
    return log_c, max(scatter, 1.0 / math.sqrt(float(np.sum(w))))


def _shape_slope(x, y, rel, regime) -> tuple[float, float]:
    """Slope of ln(y / f(x)) against ln x, and its standard error (NaN if < 3 points).

    Zero when the series has the law's shape; its exponent minus the law's
    otherwise.
    """
    if x.size < 3:
        return math.nan, math.nan
    resid = np.log(y) - np.log(_law_unit(x, float(regime.exponent), regime.logarithmic))
    finite = np.isfinite(rel) & (rel > 0)
    sigma = np.where(finite, rel, np.median(rel[finite]) if finite.any() else 1.0)
    fit, cov = np.polyfit(np.log(x), resid, 1, w=1.0 / sigma, cov="unscaled")
    chi2 = float(np.sum(((resid - np.polyval(fit, np.log(x))) / sigma) ** 2)) / (x.size - 2)
    return float(fit[0]), math.sqrt(float(cov[0, 0]) * max(chi2, 1.0))


def _inside(out_dir: Path, name) -> Path:
    """The recording's folder named by the catalogue, refused when it lies outside OUT."""
    folder = (out_dir / str(name)).resolve()
    if not folder.is_relative_to(out_dir.resolve()):
        raise DropkinError("names a folder outside the campaign's output folder", path=folder)
    return folder


def _member(row, out_dir: Path, regime) -> Member:
    folder = _inside(out_dir, row.get("output") or row["label"])
    series = read_radius_csv(folder / "radius.csv")
    verdict = read_fit(folder / "fit.json")
    t0 = verdict.t0 if verdict else math.nan  # fit.json has a contact instant when it succeeded
    if not math.isfinite(t0):
        raise DropkinError("has no contact instant", path=folder / "fit.json")
    numbers = _numbers(row)
    tau = _time_scale(regime, numbers)
    radius = numbers.radius
    since = series.time - t0
    r, err = series.radius, series.radius_err
    ok = (np.asarray(series.status) == "ok") & (since > 0) & np.isfinite(r) & (r > 0)
    x, y = since[ok] / tau, r[ok] / radius
    rel = np.where(np.isfinite(err[ok]) & (err[ok] > 0), err[ok] / r[ok], np.nan)
    lo, hi = row.get("window_start_s"), row.get("window_end_s")
    own = row.get("regime") == regime.key and lo is not None and hi is not None
    window = (since[ok] >= lo) & (since[ok] <= hi) if own else np.ones(x.size, bool)
    if regime.logarithmic:
        window &= x < math.exp(-1.0)  # the ELS form rises only up to x = 1/e
    if window.sum() < 2:
        raise DropkinError("has fewer than two measured points in its window", path=folder)
    c_fit = row.get("prefactor_fit")
    c_lo, c_hi = row.get("prefactor_ci_low"), row.get("prefactor_ci_high")
    if own and c_fit and c_lo and c_hi and c_hi > c_lo > 0 and c_fit > 0:
        # The recording's own fixed-exponent fit, as its report gives it.
        log_c = math.log(c_fit)
        se = (math.log(c_hi) - math.log(c_lo)) / (2 * 1.959963984540054)
        note = "its own fit's prefactor and interval"
    else:
        log_c, se = _points_prefactor(x[window], y[window], rel[window], regime)
        note = "prefactor from its points on these scales"
    slope, slope_se = _shape_slope(x[window], y[window], rel[window], regime)
    return Member(
        label=row["label"],
        x=x,
        y=y,
        in_window=window,
        tau=tau,
        drop_radius=radius,
        prefactor=math.exp(log_c),
        log_se=se,
        slope=slope,
        slope_se=slope_se,
        note=note,
    )


def _group_rows(rows, regime: str | None) -> tuple[dict[str, list[dict]], list]:
    """The rows of each regime's curve, and the rows left out with the reason."""
    left_out: list[tuple[str, str]] = []
    groups: dict[str, list[dict]] = {}
    for row in rows:
        if row["status"] != "complete":
            left_out.append((row["label"], f"failed: {row.get('error') or ''}"))
        elif regime is None and (not row.get("decided") or not row.get("regime")):
            left_out.append((row["label"], "no regime decided"))
        else:
            groups.setdefault(regime or row["regime"], []).append(row)
    return groups, left_out


def _members(rows, out_dir: Path, regime) -> tuple[list[Member], list[tuple[str, str]]]:
    """The members of one regime's curve, and the recordings that could not join it."""
    members, skipped = [], []
    for row in rows:
        try:
            members.append(_member(row, out_dir, regime))
        except (DropkinError, OSError, ValueError, KeyError) as exc:
            skipped.append((row["label"], str(exc)))
    return members, skipped


def _judged(m: Member, pooled: Pooled, tolerance: float) -> Member:
    """The member with its deviation from the collective, and whether it collapses."""
    z = (math.log(m.prefactor) - pooled.log_value) / math.hypot(m.log_se, pooled.log_se)
    off_c = abs(z) > FLAG_SIGMAS and pooled.k > 1
    off_shape = (
        math.isfinite(m.slope)
        and abs(m.slope) > FLAG_SIGMAS * m.slope_se
        and abs(m.slope) > tolerance
    )
    off = off_c or off_shape
    reasons = []
    if off_c:
        reasons.append(
            f"C = {m.prefactor:.3g} lies {abs(z):.1f} standard errors from the collective"
        )
    if off_shape:
        reasons.append(
            f"its exponent differs from the law's by {m.slope:+.3g} (± {m.slope_se:.2g})"
        )
    note = "; ".join(reasons) if off else m.note
    return replace(m, deviation=z, collapses=not off, note=note)


def master_curves(out_dir, *, regime: str | None = None) -> list[MasterCurve]:
    """The master curve of every regime a campaign's recordings were found in.

    Parameters
    ----------
    out_dir : str or os.PathLike
        A ``dropkin batch`` output folder (with ``catalogue.sqlite``).
    regime : str, optional
        Put every decided recording on this regime's scales instead of each
        on its own regime's.

    Raises
    ------
    DropkinError
        When there is no catalogue, no recording with a verdict, or an
        unknown regime.
    """
    from ..scaling import EXPONENT_TOLERANCE, REGIMES
    from ._catalogue import read_rows

    out_dir = Path(out_dir)
    rows = read_rows(out_dir)
    by_key = {r.key: r for r in REGIMES}
    if regime is not None and regime not in by_key:
        raise DropkinError(
            "is not a catalogue regime",
            key="--regime",
            value=regime,
            expected=", ".join(sorted(by_key)),
        )
    groups, left_out = _group_rows(rows, regime)
    if not groups:
        raise DropkinError("has no recording with a decided regime", path=out_dir)
    curves = []
    for key, members_rows in sorted(groups.items()):
        reg = by_key.get(key)
        if reg is None:
            left_out += [(r["label"], f"unknown regime {key!r}") for r in members_rows]
            continue
        members, skipped = _members(members_rows, out_dir, reg)
        if not members:
            left_out += skipped
            continue
        pooled = pool_log_prefactors(
            [math.log(m.prefactor) for m in members], [m.log_se for m in members]
        )
        curves.append(
            MasterCurve(
                regime=key,
                exponent=float(reg.exponent),
                logarithmic=reg.logarithmic,
                pooled=pooled,
                published=reg.prefactor,
                members=tuple(_judged(m, pooled, EXPONENT_TOLERANCE) for m in members),
                left_out=tuple(left_out + skipped),
            )
        )
    return curves


def _num(value):
    return value if math.isfinite(value) else None


def curve_to_dict(curve: MasterCurve) -> dict:
    """The JSON form of a master curve (SI; prefactors dimensionless)."""
    p = curve.pooled
    return {
        "regime": curve.regime,
        "exponent": curve.exponent,
        "logarithmic": curve.logarithmic,
        "law": "r/R = -C (t/tau) ln(t/tau)" if curve.logarithmic else "r/R = C (t/tau)^n",
        "prefactor": p.value,
        "prefactor_ci": list(p.ci),
        "prefactor_published": curve.published,
        "between_recordings_sd_log": math.sqrt(p.tau2),
        "cochran_q": p.q,
        "recordings": p.k,
        "method": "random effects on ln C (DerSimonian-Laird), 95 % Hartung-Knapp "
        "t-interval, never narrower than DerSimonian-Laird's",
        "members": [
            {
                "label": m.label,
                "tau_s": m.tau,
                "drop_radius_m": m.drop_radius,
                "prefactor": m.prefactor,
                "log_se": m.log_se,
                "deviation_se": _num(m.deviation),
                "exponent_offset": _num(m.slope),
                "exponent_offset_se": _num(m.slope_se),
                "collapses": m.collapses,
                "note": m.note,
                "points": int(m.x.size),
            }
            for m in curve.members
        ],
        "flagged": curve.flagged,
        "left_out": [{"label": a, "reason": b} for a, b in curve.left_out],
    }


def write_collapse(curves, dest, formats=("png",)) -> list[Path]:
    """Write ``collapse.json`` and a figure per regime (in `formats`) into `dest`; the paths."""
    import json

    from .._atomic import write_text_atomic
    from ..report import write_master_curve

    dest = Path(dest)
    dest.mkdir(parents=True, exist_ok=True)
    written = []
    for curve in curves:
        written += write_master_curve(curve, dest, formats)
    data = {"curves": [curve_to_dict(c) for c in curves]}
    written.append(
        write_text_atomic(dest / "collapse.json", json.dumps(data, indent=2, allow_nan=False))
    )
    return written
