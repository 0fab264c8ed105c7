"""Checks of :func:`~dropkin.scaling.verdict._verdict.analyze_series`'s arguments.

Each bad argument becomes a :class:`~dropkin.errors.FitError` that names it.

Examples
--------
>>> check_levels({0.4: [1.0, 2.0]}, 2)
((0.4, array([1., 2.])),)
"""

from __future__ import annotations

import math

import numpy as np

from ...contact._bracket import default_bracket
from ...errors import FitError
from ...fitting._core import as_array, check_bracket
from ..regimes._catalogue import SCALING_GEOMETRIES
from ..regimes._numbers import SampleNumbers

__all__ = ["check_call", "check_levels", "finite", "t0_bracket"]


def finite(name, value, *, allow_none=False, positive=False):
    if value is None and allow_none:
        return None
    ok = isinstance(value, int | float | np.floating) and not isinstance(value, bool)
    if not (ok and math.isfinite(value)) or (positive and value < 0):
        what = "a finite time ≥ 0 in s" if positive else "a finite time in s"
        raise FitError("must be a number", key=name, value=value, expected=what)
    return float(value)


def t0_bracket(time, status, contact_time, contact_bracket, t0):
    """(t0, t0) when fixed; the given bracket, checked; else the frames' bracket (contact/)."""
    if t0 is not None:
        return t0, t0
    if contact_bracket is not None:
        return check_bracket(contact_bracket, key="contact_bracket")
    return default_bracket(time, status, contact_time)


def check_call(time, radius, radius_err, status, numbers, geometry, view, seed, bootstrap):
    t = as_array("time", time)
    r = as_array("radius", radius, len(t))
    e = (
        np.full(len(t), np.nan)
        if radius_err is None
        else as_array("radius_err", radius_err, len(t))
    )
    try:
        st = [str(s) for s in status]
    except TypeError:
        raise FitError("must be a sequence of status strings", key="status") from None
    if len(st) != len(t):
        raise FitError(f"has {len(st)} values, time has {len(t)}", key="status")
    if not isinstance(numbers, SampleNumbers):
        raise FitError("must be a SampleNumbers record (see sample_numbers)", key="numbers")
    if geometry not in SCALING_GEOMETRIES:
        raise FitError(
            "is not a known choice",
            key="geometry",
            value=geometry,
            expected=" or ".join(SCALING_GEOMETRIES),
        )
    if view not in ("side", "bottom"):
        raise FitError("is not a known choice", key="view", value=view, expected="side or bottom")
    if isinstance(bootstrap, bool) or not isinstance(bootstrap, int) or bootstrap < 0:
        raise FitError("must be a whole number ≥ 0", key="bootstrap", value=bootstrap)
    if isinstance(seed, bool) or not isinstance(seed, int):
        raise FitError("must be a whole number", key="seed", value=seed)
    return t, r, e, np.array([s == "ok" for s in st], dtype=bool)


def check_levels(radius_levels, n) -> tuple[tuple[float, np.ndarray], ...]:
    """The other edge levels as ``((level, radii), ...)``, sorted by level; () when None."""
    if radius_levels is None:
        return ()
    try:
        items = sorted((float(k), v) for k, v in dict(radius_levels).items())
    except (TypeError, ValueError):
        raise FitError("must map edge levels (numbers) to radii", key="radius_levels") from None
    out = []
    for level, radii in items:
        if not (math.isfinite(level) and 0 < level < 1):
            raise FitError("must lie between 0 and 1", key="radius_levels", value=level)
        out.append((level, as_array(f"radius_levels[{level:g}]", radii, n)))
    return tuple(out)
