"""Water and air: published correlations, temperature in kelvin, SI results.

The formulas here are plain functions of the temperature alone (liquid water
at 0.101325 MPa, dry air at 101.325 kPa). The library in
:mod:`dropkin.liquids` checks the temperature against each liquid's range
before it calls them.

Examples
--------
>>> round(water_surface_tension(293.15) * 1e3, 2)   # mN/m, IAPWS R1-76(2014)
72.74
>>> round(water_density(293.15), 2)                 # kg/m^3, Kell (1975)
998.2
"""

from __future__ import annotations

import math

__all__ = [
    "WATER_CRITICAL_TEMPERATURE",
    "water_surface_tension",
    "water_density",
    "water_viscosity",
    "air_viscosity",
    "air_density",
]

WATER_CRITICAL_TEMPERATURE = 647.096  # K, IAPWS


def water_surface_tension(temperature: float) -> float:
    """Surface tension of water against its vapour (N/m), IAPWS R1-76(2014).

    ``sigma = B tau**mu (1 + b tau)`` with ``tau = 1 - T/Tc``,
    ``Tc = 647.096 K``, ``B = 235.8 mN/m``, ``b = -0.625``, ``mu = 1.256``
    (IAPWS, "Revised Release on Surface Tension of Ordinary Water
    Substance", 2014). Valid from the triple point to the critical point;
    the release states an uncertainty of about 0.5 % at room temperature
    (from memory), and tables that follow it agree to 0.15 %.

    Parameters
    ----------
    temperature : float
        Temperature (K).

    Examples
    --------
    >>> round(water_surface_tension(273.15) * 1e3, 2)
    75.65
    """
    tau = 1.0 - temperature / WATER_CRITICAL_TEMPERATURE
    return 235.8e-3 * tau**1.256 * (1.0 - 0.625 * tau)


def water_density(temperature: float) -> float:
    """Density of liquid water at 0.101325 MPa (kg/m^3), Kell (1975).

    G. S. Kell, J. Chem. Eng. Data 20, 97 (1975), Eq. for 0–150 °C at one
    atmosphere::

        rho = (999.83952 + 16.945176 t - 7.9870401e-3 t^2 - 46.170461e-6 t^3
               + 105.56302e-9 t^4 - 280.54253e-12 t^5) / (1 + 16.879850e-3 t)

    with t in °C. The coefficients are quoted from memory; against IAPWS-95
    (CoolProp 8.0.0) they agree within 2e-5 relative from 0 to 100 °C,
    which is far better than the 0.2 % dropkin needs (see the tests).

    Parameters
    ----------
    temperature : float
        Temperature (K).
    """
    t = temperature - 273.15
    numerator = (
        999.83952
        + 16.945176 * t
        - 7.9870401e-3 * t**2
        - 46.170461e-6 * t**3
        + 105.56302e-9 * t**4
        - 280.54253e-12 * t**5
    )
    return numerator / (1.0 + 16.879850e-3 * t)


# IAPWS 2008 viscosity (Huber et al., J. Phys. Chem. Ref. Data 38, 101, 2009):
# the dilute-gas term mu0 and the finite-density term mu1; the critical
# enhancement mu2 is 1 outside a tiny region near the critical point and is
# left out, as the release allows for industrial use.
_H0 = (1.67752, 2.20462, 0.6366564, -0.241605)
# (i, j, H_ij): coefficient of (1/Tbar - 1)**i (rhobar - 1)**j
_H1 = (
    (0, 0, 5.20094e-1),
    (1, 0, 8.50895e-2),
    (2, 0, -1.08374),
    (3, 0, -2.89555e-1),
    (0, 1, 2.22531e-1),
    (1, 1, 9.99115e-1),
    (2, 1, 1.88797),
    (3, 1, 1.26613),
    (5, 1, 1.20573e-1),
    (0, 2, -2.81378e-1),
    (1, 2, -9.06851e-1),
    (2, 2, -7.72479e-1),
    (3, 2, -4.89837e-1),
    (4, 2, -2.57040e-1),
    (0, 3, 1.61913e-1),
    (1, 3, 2.57399e-1),
    (0, 4, -3.25372e-2),
    (3, 4, 6.98452e-2),
    (4, 5, 8.72102e-3),
    (3, 6, -4.35673e-3),
    (5, 6, -5.93264e-4),
)


def water_viscosity(temperature: float) -> float:
    """Viscosity of liquid water at 0.101325 MPa (Pa s), IAPWS 2008.

    The IAPWS 2008 formulation (Huber et al., J. Phys. Chem. Ref. Data 38,
    101, 2009) without its critical enhancement: ``mu = mu0(Tbar) *
    mu1(Tbar, rhobar)`` with ``Tbar = T / 647.096 K``, ``rhobar = rho / 322
    kg/m^3``, ``mu0 = 100 sqrt(Tbar) / sum_i H_i / Tbar**i`` (µPa s) and
    ``mu1 = exp(rhobar sum_ij H_ij (1/Tbar - 1)**i (rhobar - 1)**j)``. The
    density at 0.101325 MPa comes from :func:`water_density` (Kell 1975).
    Coefficients quoted from memory; against CoolProp 8.0.0 (which
    implements the same formulation) they agree within 3e-5 relative from
    0 to 100 °C.

    Parameters
    ----------
    temperature : float
        Temperature (K).

    Examples
    --------
    >>> round(water_viscosity(293.15) * 1e3, 4)   # mPa s
    1.0016
    """
    tbar = temperature / WATER_CRITICAL_TEMPERATURE
    rhobar = water_density(temperature) / 322.0
    mu0 = 100.0 * math.sqrt(tbar) / sum(h / tbar**i for i, h in enumerate(_H0))
    x, y = 1.0 / tbar - 1.0, rhobar - 1.0
    mu1 = math.exp(rhobar * sum(h * x**i * y**j for i, j, h in _H1))
    return 1e-6 * mu0 * mu1


def air_viscosity(temperature: float) -> float:
    """Viscosity of dry air (Pa s), Sutherland's law.

    ``mu = mu0 (T/T0)**1.5 (T0 + S)/(T + S)`` with ``mu0 = 1.716e-5 Pa s``,
    ``T0 = 273.15 K``, ``S = 110.4 K`` (Sutherland, Phil. Mag. 36, 507, 1893;
    constants as tabulated by F. M. White, *Viscous Fluid Flow*, from
    memory). About 0.4 % below CoolProp's air at 20 °C.

    Parameters
    ----------
    temperature : float
        Temperature (K).
    """
    t0, s = 273.15, 110.4
    return 1.716e-5 * (temperature / t0) ** 1.5 * (t0 + s) / (temperature + s)


AIR_MOLAR_MASS = 28.9647e-3  # kg/mol, U.S. Standard Atmosphere 1976 (from memory)
GAS_CONSTANT = 8.314462618  # J/(mol K), CODATA 2018 (exact since the 2019 SI)
STANDARD_PRESSURE = 101325.0  # Pa, one standard atmosphere


def air_density(temperature: float) -> float:
    """Density of dry air at 101.325 kPa (kg/m^3), ideal gas law.

    ``rho = p M / (R T)`` with ``M = 28.9647 g/mol`` (U.S. Standard
    Atmosphere 1976) and ``R = 8.314462618 J/(mol K)``; within 0.05 % of
    CoolProp's air near room temperature.

    Parameters
    ----------
    temperature : float
        Temperature (K).

    Examples
    --------
    >>> round(air_density(293.15), 3)
    1.204
    """
    return STANDARD_PRESSURE * AIR_MOLAR_MASS / (GAS_CONSTANT * temperature)
