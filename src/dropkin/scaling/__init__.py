"""Scaling physics: dimensionless numbers, the regime catalogue, dimensional analysis, planning.

Everything here works on SI floats (and numpy arrays of times); pint appears
only where dimensional analysis reads the dimensions of a quantity. The
science and its sources are in physics.md; each regime record names its own.

Examples
--------
>>> from dropkin.scaling import sample_numbers, candidates
>>> glycerol = sample_numbers(surface_tension=0.0634, viscosity=1.414, density=1261.0,
...                           radius=1e-3, outer_viscosity=1.8e-5, outer_density=1.2)
>>> [c.regime.key for c in candidates(glycerol, "coalescence") if c.plausible]
['viscous', 'inertially-limited-viscous']
"""

from ._catalogue import OH_OUTER_CROSSOVER as OH_OUTER_CROSSOVER
from ._catalogue import OH_VISCOUS as OH_VISCOUS
from ._catalogue import REGIMES as REGIMES
from ._catalogue import SCALING_GEOMETRIES as SCALING_GEOMETRIES
from ._catalogue import Candidate as Candidate
from ._catalogue import Regime as Regime
from ._catalogue import candidates as candidates
from ._catalogue import regime as regime
from ._catalogue import regime_keys as regime_keys
from ._crossovers import Crossover as Crossover
from ._crossovers import crossovers as crossovers
from ._crossovers import inner_outer_viscous_crossover as inner_outer_viscous_crossover
from ._crossovers import power_law_crossing as power_law_crossing
from ._crossovers import tanner_gravity_crossover as tanner_gravity_crossover
from ._crossovers import viscous_inertial_crossover as viscous_inertial_crossover
from ._dimensions import DEFAULT_PRODUCTS as DEFAULT_PRODUCTS
from ._dimensions import DimensionalLaw as DimensionalLaw
from ._dimensions import dimensional_laws as dimensional_laws
from ._dimensions import dimensions_of as dimensions_of
from ._laws import blended_law as blended_law
from ._laws import harmonic_blend as harmonic_blend
from ._laws import power_law as power_law
from ._laws import viscous_log_law as viscous_log_law
from ._numbers import STANDARD_GRAVITY as STANDARD_GRAVITY
from ._numbers import SampleNumbers as SampleNumbers
from ._numbers import bond as bond
from ._numbers import capillary_length as capillary_length
from ._numbers import capillary_speed as capillary_speed
from ._numbers import diffusion_length as diffusion_length
from ._numbers import inertial_time as inertial_time
from ._numbers import ohnesorge as ohnesorge
from ._numbers import ohnesorge_outer as ohnesorge_outer
from ._numbers import sample_numbers as sample_numbers
from ._numbers import sample_numbers_from_experiment as sample_numbers_from_experiment
from ._numbers import viscosity_ratio as viscosity_ratio
from ._numbers import viscous_length as viscous_length
from ._numbers import viscous_time as viscous_time
from ._predict import Prediction as Prediction
from ._predict import RecordingPlan as RecordingPlan
from ._predict import RegimeWindow as RegimeWindow
from ._predict import predict as predict
from ._predict_text import format_prediction as format_prediction
from ._predict_text import prediction_to_dict as prediction_to_dict

__all__ = [
    "OH_OUTER_CROSSOVER",
    "OH_VISCOUS",
    "REGIMES",
    "SCALING_GEOMETRIES",
    "STANDARD_GRAVITY",
    "DEFAULT_PRODUCTS",
    "Candidate",
    "Crossover",
    "DimensionalLaw",
    "Prediction",
    "RecordingPlan",
    "Regime",
    "RegimeWindow",
    "SampleNumbers",
    "blended_law",
    "bond",
    "candidates",
    "capillary_length",
    "capillary_speed",
    "crossovers",
    "diffusion_length",
    "dimensional_laws",
    "dimensions_of",
    "format_prediction",
    "harmonic_blend",
    "inertial_time",
    "inner_outer_viscous_crossover",
    "ohnesorge",
    "ohnesorge_outer",
    "power_law",
    "power_law_crossing",
    "predict",
    "prediction_to_dict",
    "regime",
    "regime_keys",
    "sample_numbers",
    "sample_numbers_from_experiment",
    "tanner_gravity_crossover",
    "viscosity_ratio",
    "viscous_inertial_crossover",
    "viscous_length",
    "viscous_log_law",
    "viscous_time",
]
