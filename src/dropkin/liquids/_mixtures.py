"""Glycerol–water mixtures, ethanol and silicone oils: formulas in kelvin, SI results.

Each function states its source and how far it can be trusted. The library in
:mod:`dropkin.liquids` checks temperatures and mass fractions before calling
them.

Examples
--------
>>> round(glycerol_water_viscosity(293.15, 0.5) * 1e3, 3)   # mPa s, Cheng (2008)
6.002
>>> round(glycerol_water_density(293.15, 1.0), 2)           # kg/m^3, Volk & Kähler
1261.06
"""

from __future__ import annotations

import math

import numpy as np

from ._water import water_surface_tension

__all__ = [
    "glycerol_water_viscosity",
    "glycerol_water_density",
    "glycerol_water_surface_tension",
    "ethanol_surface_tension",
    "ethanol_viscosity",
    "ethanol_density",
    "SILICONE_OIL_GRADES",
    "silicone_oil_properties",
]


def glycerol_water_viscosity(temperature: float, mass_fraction: float) -> float:
    """Viscosity of a glycerol–water mixture (Pa s), Cheng (2008).

    N.-S. Cheng, Ind. Eng. Chem. Res. 47, 3285 (2008); stated for 0–100 wt %
    and 0–100 °C. With T in °C and C_m the glycerol mass fraction, in mPa s:
    ``mu = mu_w**alpha mu_g**(1 - alpha)``,
    ``alpha = 1 - C_m + a b C_m (1 - C_m) / (a C_m + b (1 - C_m))``,
    ``a = 0.705 - 0.0017 T``, ``b = (4.9 + 0.036 T) a**2.5``,
    ``mu_w = 1.790 exp((-1230 - T) T / (36100 + 360 T))``,
    ``mu_g = 12100 exp((-1233 + T) T / (9900 + 70 T))``.

    Parameters
    ----------
    temperature : float
        Temperature (K).
    mass_fraction : float
        Glycerol mass fraction, 0 to 1.
    """
    t = temperature - 273.15
    c = mass_fraction
    a = 0.705 - 0.0017 * t
    b = (4.9 + 0.036 * t) * a**2.5
    alpha = 1.0 - c + a * b * c * (1.0 - c) / (a * c + b * (1.0 - c))
    mu_w = 1.790 * math.exp((-1230.0 - t) * t / (36100.0 + 360.0 * t))
    mu_g = 12100.0 * math.exp((-1233.0 + t) * t / (9900.0 + 70.0 * t))
    return 1e-3 * mu_w**alpha * mu_g ** (1.0 - alpha)


def glycerol_water_density(temperature: float, mass_fraction: float) -> float:
    """Density of a glycerol–water mixture (kg/m^3), Volk & Kähler (2018).

    A. Volk and C. J. Kähler, Exp. Fluids 59, 75 (2018): Cheng's mixing of
    the pure densities corrected for the volume contraction, with a new
    glycerol fit, both matched to Gregory's tables. With T in °C:
    ``rho_g = 1273.3 - 0.6121 T``,
    ``rho_w = 1000 (1 - (|T - 3.98| / 615)**1.71)``,
    ``C_v = (C_m/rho_g) / (C_m/rho_g + (1 - C_m)/rho_w)``,
    ``kappa = 1 + c sin(C_m**1.31 pi)**0.81`` with
    ``c = 1.78e-6 T**2 - 1.82e-4 T + 1.41e-2``, and
    ``rho = kappa (rho_g C_v + rho_w (1 - C_v))``. This is the Volk–Kähler
    variant, not Cheng's original density fit without the contraction
    factor. Agrees with Dow's tables within 0.05 % at 20 and 25 °C.

    Parameters
    ----------
    temperature : float
        Temperature (K).
    mass_fraction : float
        Glycerol mass fraction, 0 to 1.
    """
    t = temperature - 273.15
    c = mass_fraction
    rho_g = 1273.3 - 0.6121 * t
    rho_w = 1000.0 * (1.0 - (abs(t - 3.98) / 615.0) ** 1.71)
    volume_fraction = (c / rho_g) / (c / rho_g + (1.0 - c) / rho_w)
    contraction = (
        1.0 + (1.78e-6 * t**2 - 1.82e-4 * t + 1.41e-2) * math.sin(c**1.31 * math.pi) ** 0.81
    )
    return contraction * (rho_g * volume_fraction + rho_w * (1.0 - volume_fraction))


# Surface tension of glycerol–water at 20 °C, from memory of the table of the
# Glycerine Producers' Association (1963), "Physical properties of glycerine
# and its solutions": mass fraction -> sigma in mN/m. Status M, ±1.5 mN/m.
# Only the shape phi(C_m) of this table is used (see below); its ends are
# replaced by the water and glycerol formulas.
_GLYCEROL_WATER_SIGMA_20C = (
    (0.0, 72.74),  # pure water: IAPWS R1-76(2014) at 20 °C, not from the table
    (0.2, 72.0),
    (0.4, 71.0),
    (0.5, 70.0),
    (0.6, 69.0),
    (0.7, 67.8),
    (0.8, 66.5),
    (0.85, 65.8),
    (0.9, 65.0),
    (1.0, 63.4),
)
# Anhydrous glycerol: the PPDS equation sigma = A (1 - T/Tc)**B of the VDI Heat
# Atlas, 2nd ed. (Springer, 2010), glycerol entry, with the coefficients as the
# chemicals 1.5.2 library tabulates them from that handbook ("VDI PPDS surface
# tensions"; the handbook's own page was not at hand: C, not V).
_GLYCEROL_SIGMA_A, _GLYCEROL_SIGMA_B, _GLYCEROL_SIGMA_TC = 0.09019, 0.80707, 850.05


def _glycerol_surface_tension(temperature: float) -> float:
    """Anhydrous glycerol against air (N/m), VDI Heat Atlas PPDS fit (2010).

    64.11 mN/m at 20 °C and 63.65 at 25 °C, falling by 0.093 mN/(m K); the
    handbook value of 63.4 mN/m at 20 °C quoted before (from memory) lies
    1.1 % below it. The fit's lower end is glycerol's melting point, 18.3 °C;
    below it (supercooled glycerol) the same formula is extrapolated.

    Examples
    --------
    >>> round(_glycerol_surface_tension(293.15) * 1e3, 2)
    64.11
    """
    tau = 1.0 - temperature / _GLYCEROL_SIGMA_TC
    return _GLYCEROL_SIGMA_A * tau**_GLYCEROL_SIGMA_B


def glycerol_water_surface_tension(temperature: float, mass_fraction: float) -> float:
    """Surface tension of a glycerol–water mixture against air (N/m); its shape from memory.

    The two ends are published formulas: water (IAPWS R1-76(2014)) and
    anhydrous glycerol (VDI Heat Atlas PPDS fit, 2010). No published table
    of the mixtures could be found and checked, so the shape in mass
    fraction is the fractional lowering
    ``phi(C_m) = (sigma_w - sigma) / (sigma_w - sigma_g)`` at 20 °C, read off
    values remembered from the Glycerine Producers' Association table
    (1963) — **status M, uncertainty about ±1.5 mN/m** — and applied at
    every temperature:
    ``sigma(C_m, T) = sigma_w(T) - phi(C_m) (sigma_w(T) - sigma_g(T))``
    (derived here, D). Measure the surface tension when it matters.

    Parameters
    ----------
    temperature : float
        Temperature (K).
    mass_fraction : float
        Glycerol mass fraction, 0 to 1.
    """
    fractions, sigmas = zip(*_GLYCEROL_WATER_SIGMA_20C, strict=True)
    sigma_w20 = sigmas[0]
    sigma_g20 = sigmas[-1]
    phi = (sigma_w20 - np.interp(mass_fraction, fractions, sigmas)) / (sigma_w20 - sigma_g20)
    sigma_w = water_surface_tension(temperature)
    return float(sigma_w - phi * (sigma_w - _glycerol_surface_tension(temperature)))


# Ethanol: density and viscosity are two-point forms through the values of
# docs/physics.md §5.3; the surface tension is a published fit.
_ETHANOL_RHO = ((293.15, 789.4), (298.15, 785.1))  # CoolProp 8.0.0 (C)
_ETHANOL_MU = ((293.15, 1.194e-3), (298.15, 1.082e-3))  # CoolProp / Kiselev 2005 (C)
# sigma = a (1 - T/Tc)**n, J. Phys. Chem. Ref. Data 41, 043105 (2012), ethanol entry;
# coefficients as CoolProp 8.0.0 carries them for that reference (the paper's own
# table was not at hand to check them against).
_ETHANOL_SIGMA_A, _ETHANOL_SIGMA_N, _ETHANOL_SIGMA_TC = 0.05, 0.952, 513.9


def _two_point_linear(points, temperature):
    (t1, y1), (t2, y2) = points
    return y1 + (y2 - y1) * (temperature - t1) / (t2 - t1)


def ethanol_surface_tension(temperature: float) -> float:
    """Surface tension of ethanol against its vapour (N/m), a published fit.

    ``sigma = 0.05 N/m (1 - T/513.9 K)**0.952``: the ethanol entry of the
    recommended correlations for common fluids, J. Phys. Chem. Ref. Data 41,
    043105 (2012), with the coefficients as CoolProp 8.0.0 carries them for
    that reference. 22.37 mN/m at 20 °C (handbook 22.39, docs/physics.md
    §5.3), 18.49 mN/m at 60 °C. The paper's per-fluid deviation was not at
    hand; the library states 2 % (the built-in entry's ``uncertainties``),
    which covers the 20 °C handbook value.

    Examples
    --------
    >>> round(ethanol_surface_tension(293.15) * 1e3, 2)
    22.37
    """
    tau = 1.0 - temperature / _ETHANOL_SIGMA_TC
    return _ETHANOL_SIGMA_A * tau**_ETHANOL_SIGMA_N


def ethanol_density(temperature: float) -> float:
    """Density of ethanol (kg/m^3): linear through 789.4 (20 °C) and 785.1 (25 °C).

    The two values are CoolProp 8.0.0's (docs/physics.md §5.3, C); the straight
    line stays within 0.2 % of CoolProp from 0 to 60 °C.
    """
    return _two_point_linear(_ETHANOL_RHO, temperature)


def ethanol_viscosity(temperature: float) -> float:
    """Viscosity of ethanol (Pa s): Andrade form ``ln mu = A + B/T``.

    Through 1.194 mPa s (20 °C) and 1.082 mPa s (25 °C), CoolProp's values
    from the Kiselev et al. (Ind. Eng. Chem. Res., 2005) correlation
    (docs/physics.md §5.3, C); within 1 % of CoolProp from 0 to 60 °C.
    """
    (t1, mu1), (t2, mu2) = _ETHANOL_MU
    b = math.log(mu1 / mu2) / (1.0 / t1 - 1.0 / t2)
    return mu1 * math.exp(b * (1.0 / temperature - 1.0 / t1))


# Linear PDMS, nominal grades at 25 °C (docs/physics.md §5.4): kinematic viscosity
# (m^2/s), density (kg/m^3), surface tension (N/m).
SILICONE_OIL_GRADES = {
    "10cSt": (10e-6, 935.0, 20.1e-3),
    "100cSt": (100e-6, 964.5, 20.9e-3),
    "1000cSt": (1000e-6, 970.5, 21.2e-3),
}
_PDMS_ANDRADE_B = 1739.0  # K; from a viscosity-temperature coefficient of 0.60 (M)
_PDMS_EXPANSION = 9.6e-4  # 1/K, cubical expansion (M)
_PDMS_SIGMA_SLOPE = -0.06e-3  # N/(m K) (M)


def silicone_oil_properties(temperature: float, grade: str) -> tuple[float, float, float]:
    """Surface tension (N/m), viscosity (Pa s) and density (kg/m^3) of a PDMS grade.

    The 25 °C values are the nominal ones of docs/physics.md §5.4 (typical vendor
    data sheets, mostly M; the 100 cSt density V). **Grades are nominal:
    sold with ±5–10 % tolerance on viscosity; enter measured values.** Away
    from 25 °C the kinematic viscosity follows ``exp(B (1/T - 1/298.15 K))``
    with ``B = 1739 K``, the value implied by the usual viscosity-temperature
    coefficient of 0.60 for PDMS (M); density falls with a cubical expansion
    of 9.6e-4 /K (M); surface tension by -0.06 mN/(m K) (M).

    Parameters
    ----------
    temperature : float
        Temperature (K).
    grade : str
        One of the keys of :data:`SILICONE_OIL_GRADES`, e.g. ``"100cSt"``.
    """
    nu25, rho25, sigma25 = SILICONE_OIL_GRADES[grade]
    dt = temperature - 298.15
    nu = nu25 * math.exp(_PDMS_ANDRADE_B * (1.0 / temperature - 1.0 / 298.15))
    rho = rho25 / (1.0 + _PDMS_EXPANSION * dt)
    sigma = sigma25 + _PDMS_SIGMA_SLOPE * dt
    return sigma, nu * rho, rho
