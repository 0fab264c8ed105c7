"""The figure of the local exponent d ln r / d ln τ, with what each candidate predicts.

A power law r ∝ τⁿ has a constant local exponent: a horizontal guide at n.
The logarithmic (ELS) law r = −C (γτ/η) ln(γτ/(ηR)) has none: its local
exponent is 1 + 1/ln(γτ/(ηR)), below 1 and falling to 0 where the law peaks
(γτ/(ηR) = 1/e), so it is drawn as that curve over the data's times, never
as a line at n = 1. Every guide and curve is named in a legend below the
axes, with all its regimes, so no label is drawn over the data.
"""

from __future__ import annotations

import math
import textwrap

import numpy as np

from ._style import (
    _CYCLE,
    _DASHES,
    OKABE_ITO,
    _exponent_text,
    _finite,
    _log_axis,
    _new_figure,
    _num,
)

__all__ = ["plot_local_exponent", "log_law_local_exponent"]

#: Characters per line of a legend entry before it wraps.
_WRAP = 58


def log_law_local_exponent(tau, *, speed, drop_radius) -> np.ndarray:
    """d ln r / d ln τ of r = −C uτ ln(uτ/R): ``1 + 1/ln(uτ/R)``; NaN past the peak.

    Derived here (D): ln r = ln τ + ln(−ln x) + const with x = uτ/R, so
    d ln r / d ln τ = 1 + 1/ln x, which is 0 at x = 1/e (the law's maximum)
    and tends to 1 as x → 0.
    """
    tau = np.asarray(tau, dtype=float)
    if not (_finite(speed) and _finite(drop_radius) and speed > 0 and drop_radius > 0):
        return np.full(tau.shape, np.nan)
    x = speed * tau / drop_radius
    with np.errstate(divide="ignore", invalid="ignore"):
        n = 1.0 + 1.0 / np.log(x)
    return np.where((x > 0) & (x < math.exp(-1.0)), n, np.nan)


def _guides(verdict):
    """Power-law exponents → regime keys, and the logarithmic laws' keys."""
    powers: dict[float, list[str]] = {}
    logs: list[str] = []
    for cand in verdict.candidates if verdict else ():
        regime = getattr(cand, "regime", None)
        if regime is not None and getattr(regime, "logarithmic", False):
            logs.append(cand.key)
            continue
        value = _num(cand.exponent_theory)
        if _finite(value):
            powers.setdefault(round(float(value), 9), []).append(cand.key)
    return powers, logs


def _entry(head: str, names) -> str:
    text = f"{head}: {', '.join(names)}"
    return textwrap.fill(text, _WRAP, subsequent_indent="  ", break_on_hyphens=False)


def _draw_guides(ax, verdict, t, speed, drop_radius):
    """Guides at the power laws' exponents; the log laws' local exponent as a curve.

    Returns the values drawn (for the y range) and a note for a log law that
    could not be drawn (no γ/η or R, or past its peak at every τ shown), or "".
    """
    powers, logs = _guides(verdict)
    drawn: list[float] = []
    k = 0
    for value, names in sorted(powers.items(), reverse=True):
        style = {"color": OKABE_ITO[_CYCLE[k % len(_CYCLE)]], "ls": _DASHES[k % len(_DASHES)]}
        ax.axhline(value, lw=0.9, label=_entry(f"n = {_exponent_text(value)}", names), **style)
        drawn.append(value)
        k += 1
    if logs:
        tau = np.geomspace(t.min(), t.max(), 200) if t.size and np.all(t > 0) else np.empty(0)
        curve = log_law_local_exponent(tau, speed=speed, drop_radius=drop_radius)
        head = "log law, n = 1 + 1/ln(γτ/ηR)"
        if np.isfinite(curve).any():
            style = {"color": OKABE_ITO[_CYCLE[k % len(_CYCLE)]], "ls": _DASHES[k % len(_DASHES)]}
            ax.plot(tau * 1e3, curve, lw=0.9, label=_entry(head, logs), **style)
            drawn += [float(np.nanmin(curve)), float(np.nanmax(curve))]
        else:  # said in the legend's title, since there is no line to show
            known = _finite(speed) and _finite(drop_radius)
            why = "past its peak at every τ shown" if known else "γ/η or R unknown"
            return drawn, _entry(f"not drawn ({why}): {head}", logs)
    return drawn, ""


def plot_local_exponent(verdict, series, origin_label: str):
    """The local exponent with its band and every candidate's prediction."""
    local = verdict.local if verdict and verdict.local else None
    t = np.asarray(local.time if local else [], dtype=float)
    n = np.asarray(local.exponent if local else [], dtype=float)
    lo = np.asarray(local.lower if local else [], dtype=float)
    hi = np.asarray(local.upper if local else [], dtype=float)
    fig = _new_figure(3.4)
    ax = fig.add_subplot()
    values: list[float] = []
    if t.size and t.size == n.size:
        if lo.size == t.size and hi.size == t.size:
            ax.fill_between(
                t * 1e3,
                lo,
                hi,
                color=OKABE_ITO["sky blue"],
                alpha=0.35,
                lw=0,
                label="band: t₀ anywhere in its bracket, ± 2 s.e.",
            )
            values += [float(np.nanmin(lo)), float(np.nanmax(hi))]
        ax.plot(
            t * 1e3, n, "-", marker="o", ms=2, color=OKABE_ITO["blue"], label="d ln r / d ln τ"
        )
        values += [float(np.nanmin(n)), float(np.nanmax(n))]
    numbers = verdict.numbers if verdict else None
    speed = None if numbers is None else _num(getattr(numbers, "capillary_speed", None))
    drawn, note = _draw_guides(ax, verdict, t, speed, _num(series.drop_radius))
    values += drawn
    values = [v for v in values if math.isfinite(v)]
    if values:
        pad = 0.08 * max(max(values) - min(values), 0.2)
        ax.set_ylim(min(values) - pad, max(values) + pad)
    if t.size and np.all(t > 0):
        ax.set_xscale("log")
        _log_axis(ax.xaxis)
    else:
        ax.text(0.5, 0.5, "no local exponent", transform=ax.transAxes, ha="center")
    ax.set_xlabel(origin_label)
    ax.set_ylabel("local exponent n")
    if ax.get_legend_handles_labels()[0]:
        legend = fig.legend(
            loc="outside lower center",
            ncols=1,
            fontsize=6,
            handlelength=2.6,
            title=note or None,
            title_fontsize=6,
        )
        legend.get_title().set_ha("left")
    return fig
