"""Dimensional analysis: every length that grows as a power of time from a sample's quantities.

For laws the catalogue does not hold. The quantities are combined two at a
time — each alone, or as a simple product: a material value times a power
of a size (``surface_tension * radius``, ``viscosity * volume**3``), or a
named product such as ``density * gravity`` — and for each pair the
exponents of ``q1**a q2**b t**n = length`` are solved from the matrix of
their [M, L, T] exponents (Buckingham's pi theorem with one dimensional
result). numpy solves the linear system; the solution is turned into
fractions (``Fraction.limit_denominator``) and verified exactly. Pairs whose
matrix is singular (a free dimensionless group remains) give no unique law
and are skipped. A law with the same exponent and the same powers as a
catalogue entry is labelled with the entry's key.

Examples
--------
>>> from dropkin.units import ureg
>>> laws = dimensional_laws({"viscosity": ureg.Quantity(1e-3, "Pa*s"),
...                          "density": ureg.Quantity(1000.0, "kg/m^3")})
>>> [(law.formula, law.matches) for law in laws]
[('viscosity^(1/2) density^(-1/2) t^(1/2)', ('diffusive',))]
>>> round(float(laws[0].length(1.0)) * 1e3, 3)   # momentum spreads ~1 mm in 1 s in water
1.0
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Mapping
from dataclasses import dataclass
from fractions import Fraction
from types import MappingProxyType

import numpy as np

from ...errors import ExperimentError
from ._catalogue import REGIMES

__all__ = [
    "DEFAULT_PRODUCTS",
    "DimensionalLaw",
    "dimensions_of",
    "dimensional_laws",
]

_BASE = ("M", "L", "T")
_PINT_BASE = {"[mass]": "M", "[length]": "L", "[time]": "T"}
_TIME = (Fraction(0), Fraction(0), Fraction(1))
_LENGTH = (Fraction(0), Fraction(1), Fraction(0))

#: Products of two quantities that the analysis also treats as one (when both
#: are given): the weight per volume of the liquid and of the outer fluid.
DEFAULT_PRODUCTS = (("density", "gravity"), ("outer_density", "gravity"))


@dataclass(frozen=True)
class DimensionalLaw:
    """A length that grows as a power of time, found from the dimensions alone.

    Attributes
    ----------
    powers : Mapping[str, Fraction]
        The group as powers of the given quantities (read-only).
    exponent : fractions.Fraction
        The power of time, n > 0.
    terms : tuple of str
        The one or two combined terms the law was solved from.
    group : float or None
        The group's value in SI units (m s^-n); None when a value is unknown.
    matches : tuple of str
        Keys of catalogue regimes with the same exponent and powers.
    formula : str
        The law as text, ``q1^(a) q2^(b) t^(n)``.
    """

    powers: Mapping[str, Fraction]
    exponent: Fraction
    terms: tuple[str, ...]
    group: float | None
    matches: tuple[str, ...]
    formula: str

    def length(self, t):
        """The length ``group * t**n`` (m) at times `t` (s), with C = 1."""
        if self.group is None:
            raise ExperimentError("the group has no value (a quantity was given without one)")
        return self.group * np.asarray(t, dtype=float) ** float(self.exponent)


def _parse_dimension_text(text: str, *, name) -> tuple[Fraction, ...]:
    exps = dict.fromkeys(_BASE, Fraction(0))
    for token in text.replace("*", " ").split():
        symbol, _, power = token.partition("^")
        if symbol not in exps:
            raise ExperimentError(
                "has an unknown dimension symbol",
                key=name,
                value=text,
                expected="symbols M, L, T with powers, e.g. 'M L^-1 T^-1'",
            )
        exps[symbol] += Fraction(power or "1")
    return tuple(exps[b] for b in _BASE)


def dimensions_of(value, *, name="quantity") -> tuple[float | None, tuple[Fraction, ...]]:
    """SI magnitude and [M, L, T] exponents of a pint quantity or a ``(value, dimension)`` pair.

    The dimension of a pair is a mapping (``{"M": 1, "L": -1, "T": -1}``),
    a text (``"M L^-1 T^-1"``) or a pint unit text (``"Pa*s"``); the value is
    taken to be in SI units and may be None.

    Raises
    ------
    ExperimentError
        For a dimension outside mass, length and time (temperature, current...).
    """
    import pint

    if isinstance(value, pint.Quantity):
        base = value.to_base_units()
        magnitude, dims = float(base.magnitude), dict(base.dimensionality)
    else:
        try:
            magnitude, dimension = value
        except (TypeError, ValueError):
            raise ExperimentError(
                "must be a pint Quantity or a (value, dimension) pair", key=name, value=value
            ) from None
        magnitude = None if magnitude is None else float(magnitude)
        if isinstance(dimension, Mapping):
            unknown = set(dimension) - set(_BASE)
            if unknown:
                raise ExperimentError(
                    "has a dimension outside mass, length and time",
                    key=name,
                    value=sorted(unknown),
                    expected="keys M, L, T",
                )
            return magnitude, tuple(Fraction(dimension.get(b, 0)) for b in _BASE)
        text = str(dimension)
        if all(tok.partition("^")[0] in _BASE for tok in text.replace("*", " ").split()):
            return magnitude, _parse_dimension_text(text, name=name)
        from ...units import ureg

        try:
            dims = dict(ureg.Unit(text).dimensionality)
        except Exception:
            raise ExperimentError(
                "is not a dimension or a unit", key=name, value=text, expected="e.g. 'Pa*s'"
            ) from None
    other = set(dims) - set(_PINT_BASE)
    if other:
        raise ExperimentError(
            "has a dimension outside mass, length and time",
            key=name,
            value=", ".join(sorted(other)),
            expected="mass, length and time only",
        )
    exps = {_PINT_BASE[k]: Fraction(v).limit_denominator(1000) for k, v in dims.items()}
    return magnitude, tuple(exps.get(b, Fraction(0)) for b in _BASE)


@dataclass(frozen=True)
class _Term:
    label: str
    powers: tuple[tuple[str, int], ...]  # (quantity, power)
    dims: tuple[Fraction, ...]


def _terms(dims, *, products, max_size_power):
    def is_size(d):
        return d[0] == 0 and d[2] == 0 and d[1] != 0

    names = list(dims)
    sizes = [q for q in names if is_size(dims[q])]
    materials = [q for q in names if q not in sizes]
    singles = [_Term(q, ((q, 1),), dims[q]) for q in names]
    paired = [
        _Term(
            f"{a}*{b}",
            ((a, 1), (b, 1)),
            tuple(x + y for x, y in zip(dims[a], dims[b], strict=True)),
        )
        for a, b in products
        if a in dims and b in dims
    ]
    with_sizes = []
    for base in [t for t in singles if t.label in materials] + paired:
        for s in sizes:
            for k in range(1, max_size_power + 1):
                label = f"{base.label}*{s}" + (f"^{k}" if k > 1 else "")
                d = tuple(x + k * y for x, y in zip(base.dims, dims[s], strict=True))
                with_sizes.append(_Term(label, (*base.powers, (s, k)), d))
    return singles + paired + with_sizes


def _solve(terms: tuple[_Term, ...], *, max_denominator):
    """Exponents (a, b, ..., n) with prod(term**a) t**n = length, exact; None if not unique."""
    matrix = np.array([[float(t.dims[i]) for t in terms] + [float(_TIME[i])] for i in range(3)])
    target = np.array([float(x) for x in _LENGTH])
    if np.linalg.matrix_rank(matrix) < matrix.shape[1]:
        return None  # a free dimensionless group: no unique law
    if matrix.shape[0] == matrix.shape[1]:
        x = np.linalg.solve(matrix, target)
    else:
        x, *_ = np.linalg.lstsq(matrix, target, rcond=None)
    exps = [Fraction(float(v)).limit_denominator(max_denominator) for v in x]
    for i in range(3):  # exact check in rational arithmetic
        total = sum(e * t.dims[i] for e, t in zip(exps, terms, strict=False)) + exps[-1] * _TIME[i]
        if total != _LENGTH[i]:
            return None
    return exps


def _text(powers, exponent) -> str:
    parts = [f"{q}^({p})" for q, p in powers.items()]
    return " ".join([*parts, f"t^({exponent})"])


def dimensional_laws(
    quantities,
    *,
    products=DEFAULT_PRODUCTS,
    max_size_power=3,
    max_denominator=100,
    catalogue=REGIMES,
):
    """Every law ``length = group * t**n`` (n > 0) that one or two terms of `quantities` allow.

    Parameters
    ----------
    quantities : Mapping[str, pint.Quantity or (value, dimension)]
        The sample's quantities by name. Use the :class:`SampleNumbers` field
        names (``surface_tension``, ``viscosity``, ``density``, ``radius``,
        ``volume``, ``outer_viscosity``, ``outer_density``, ``gravity``) for
        catalogue matches. Dimensionless quantities are ignored (they cannot
        change an exponent).
    products : sequence of (str, str)
        Pairs of quantities also treated as one term when both are present.
    max_size_power : int
        Highest power of a size (a length or a volume) multiplied onto a
        material quantity.
    max_denominator : int
        Largest denominator accepted for an exponent.
    catalogue : sequence of Regime
        Regimes to match against.

    Returns
    -------
    tuple of DimensionalLaw
        Unique laws, ordered by exponent (largest first), then by formula.

    Examples
    --------
    >>> kepler = dimensional_laws({"G": (6.674e-11, "M^-1 L^3 T^-2"), "mass": (2e30, "M")})
    >>> [law.formula for law in kepler]
    ['G^(1/3) mass^(1/3) t^(2/3)']
    """
    dims: dict[str, tuple[Fraction, ...]] = {}
    values: dict[str, float | None] = {}
    for name, given in quantities.items():
        magnitude, d = dimensions_of(given, name=name)
        if all(x == 0 for x in d):
            continue
        dims[name], values[name] = d, magnitude
    terms = _terms(dims, products=tuple(products), max_size_power=max_size_power)
    found: dict[tuple, DimensionalLaw] = {}
    combos = itertools.chain(((t,) for t in terms), itertools.combinations(terms, 2))
    for combo in combos:
        used = [q for t in combo for q, _ in t.powers]
        if len(used) != len(set(used)):
            continue  # the same quantity on both sides of a pair
        exps = _solve(combo, max_denominator=max_denominator)
        if exps is None or exps[-1] <= 0 or any(e == 0 for e in exps[:-1]):
            continue
        powers: dict[str, Fraction] = {}
        for e, t in zip(exps, combo, strict=False):
            for q, k in t.powers:
                powers[q] = powers.get(q, Fraction(0)) + e * k
        signature = (tuple(sorted(powers.items())), exps[-1])
        if signature in found:
            continue
        group = None
        if all(values[q] is not None for q in powers):
            group = math.prod(values[q] ** float(p) for q, p in powers.items())
        matches = tuple(
            r.key
            for r in catalogue
            if r.group_powers and r.exponent == exps[-1] and dict(r.group_powers) == powers
        )
        found[signature] = DimensionalLaw(
            powers=MappingProxyType(powers),
            exponent=exps[-1],
            terms=tuple(t.label for t in combo),
            group=group,
            matches=matches,
            formula=_text(powers, exps[-1]),
        )
    return tuple(sorted(found.values(), key=lambda law: (-law.exponent, law.formula)))
