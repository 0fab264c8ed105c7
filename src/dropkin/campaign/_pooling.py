"""The collective prefactor of a master curve: k estimates of ln C combined.

The estimates ln C_i are combined with the random-effects model of
DerSimonian & Laird (Control. Clin. Trials 7, 177, 1986), its 95 % interval
with the Hartung–Knapp t-interval on k - 1 degrees of freedom, never narrower
than the DerSimonian–Laird one (Hartung & Knapp, Stat. Med. 20, 3875, 2001;
the "never narrower" rule as in Röver, Knapp & Friede, BMC Med. Res.
Methodol. 15, 99, 2015).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import DropkinError

__all__ = ["Pooled", "pool_log_prefactors"]


@dataclass(frozen=True)
class Pooled:
    """A random-effects combination of k estimates of ln C.

    Attributes
    ----------
    log_value, log_se : float
        Pooled ln C and its standard error (the larger of Hartung–Knapp's
        and DerSimonian–Laird's).
    log_ci : tuple of float
        95 % interval of ln C.
    tau2 : float
        Between-recording variance of ln C (DerSimonian–Laird).
    q : float
        Cochran's Q.
    k : int
    """

    log_value: float
    log_se: float
    log_ci: tuple[float, float]
    tau2: float
    q: float
    k: int

    @property
    def value(self) -> float:
        return math.exp(self.log_value)

    @property
    def ci(self) -> tuple[float, float]:
        return (math.exp(self.log_ci[0]), math.exp(self.log_ci[1]))


def pool_log_prefactors(log_c, se) -> Pooled:
    """Combine estimates ``log_c`` (ln C_i) with standard errors ``se``.

    Examples
    --------
    >>> p = pool_log_prefactors([0.0, 0.02, -0.01], [0.01, 0.01, 0.02])
    >>> round(p.value, 4), p.k
    (1.007, 3)
    """
    from scipy import stats

    y = np.asarray(log_c, dtype=float)
    s = np.asarray(se, dtype=float)
    if y.ndim != 1 or y.shape != s.shape or y.size == 0:
        raise DropkinError("needs one standard error per estimate, and at least one")
    if not (np.all(np.isfinite(y)) and np.all(np.isfinite(s)) and np.all(s > 0)):
        raise DropkinError("needs finite estimates and positive standard errors")
    k = y.size
    v = s**2
    w = 1.0 / v
    mean_fe = float(np.sum(w * y) / np.sum(w))
    q = float(np.sum(w * (y - mean_fe) ** 2))
    if k == 1:
        half = 1.959963984540054 * s[0]
        return Pooled(float(y[0]), float(s[0]), (y[0] - half, y[0] + half), 0.0, 0.0, 1)
    c = float(np.sum(w) - np.sum(w**2) / np.sum(w))
    tau2 = max(0.0, (q - (k - 1)) / c)
    ws = 1.0 / (v + tau2)
    mean = float(np.sum(ws * y) / np.sum(ws))
    se_dl = math.sqrt(1.0 / float(np.sum(ws)))
    se_hk = math.sqrt(float(np.sum(ws * (y - mean) ** 2)) / ((k - 1) * float(np.sum(ws))))
    se_used = max(se_dl, se_hk)
    half = float(stats.t.ppf(0.975, k - 1)) * se_used
    return Pooled(mean, se_used, (mean - half, mean + half), tau2, q, k)
