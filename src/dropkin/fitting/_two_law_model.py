"""The two-regime model's prediction of ``ln r`` and its exact derivatives (private).

:class:`TwoLawModel` is fitted by :func:`._two_laws.blend_fit`; the models are
described in :mod:`._blends`. With ``τ = t - t0``, ``τc = exp(ln τc)`` and
each law's ``f_i`` (``n_i ln τ`` or the shape's :meth:`LawShape.log_shape`,
whose local exponent ``k_i = df_i/d ln τ`` is :meth:`LawShape.slope`):

- ``L1 = ln A1 + f1(τ)``, ``L2 = ln A1 + f1(τc) - f2(τc) + f2(τ)``;
- broken power law: ``L1`` before τc, ``L2`` after;
- blend: ``ln r = d/s · ln(exp(d s L1) + exp(d s L2))``, d the direction.

:meth:`TwoLawModel.log_radius_and_gradient` gives ``ln r`` and its
derivative with respect to every free parameter, in closed form, so that the
least-squares solver needs one evaluation of the model per step instead of one
per parameter and one more (finite differences). The blend's derivative with
respect to ``L_i`` is the weight ``w_i = exp(d s (L_i - ln r))`` (the two add
up to 1; for the broken power law w1 is 1 before τc and 0 after), and with
respect to s it is ``(w1 L1 + w2 L2 - ln r)/s``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ._core import LawShape

__all__ = ["TwoLawModel", "exp_or_nan"]


@dataclass(frozen=True)
class TwoLawModel:
    """The parameter layout and prediction of one two-regime model (private).

    Parameters are ``[ln A1, n1?, n2?, ln τc, s?, t0?]``, present when free.
    """

    kind: str  # "blend" or "broken"
    early: LawShape | None
    late: LawShape | None
    sharpness: float | None
    direction: int  # -1: early law is the smaller at first; +1: the larger
    t0_fixed: float | None

    def names(self):
        out = ["lnA1"]
        if self.early is None:
            out.append("n1")
        if self.late is None:
            out.append("n2")
        out.append("lntc")
        if self.kind == "blend" and self.sharpness is None:
            out.append("s")
        if self.t0_fixed is None:
            out.append("t0")
        return out

    def unpack(self, theta):
        p = dict(zip(self.names(), theta, strict=True))
        p.setdefault("s", self.sharpness if self.sharpness is not None else math.nan)
        p.setdefault("t0", self.t0_fixed)
        return p

    def _f(self, shape, n, tau, ln_tau=None):
        if shape is not None:
            return shape.log_shape(tau)
        return n * (np.log(tau) if ln_tau is None else ln_tau)

    def _k(self, shape, n, tau):
        """Local exponent ``df/d ln τ`` of one law."""
        return float(n) if shape is None else shape.slope(tau)

    def _two_laws(self, p, time):
        """τ, ln τ, τc and ``L1``, ``L2`` at the points."""
        tau = time - p["t0"]
        ln_tau = np.log(tau)
        tc = np.exp(p["lntc"])
        f1c = self._f(self.early, p.get("n1"), tc)
        f2c = self._f(self.late, p.get("n2"), tc)
        lr1 = p["lnA1"] + self._f(self.early, p.get("n1"), tau, ln_tau)
        lr2 = p["lnA1"] + f1c - f2c + self._f(self.late, p.get("n2"), tau, ln_tau)
        return tau, ln_tau, tc, lr1, lr2

    def log_radius(self, theta, time):
        p = self.unpack(theta)
        tau, _, tc, lr1, lr2 = self._two_laws(p, time)
        return self._combine(p, tau, tc, lr1, lr2)

    def _combine(self, p, tau, tc, lr1, lr2):
        """``ln r`` from the two laws' ``L1``, ``L2``."""
        if self.kind == "broken":
            return np.where(tau < tc, lr1, lr2)
        s = p["s"]
        if self.direction < 0:
            return -np.logaddexp(-s * lr1, -s * lr2) / s
        return np.logaddexp(s * lr1, s * lr2) / s

    def exponents(self, theta):
        p = self.unpack(theta)
        n1 = self.early.exponent if self.early is not None else p["n1"]
        n2 = self.late.exponent if self.late is not None else p["n2"]
        return float(n1), float(n2)

    def prefactors(self, theta):
        """(A1, A2) in reported units, and the common radius at τ_c."""
        p = self.unpack(theta)
        tc = math.exp(p["lntc"])
        f1c = float(self._f(self.early, p.get("n1"), np.array(tc)))
        f2c = float(self._f(self.late, p.get("n2"), np.array(tc)))
        ln_a2 = p["lnA1"] + f1c - f2c
        u1 = 1.0 if self.early is None else self.early.prefactor_unit_factor()
        u2 = 1.0 if self.late is None else self.late.prefactor_unit_factor()
        return (
            u1 * exp_or_nan(p["lnA1"]),
            u2 * exp_or_nan(ln_a2),
            exp_or_nan(p["lnA1"] + f1c),
        )

    def log_radius_and_gradient(self, theta, time):
        """``ln r`` (N,) and its derivative (N, k) with respect to the free parameters."""
        p = self.unpack(theta)
        tau, ln_tau, tc, lr1, lr2 = self._two_laws(p, time)
        lr = self._combine(p, tau, tc, lr1, lr2)
        if self.kind == "broken":
            w1 = (tau < tc).astype(float)
            w2 = 1.0 - w1
        else:
            d, s = self.direction, p["s"]
            w1 = np.exp(d * s * (lr1 - lr))
            w2 = np.exp(d * s * (lr2 - lr))
        names = self.names()
        grad = np.empty((len(tau), len(names)))
        grad[:, 0] = 1.0  # ln A1 shifts both laws
        if "n1" in names:
            grad[:, names.index("n1")] = w1 * ln_tau + w2 * p["lntc"]
        if "n2" in names:
            grad[:, names.index("n2")] = w2 * (ln_tau - p["lntc"])
        k1c = self._k(self.early, p.get("n1"), tc)
        grad[:, names.index("lntc")] = w2 * (k1c - self._k(self.late, p.get("n2"), tc))
        if "s" in names:
            grad[:, names.index("s")] = (w1 * lr1 + w2 * lr2 - lr) / p["s"]
        if "t0" in names:
            k1 = self._k(self.early, p.get("n1"), tau)
            grad[:, names.index("t0")] = (
                -(w1 * k1 + w2 * self._k(self.late, p.get("n2"), tau)) / tau
            )
        return lr, grad


def exp_or_nan(x: float) -> float:
    """``exp(x)``, or NaN beyond the floating-point range (the fit then fails)."""
    return math.exp(x) if abs(x) < 700.0 else math.nan
