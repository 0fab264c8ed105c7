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

import sys as _sys
import types as _types

from ._version import __version__ as __version__
from .errors import DropkinError as DropkinError
from .errors import ExperimentError as ExperimentError
from .errors import FitError as FitError
from .errors import MeasurementError as MeasurementError
from .errors import QuantityError as QuantityError
from .errors import RecordingError as RecordingError

# The rest is imported on first use (PEP 562), so that ``dropkin --help`` and
# the worker processes of a campaign do not pay for numpy, scipy and OpenCV
# before they need them.
_LAZY = {
    "Experiment": ".experiment",
    "load_experiment": ".experiment",
    "liquid_names": ".liquids",
    "liquid_properties": ".liquids",
    "resolve_fluids": ".liquids",
    "MeasureOptions": ".measure",
    "measure": ".measure",
    "Recording": ".recording",
    "open_recording": ".recording",
    "RadiusSeries": ".series",
    "read_radius_csv": ".series",
    "write_series": ".series",
    "parse_quantity": ".units",
    "parse_si": ".units",
    "registry": ".units",
    # the Python API's calls (dropkin.api)
    "open": ".api",
    "analyze": ".api",
    "read_results": ".api",
    "read_catalogue": ".api",
}

# ``open`` is left out: ``from dropkin import *`` must not hide the built-in.
__all__ = [
    "__version__",
    "DropkinError",
    "ExperimentError",
    "FitError",
    "MeasurementError",
    "QuantityError",
    "RecordingError",
    *sorted(name for name in _LAZY if name != "open"),
]


def __getattr__(name: str):
    module = _LAZY.get(name)
    if module is None:
        raise AttributeError(f"module 'dropkin' has no attribute {name!r}")
    import importlib

    value = getattr(importlib.import_module(module, __name__), name)
    globals()[name] = value
    return value


def __dir__():
    return sorted(set(globals()) | set(_LAZY))


class _Package(_types.ModuleType):
    """``dropkin.measure`` stays the function: importing the subpackage of the same
    name (which Python records on its parent) does not replace it."""

    def __setattr__(self, name, value):
        if name == "measure" and isinstance(value, _types.ModuleType):
            return
        super().__setattr__(name, value)


_sys.modules[__name__].__class__ = _Package
