"""Material uncertainty: the relative uncertainty of a regime's group from the material values."""

import math

import pytest

from dropkin.errors import FitError
from dropkin.scaling import (
    DEFAULT_MATERIAL_UNCERTAINTY,
    group_relative_uncertainty,
    regime,
    resolve_material_uncertainty,
)


def test_material_uncertainty_propagates_through_the_group():
    # First-order propagation: relative uncertainty of Π q_i^p_i is
    # sqrt(Σ (p_i u_i)²). Inertial (γR/ρ)^(1/4) at 2 % each: sqrt(3)·0.005;
    # Tanner (γV³/η)^(1/10), V ∝ R³: sqrt(0.002² + 0.018² + 0.002²).
    u = resolve_material_uncertainty()
    assert dict(u) == dict(DEFAULT_MATERIAL_UNCERTAINTY) and u["viscosity"] == 0.02
    assert group_relative_uncertainty(regime("inertial"), u) == pytest.approx(math.sqrt(3) * 0.005)
    assert group_relative_uncertainty(regime("tanner"), u) == pytest.approx(
        math.sqrt(2 * 0.002**2 + 0.018**2)
    )
    five = resolve_material_uncertainty({"viscosity": 0.05})
    assert group_relative_uncertainty(regime("viscous"), five) == pytest.approx(
        math.hypot(0.02, 0.05)
    )
    with pytest.raises(FitError, match="material_uncertainty = 'colour'"):
        resolve_material_uncertainty({"colour": 0.1})
    with pytest.raises(FitError, match="material_uncertainty.density = -0.1"):
        resolve_material_uncertainty({"density": -0.1})
