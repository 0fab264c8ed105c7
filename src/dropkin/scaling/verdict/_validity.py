"""Finite-size limits: the frames the verdict leaves out because no plausible law holds there.

Each regime carries the published bound of its validity in r/R
(:attr:`~dropkin.scaling.regimes._regime.Regime.max_radius_ratio`, with its
source). The verdict fits the series only up to the largest bound among
the sample's plausible candidates: a frame beyond it is beyond every law
that may govern the sample, and is left out and counted. When a plausible
candidate has no bound (or no candidate is plausible and one has none), no
frame is left out. Inside the kept frames each candidate is still judged on
its own window (docs/physics.md §4.8, "Finite size").

Examples
--------
>>> from dropkin.scaling import candidates, sample_numbers
>>> water = sample_numbers(surface_tension=0.0727, viscosity=1e-3, density=998.0, radius=1e-3)
>>> validity_limit(candidates(water, "coalescence", "side"))
(0.5, 'inertial')
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["validity_limit", "within_validity"]


def validity_limit(cands) -> tuple[float | None, str]:
    """The largest r/R bound among the plausible candidates (all, if none is), and its regime.

    ``(None, "")`` when one of them has no bound. On a tie the regime named is
    the later one in the catalogue's order (the stage that reaches larger radii).
    """
    pool = [c for c in cands if c.plausible] or list(cands)
    if not pool or any(c.regime.max_radius_ratio is None for c in pool):
        return None, ""
    best = max(reversed(pool), key=lambda c: c.regime.max_radius_ratio)
    return float(best.regime.max_radius_ratio), best.regime.key


def within_validity(series, ratio, radius):
    """Mask of the points with r ≤ ratio × radius (all when either is unknown)."""
    if ratio is None or radius is None or not (math.isfinite(radius) and radius > 0):
        return np.ones(len(series), dtype=bool)
    return series.y <= math.log(ratio * radius)
