"""dropkin: neck and contact radius of merging and spreading drops, and their scaling regime.

The public API, chosen on purpose (everything else is internal):

- for notebooks (:mod:`dropkin.api`, loaded when first used):
  :func:`open` (a recording, its experiment file honoured, array-like),
  :func:`analyze` (measure and fit in memory; ``.write(out)`` for the files),
  :func:`read_results` and :func:`read_catalogue` (pandas DataFrames);
- recordings: :func:`open_recording`, :class:`Recording`;
- the experiment: :func:`load_experiment`, :class:`Experiment`;
- measuring: :func:`measure`, :class:`MeasureOptions`, :class:`RadiusSeries`,
  :func:`write_series`, :func:`read_radius_csv`;
- liquids: :func:`liquid_properties`, :func:`liquid_names`, :func:`resolve_fluids`;
- units: :func:`parse_quantity`, :func:`parse_si`, :func:`registry`;
- errors: :class:`DropkinError` and its subclasses.

The physics lives in :mod:`dropkin.scaling`, synthetic recordings in
:mod:`dropkin.synth`, the per-frame image analysis in :mod:`dropkin.vision`.
"""

from ._version import __version__ as __version__
from .errors import DropkinError as DropkinError
from .errors import ExperimentError as ExperimentError
from .errors import FitError as FitError
from .errors import MeasurementError as MeasurementError
from .errors import QuantityError as QuantityError
from .errors import RecordingError as RecordingError
from .experiment import Experiment as Experiment
from .experiment import load_experiment as load_experiment
from .liquids import liquid_names as liquid_names
from .liquids import liquid_properties as liquid_properties
from .liquids import resolve_fluids as resolve_fluids
from .measure import MeasureOptions as MeasureOptions
from .measure import measure as measure
from .recording import Recording as Recording
from .recording import open_recording as open_recording
from .series import RadiusSeries as RadiusSeries
from .series import read_radius_csv as read_radius_csv
from .series import write_series as write_series
from .units import parse_quantity as parse_quantity
from .units import parse_si as parse_si
from .units import registry as registry

__all__ = [
    "__version__",
    "DropkinError",
    "ExperimentError",
    "FitError",
    "MeasurementError",
    "QuantityError",
    "RecordingError",
    "Experiment",
    "load_experiment",
    "liquid_names",
    "liquid_properties",
    "resolve_fluids",
    "MeasureOptions",
    "measure",
    "Recording",
    "open_recording",
    "RadiusSeries",
    "read_radius_csv",
    "write_series",
    "parse_quantity",
    "parse_si",
    "registry",
]

#: The Python API's calls (:mod:`dropkin.api`), imported on first use so that
#: ``import dropkin`` stays light. ``open`` is left out of ``__all__``:
#: ``from dropkin import *`` must not hide the built-in ``open``.
_API = ("open", "analyze", "read_results", "read_catalogue")
__all__ += ["analyze", "read_results", "read_catalogue"]


def __getattr__(name: str):
    if name in _API:
        from . import api

        return getattr(api, name)
    raise AttributeError(f"module 'dropkin' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted({*globals(), *_API})
