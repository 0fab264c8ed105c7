"""The published laws of benchmarks/coverage.py, written out with numpy (SI; τ = t − t0 ≥ 0).

Each carries its source; none passes through dropkin's catalogue or fitting.
"""

from __future__ import annotations

import math

import numpy as np


def inertial_coalescence(tau, *, gamma, rho, R, D0):
    """r = D0 (γR/ρ)^¼ τ^½: Phys. Rev. Lett. 95, 164503 (2005); J. Fluid Mech. 527, 85 (2005)."""
    return D0 * (gamma * R / rho) ** 0.25 * np.sqrt(tau)


def linear_viscous(tau, *, gamma, eta, C):
    """r = C (γ/η) τ, inertially limited viscous: PNAS 109, 6857 (2012)."""
    return C * (gamma / eta) * np.asarray(tau, dtype=float)


def els_log_law(tau, *, gamma, eta, R, C):
    """r = −C (γτ/η) ln(γτ/(ηR)), C = 1/π: J. Fluid Mech. 401, 293 (1999)."""
    x = gamma * np.asarray(tau, dtype=float) / (eta * R)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(x > 0, -C * R * x * np.log(np.where(x > 0, x, 1.0)), 0.0)


def outer_viscous(tau, *, gamma, eta_out, R, C1):
    """r = C1 (γRτ/η_o)^½, C1 = 1.2: Nat. Commun. 5, 3182 (2014), Fig. 2."""
    return C1 * np.sqrt(gamma * R * np.asarray(tau, dtype=float) / eta_out)


def inertial_spreading(tau, *, gamma, rho, R, C):
    """a = C (γR/ρ)^¼ τ^½: Phys. Rev. E 69, 016301 (2004)."""
    return C * (gamma * R / rho) ** 0.25 * np.sqrt(tau)


def tanner(tau, *, gamma, eta, R, C):
    """a = C (γV³/η)^(1/10) τ^(1/10), V = 4πR³/3: J. Phys. D 12, 1473 (1979)."""
    volume = 4.0 * math.pi * R**3 / 3.0
    return C * (gamma * volume**3 / eta) ** 0.1 * np.asarray(tau, dtype=float) ** 0.1


def harmonic_blend(r1, r2):
    """1/r = 1/r1 + 1/r2: Phys. Rev. Lett. 106, 114501 (2011) (docs/physics.md §3)."""
    total = np.asarray(r1, dtype=float) + r2
    return np.where(total > 0, r1 * r2 / np.where(total > 0, total, 1.0), 0.0)


def crossover_ilv_inertial(tau, *, gamma, eta, rho, R, C, D0):
    """ILV (PNAS 109, 6857, 2012) into inertial (PRL 95, 164503, 2005), harmonic blend."""
    early = linear_viscous(tau, gamma=gamma, eta=eta, C=C)
    return harmonic_blend(early, inertial_coalescence(tau, gamma=gamma, rho=rho, R=R, D0=D0))
