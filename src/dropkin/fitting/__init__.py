"""Fitting r(t) with an unknown origin: power laws, the log law, blends of two
laws, the local exponent, windows and the bootstrap.

Generic curve fitting on SI floats: no physics (the regimes live in
:mod:`dropkin.scaling`) and no pixels.
"""

from ._blends import fit_blend as fit_blend
from ._blends import fit_broken_power_law as fit_broken_power_law
from ._core import MIN_DECADES as MIN_DECADES
from ._core import MIN_POINTS as MIN_POINTS
from ._core import ROBUST_SCALE as ROBUST_SCALE
from ._core import LawShape as LawShape
from ._initial import INITIAL_RADIUS_AIC_GAIN as INITIAL_RADIUS_AIC_GAIN
from ._laws import blended_law as blended_law
from ._laws import harmonic_blend as harmonic_blend
from ._laws import power_law as power_law
from ._laws import viscous_log_law as viscous_log_law
from ._local import LocalExponent as LocalExponent
from ._local import exponent_plateaus as exponent_plateaus
from ._local import local_exponent as local_exponent
from ._power import fit_log_law as fit_log_law
from ._power import fit_power_law as fit_power_law
from ._power import guess_power_law as guess_power_law
from ._records import BlendFit as BlendFit
from ._records import LawFit as LawFit
from ._windows import AIC_THRESHOLD as AIC_THRESHOLD
from ._windows import ModelScore as ModelScore
from ._windows import consistent_window as consistent_window

__all__ = [
    "BlendFit",
    "fit_blend",
    "fit_broken_power_law",
    "LawFit",
    "fit_log_law",
    "fit_power_law",
    "guess_power_law",
    "INITIAL_RADIUS_AIC_GAIN",
    "MIN_DECADES",
    "MIN_POINTS",
    "ROBUST_SCALE",
    "LawShape",
    "blended_law",
    "harmonic_blend",
    "power_law",
    "viscous_log_law",
    "LocalExponent",
    "exponent_plateaus",
    "local_exponent",
    "AIC_THRESHOLD",
    "ModelScore",
    "consistent_window",
]
