"""The record types of the regime catalogue: a published law, and a law considered for a sample.

Examples
--------
>>> from dropkin.scaling import regime, sample_numbers
>>> n = sample_numbers(surface_tension=0.0727, viscosity=1e-3, density=998.0, radius=1e-3)
>>> law = regime("inertial").law(n)
>>> round(float(law([1e-4], 1.0)[0]), 7)           # r at 100 µs with D0 = 1, m
0.0001643
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from fractions import Fraction
from types import MappingProxyType

from ...errors import ExperimentError
from ...fitting._laws import power_law, viscous_log_law
from ._numbers import SampleNumbers

__all__ = ["Regime", "Candidate", "SCALING_GEOMETRIES", "powers"]

#: Geometries the catalogue knows. ``sessile-coalescence`` is coalescence of
#: drops sitting on a substrate; ``coalescence`` means free (or pendant) drops.
SCALING_GEOMETRIES = ("coalescence", "sessile-coalescence", "spreading")


def powers(**exponents: str) -> Mapping[str, Fraction]:
    """A group's powers as a read-only mapping of exact fractions (``powers(radius="1/4")``)."""
    return MappingProxyType({name: Fraction(p) for name, p in exponents.items()})


@dataclass(frozen=True)
class Regime:
    """One published scaling regime.

    Attributes
    ----------
    key : str
        The trade's name, lower case with hyphens (``"inertial"``).
    code : str
        Its id in docs/physics.md §2 (``"A3"``).
    name : str
        The literature name.
    geometries : tuple of str
        Where it applies, from :data:`SCALING_GEOMETRIES`.
    setting : str
        ``"free drops"``, ``"outer fluid"``, ``"substrate"`` or ``"any"``.
    observable : str
        ``"neck radius"``, ``"bridge height"``, ``"bridge width"`` or
        ``"contact radius"``.
    views : tuple of str
        Camera views in which the observable is seen (``"side"``, ``"bottom"``).
    exponent : fractions.Fraction
        n; for the logarithmic laws the leading power, 1.
    logarithmic : bool
        True for the ELS form ``r = -C (γt/η) ln(γt/(ηR))``.
    group_powers : Mapping[str, Fraction]
        The group as powers of :class:`SampleNumbers` fields
        (``{"surface_tension": 1/4, "radius": 1/4, "density": -1/4}``); empty
        when no group is known.
    angle_power : int
        Power of the contact angle (rad) that also multiplies the group (B1).
    group_formula : str
        The group as text.
    prefactor : float or None
        The published value of C, or the centre of its range; None when no
        value is known.
    prefactor_range : tuple of float or None
        The published range of C, when there is one.
    prefactor_status : str
        Status label of the prefactor (V, C, D, M).
    normalisation : str
        What R (or V) in the group means, and so what C is relative to.
    conditions : str
        Conditions of validity, in terms of the dimensionless numbers.
    reference : str
        The source of the law.
    status : str
        Status label of the law's form and exponent.
    note : str
        What else a user should know (may be empty).
    max_radius_ratio : float or None
        Validity limit in r/R (R the drop radius): the law is fitted only to
        frames with r ≤ this × R (docs/physics.md §4.8); None when no limit
        in r/R is published.
    validity_source : str
        Where `max_radius_ratio` comes from, with its status label.
    """

    key: str
    code: str
    name: str
    geometries: tuple[str, ...]
    setting: str
    observable: str
    views: tuple[str, ...]
    exponent: Fraction
    logarithmic: bool
    group_powers: Mapping[str, Fraction]
    group_formula: str
    prefactor: float | None
    prefactor_range: tuple[float, float] | None
    prefactor_status: str
    normalisation: str
    conditions: str
    reference: str
    status: str
    angle_power: int = 0
    note: str = ""
    max_radius_ratio: float | None = None
    validity_source: str = ""
    condition: Callable[[SampleNumbers], tuple[bool, str]] = field(
        default=lambda n: (True, ""), repr=False, compare=False
    )

    def __hash__(self) -> int:
        return hash(self.key)

    def group(self, numbers: SampleNumbers) -> float | None:
        """The group's SI value for a sample (m s^-n); None when a value it needs is unknown."""
        if not self.group_powers:
            return None
        value = 1.0
        for name, power in self.group_powers.items():
            x = numbers.value(name)
            if x is None:
                return None
            value *= x ** float(power)
        if self.angle_power:
            if numbers.contact_angle is None:
                return None
            value *= numbers.contact_angle**self.angle_power
        return value

    def check(self, numbers: SampleNumbers) -> tuple[bool, str]:
        """Whether the conditions of validity hold for a sample, and why (one line)."""
        return self.condition(numbers)

    def law(self, numbers: SampleNumbers):
        """The law bound to a sample: ``law(t, prefactor=None, exponent=None) -> r`` (m).

        ``prefactor`` is the dimensionless C (default :attr:`prefactor`);
        ``exponent`` replaces n for a free-exponent fit (power laws only).

        Raises
        ------
        ExperimentError
            When the group needs a value the sample lacks (e.g. the contact
            angle), or no group is known.
        """
        group = self.group(numbers)
        if group is None:
            missing = "a contact angle" if self.angle_power else "values the sample lacks"
            raise ExperimentError(
                f"regime {self.key!r} has no group for this sample (needs {missing})",
                key=self.key,
            )
        default_c = self.prefactor
        n = float(self.exponent)

        if self.logarithmic:
            speed, radius = numbers.capillary_speed, numbers.radius

            def log_law(t, prefactor=None):
                c = default_c if prefactor is None else prefactor
                return viscous_log_law(t, c, capillary_speed=speed, radius=radius)

            log_law.__doc__ = f"{self.key}: r = -C (γt/η) ln(γt/(ηR)), radius in m."
            return log_law

        def bound_law(t, prefactor=None, exponent=None):
            c = default_c if prefactor is None else prefactor
            if c is None:
                raise ExperimentError(f"regime {self.key!r} has no published prefactor; give one")
            if exponent is None:
                return power_law(t, c * group, n)
            # With a free exponent the group keeps its published powers; the
            # time unit stays the second, so C then carries s^(n - n_free).
            return power_law(t, c * group, exponent)

        bound_law.__doc__ = f"{self.key}: r = C {self.group_formula} t^({self.exponent}), in m."
        return bound_law


@dataclass(frozen=True)
class Candidate:
    """A catalogue regime considered for one sample.

    Attributes
    ----------
    regime : Regime
    plausible : bool
        Whether its conditions of validity hold for the sample.
    reason : str
        Why, in one line, with the numbers that decided.
    group : float or None
        The group's value for the sample (m s^-n).
    """

    regime: Regime
    plausible: bool
    reason: str
    group: float | None
