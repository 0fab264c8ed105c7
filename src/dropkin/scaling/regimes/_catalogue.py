"""The regime catalogue: the published laws of docs/physics.md §2, one frozen record each.

Every law is written ``r = C · group · t**n`` with C dimensionless and the
group a product of powers of the sample's SI values (``group_powers``);
the ELS viscous law carries its logarithm instead of a pure power. A
prefactor means something only with its normalisation (radius or diameter,
volume), which each record states. Status labels follow docs/physics.md §0:
V checked against a source, C computed, D derived, M from memory.

Examples
--------
>>> from dropkin.scaling import sample_numbers
>>> inertial = regime("inertial")
>>> inertial.code, str(inertial.exponent), inertial.group_formula
('A3', '1/2', '(γR/ρ)^(1/4)')
>>> n = sample_numbers(surface_tension=0.0727, viscosity=1e-3, density=998.0, radius=1e-3)
>>> round(inertial.group(n), 4)                    # m s^-1/2
0.0164
>>> law = inertial.law(n)
>>> round(float(law([1e-4], 1.0)[0]), 7)           # r at 100 µs with D0 = 1, m
0.0001643
"""

from __future__ import annotations

from ...errors import ExperimentError
from ._coalescence_laws import COALESCENCE_LAWS
from ._conditions import OH_OUTER_CROSSOVER, OH_VISCOUS
from ._numbers import SampleNumbers
from ._regime import SCALING_GEOMETRIES, Candidate, Regime
from ._substrate_laws import SUBSTRATE_LAWS

__all__ = [
    "Regime",
    "Candidate",
    "REGIMES",
    "SCALING_GEOMETRIES",
    "OH_VISCOUS",
    "OH_OUTER_CROSSOVER",
    "regime",
    "regime_keys",
    "candidates",
]

#: Every law, in catalogue order: coalescence (A), then the substrate (B, C).
REGIMES: tuple[Regime, ...] = COALESCENCE_LAWS + SUBSTRATE_LAWS

_BY_KEY = {r.key: r for r in REGIMES}


def regime_keys() -> tuple[str, ...]:
    """The keys of every regime, in catalogue order."""
    return tuple(_BY_KEY)


def regime(key: str) -> Regime:
    """The catalogue record for a key.

    Raises
    ------
    ExperimentError
        For an unknown key; the message lists the keys that exist.
    """
    try:
        return _BY_KEY[key]
    except KeyError:
        raise ExperimentError(
            "unknown regime", key="regime", value=key, expected="one of " + ", ".join(_BY_KEY)
        ) from None


def _check_choice(value, allowed, *, key):
    if value not in allowed:
        raise ExperimentError(
            "is not a known choice", key=key, value=value, expected=" or ".join(allowed)
        )


def candidates(numbers: SampleNumbers, geometry: str, view: str = "side") -> tuple[Candidate, ...]:
    """The regimes that apply to a sample's geometry and view, each with a plausibility flag.

    Parameters
    ----------
    numbers : SampleNumbers
    geometry : str
        One of :data:`SCALING_GEOMETRIES`.
    view : str
        ``"side"`` or ``"bottom"``.

    Returns
    -------
    tuple of Candidate
        In catalogue order; ``plausible`` says whether the conditions of
        validity hold, ``reason`` shows the numbers that decided.

    Examples
    --------
    >>> from dropkin.scaling import sample_numbers
    >>> n = sample_numbers(surface_tension=0.0727, viscosity=1e-3, density=998.0,
    ...                    radius=1e-3, outer_viscosity=1.8e-5, outer_density=1.2)
    >>> [c.regime.key for c in candidates(n, "coalescence") if c.plausible]
    ['inertially-limited-viscous', 'inertial']
    """
    _check_choice(geometry, SCALING_GEOMETRIES, key="geometry")
    _check_choice(view, ("side", "bottom"), key="view")
    found = []
    for entry in REGIMES:
        if geometry not in entry.geometries or view not in entry.views:
            continue
        if geometry != "coalescence" and entry.setting == "free drops" and view != "side":
            continue  # from below, drops on a plate show a bridge width, not a free neck
        plausible, reason = entry.check(numbers)
        found.append(Candidate(entry, bool(plausible), reason, entry.group(numbers)))
    return tuple(found)
