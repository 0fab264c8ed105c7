"""Radius laws r(t) that a synthetic recording follows exactly: the record and its blends.

A law maps the time since contact (seconds) to the neck or contact radius
(metres). Every law is a :class:`RadiusLaw` record: the function, a name, the
parameters written to ``truth.json``, and the time after contact up to which
the formula is meaningful (``valid_until``). The laws of the regimes are in
:mod:`._regime_laws`.

Examples
--------
>>> law = power_law(prefactor=0.01, exponent=0.5)
>>> round(float(law(1e-4)) * 1e6, 1)   # micrometres, 100 us after contact
100.0
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

import numpy as np
from scipy import optimize

from ..errors import ExperimentError

__all__ = [
    "RadiusLaw",
    "check_positive",
    "crossing_time",
    "custom_law",
    "power_law",
    "harmonic_blend",
    "smooth_blend",
    "ringing_tail",
    "time_at_radius",
]


@dataclass(frozen=True)
class RadiusLaw:
    """A radius law r(t): time since contact in seconds to radius in metres.

    Attributes
    ----------
    name : str
        A short name, written to ``truth.json`` (e.g. ``"inertial"``).
    function : callable
        ``function(t)`` for a float array ``t > 0`` returns ``r(t)`` in metres.
        It is only ever called with positive times; :meth:`__call__` handles
        ``t <= 0`` (radius 0, before contact).
    parameters : dict of str to float
        The law's parameters in SI units, for the record.
    valid_until : float
        Time since contact (s) beyond which the formula stops describing a
        growing radius; ``inf`` when it never does.
    """

    name: str
    function: Callable[[np.ndarray], np.ndarray] = field(compare=False)
    parameters: Mapping[str, float] = field(default_factory=dict, hash=False)
    valid_until: float = math.inf

    def __call__(self, time_since_contact):
        """Radius in metres at `time_since_contact` (s); 0 where it is <= 0.

        Parameters
        ----------
        time_since_contact : float or (K,) array_like

        Returns
        -------
        radius : float or (K,) ndarray
        """
        t = np.asarray(time_since_contact, dtype=float)
        out = np.zeros_like(t)
        after = t > 0
        if np.any(after):
            out[after] = np.asarray(self.function(t[after]), dtype=float)
        return float(out) if out.ndim == 0 else out


def check_positive(**values: float) -> None:
    """Refuse any value that is not a positive finite number, naming its key."""
    for key, value in values.items():
        if not (isinstance(value, int | float) and math.isfinite(value) and value > 0):
            raise ExperimentError("must be a positive finite number", key=key, value=value)


def custom_law(function, *, name: str = "custom", parameters=None, valid_until=math.inf):
    """Wrap any callable ``function(t) -> r`` (SI) as a :class:`RadiusLaw`."""
    if not callable(function):
        raise ExperimentError("must be callable", key="function", value=function)
    return RadiusLaw(name, function, dict(parameters or {}), float(valid_until))


def power_law(*, prefactor: float, exponent: float, name: str = "power") -> RadiusLaw:
    """r = prefactor * t**exponent (SI: prefactor in m s^-exponent).

    Examples
    --------
    >>> float(power_law(prefactor=2.0, exponent=0.5)(4.0))
    4.0
    """
    check_positive(prefactor=prefactor, exponent=exponent)

    def function(t):
        return prefactor * t**exponent

    return RadiusLaw(name, function, {"prefactor": prefactor, "exponent": exponent})


def crossing_time(first: RadiusLaw, second: RadiusLaw) -> float | None:
    """The time since contact (s) at which `first` and `second` give the same radius.

    Found on a log grid from 1 ps to 10^4 s (cut at the laws' ``valid_until``)
    and refined by Brent's method on ln r1 - ln r2. None unless the two laws
    cross exactly once there.

    Examples
    --------
    >>> fast = power_law(prefactor=5.0, exponent=1.0)
    >>> slow = power_law(prefactor=0.02, exponent=0.5)
    >>> round(crossing_time(fast, slow) / (0.02 / 5.0) ** 2, 9)   # 5 t = 0.02 t^1/2
    1.0
    """
    end = min(first.valid_until, second.valid_until, 1e4)
    grid = np.geomspace(1e-12, end, 241)

    def gap(t):
        with np.errstate(all="ignore"):
            return np.log(np.asarray(first.function(t), dtype=float)) - np.log(
                np.asarray(second.function(t), dtype=float)
            )

    values = gap(grid)
    finite = np.isfinite(values)
    grid, values = grid[finite], values[finite]
    changes = np.nonzero(np.sign(values[:-1]) * np.sign(values[1:]) < 0)[0]
    if changes.size != 1:
        return None
    i = int(changes[0])
    return float(optimize.brentq(lambda t: float(gap(t)), grid[i], grid[i + 1], xtol=1e-300))


def harmonic_blend(first: RadiusLaw, second: RadiusLaw) -> RadiusLaw:
    """Crossover by the harmonic blend 1/r = 1/r1 + 1/r2 (docs/physics.md section 3).

    The smaller of the two laws dominates at each time, so a fast early law
    hands over to a slow late one (e.g. inertial spreading to Tanner), and a
    linear viscous law to the t^1/2 inertial law as in PRL 106, 114501 (2011).
    The parameters record both laws' (``first.``, ``second.``) and, when the
    two laws cross once, the ``crossover_time`` (s since contact) at which
    r1 = r2 and their common radius there, ``crossover_radius`` (m).
    """

    def function(t):
        return 1.0 / (1.0 / first.function(t) + 1.0 / second.function(t))

    parameters = {f"first.{k}": v for k, v in first.parameters.items()}
    parameters |= {f"second.{k}": v for k, v in second.parameters.items()}
    crossing = crossing_time(first, second)
    if crossing is not None:
        parameters |= {
            "crossover_time": crossing,
            "crossover_radius": float(first.function(np.array([crossing]))[0]),
        }
    return RadiusLaw(
        f"harmonic-blend({first.name},{second.name})",
        function,
        parameters,
        min(first.valid_until, second.valid_until),
    )


def smooth_blend(
    first: RadiusLaw, second: RadiusLaw, *, crossover_time: float, sharpness: float = 2.0
) -> RadiusLaw:
    """A smooth hand-over from `first` to `second` around `crossover_time`.

    ln r = (1 - w) ln r1 + w ln r2 with the weight
    w = 1 / (1 + (t_c / t)**sharpness): r follows `first` for t << t_c and
    `second` for t >> t_c (a logistic step in ln t, of our own choosing).
    """
    check_positive(crossover_time=crossover_time, sharpness=sharpness)

    def function(t):
        w = 1.0 / (1.0 + (crossover_time / t) ** sharpness)
        return np.exp((1 - w) * np.log(first.function(t)) + w * np.log(second.function(t)))

    parameters = {f"first.{k}": v for k, v in first.parameters.items()}
    parameters |= {f"second.{k}": v for k, v in second.parameters.items()}
    parameters |= {"crossover_time": crossover_time, "sharpness": sharpness}
    return RadiusLaw(
        f"smooth-blend({first.name},{second.name})",
        function,
        parameters,
        min(first.valid_until, second.valid_until),
    )


def time_at_radius(law: RadiusLaw, radius: float) -> float:
    """The time since contact (s) at which a growing `law` reaches `radius` (m).

    Found on a log grid from 1 ps to 10^4 s (cut at the law's ``valid_until``)
    and refined by Brent's method.

    Examples
    --------
    >>> round(time_at_radius(power_law(prefactor=0.01, exponent=0.5), 1e-4), 12)
    0.0001
    """
    check_positive(radius=radius)
    grid = np.geomspace(1e-12, min(law.valid_until, 1e4), 241)
    above = np.nonzero(np.asarray(law.function(grid), dtype=float) >= radius)[0]
    if not above.size or above[0] == 0:
        raise ExperimentError("never reaches that radius", key="radius", value=radius)
    i = int(above[0])
    return float(
        optimize.brentq(
            lambda t: float(law.function(np.array([t]))[0]) - radius, *grid[i - 1 : i + 1]
        )
    )


def ringing_tail(
    law: RadiusLaw,
    *,
    end_time: float,
    rest_ratio: float = 1.15,
    period: float | None = None,
    damping_time: float | None = None,
) -> RadiusLaw:
    """`law` up to `end_time`, then a neck that rings about a rest radius.

    After the growth phase the merged liquid (held on its needles, a liquid
    bridge) settles towards a rest shape, overshooting and oscillating: for
    ``s = t - end_time > 0``,
    ``r = r_rest + exp(-s / damping_time) (a cos(w s) + b sin(w s))`` with
    ``r_rest = rest_ratio * r_e`` (``r_e`` the law's radius at `end_time`),
    ``a = r_e - r_rest``, ``w = 2 pi / period`` and `b` chosen so that the
    radius and its slope are continuous at `end_time` (a description of our
    own choosing, for the tests; no published form). With `rest_ratio` at most
    1 the neck slows down at once after `end_time`; above 1 it first runs
    ahead of the law before it rings. By default the period
    is twice `end_time` and the damping time one period. The parameters
    record ``growth_end_time`` (s since contact): the radius may shrink
    after it.

    Examples
    --------
    >>> law = ringing_tail(power_law(prefactor=0.01, exponent=0.5), end_time=1e-4)
    >>> round(float(law(1e-4)) * 1e6, 3), float(law(3e-4)) < float(law(2e-4))
    (100.0, True)
    """
    period = 2.0 * end_time if period is None else period
    damping_time = period if damping_time is None else damping_time
    check_positive(
        end_time=end_time, rest_ratio=rest_ratio, period=period, damping_time=damping_time
    )
    if end_time >= law.valid_until:
        raise ExperimentError("lies past the law's validity", key="end_time", value=end_time)
    ends = np.asarray(law.function(np.array([end_time, end_time * 0.999, end_time * 1.001])))
    r_end, slope = float(ends[0]), float((ends[2] - ends[1]) / (0.002 * end_time))
    rest = rest_ratio * r_end
    omega = 2.0 * math.pi / period
    a = r_end - rest
    b = (slope + a / damping_time) / omega

    def function(t):
        t = np.asarray(t, dtype=float)
        s = np.maximum(t - end_time, 0.0)
        tail = rest + np.exp(-s / damping_time) * (a * np.cos(omega * s) + b * np.sin(omega * s))
        early = np.asarray(law.function(np.minimum(t, end_time)), dtype=float)
        return np.where(t <= end_time, early, tail)

    parameters = {f"growth.{k}": v for k, v in law.parameters.items()}
    parameters |= {
        "growth_end_time": end_time,
        "rest_radius": rest,
        "period": period,
        "damping_time": damping_time,
    }
    return RadiusLaw(f"ringing({law.name})", function, parameters, law.valid_until)
