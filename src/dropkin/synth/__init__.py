"""Synthetic recordings with known truth, for the demo and the tests.

A recording is described by a setup (:class:`Coalescence` or
:class:`Spreading`), a radius law (:class:`RadiusLaw`, e.g. from
:func:`regime_law`), a :class:`Camera`, :class:`Optics` and a :class:`Sensor`.
:func:`synthesize` computes the truth from the law alone; frames are rendered on
demand (scene records -> float opacity -> optics -> integer frame) and
:func:`write_recording` writes them with the experiment file and ``truth.json``.

This package shares no code with ``dropkin.vision`` or ``dropkin.measure``: the
truth must not be computed by the code it checks.

Examples
--------
>>> from dropkin import synth
>>> law = synth.inertial_law(surface_tension=0.0727, density=998.0, drop_radius=1e-3)
>>> rec = synth.synthesize(
...     synth.Coalescence(drop_radius=1e-3),
...     law,
...     camera=synth.Camera(frame_rate=1e5, pixel_size=10e-6, shape=(64, 96)),
...     frames=3,
...     contact_frame=0.5,
... )
>>> [round(r * 1e6, 1) for r in rec.truth.radius.tolist()]   # micrometres
[0.0, 36.7, 63.6]
"""

from ._coverage import disc_coverage as disc_coverage
from ._coverage import rectangle_coverage as rectangle_coverage
from ._coverage import render_opacity as render_opacity
from ._coverage import supersampled_coverage as supersampled_coverage
from ._laws import RadiusLaw as RadiusLaw
from ._laws import crossing_time as crossing_time
from ._laws import custom_law as custom_law
from ._laws import harmonic_blend as harmonic_blend
from ._laws import power_law as power_law
from ._laws import ringing_tail as ringing_tail
from ._laws import smooth_blend as smooth_blend
from ._laws import time_at_radius as time_at_radius
from ._materials import Liquid as Liquid
from ._materials import Medium as Medium
from ._optics import Optics as Optics
from ._optics import Sensor as Sensor
from ._optics import apply_optics as apply_optics
from ._optics import backlight as backlight
from ._optics import expose as expose
from ._recording import SyntheticRecording as SyntheticRecording
from ._recording import Truth as Truth
from ._recording import synthesize as synthesize
from ._regime_laws import REGIME_NAMES as REGIME_NAMES
from ._regime_laws import gravity_spreading_law as gravity_spreading_law
from ._regime_laws import ilv_law as ilv_law
from ._regime_laws import inertial_law as inertial_law
from ._regime_laws import inertial_spreading_law as inertial_spreading_law
from ._regime_laws import regime_law as regime_law
from ._regime_laws import tanner_law as tanner_law
from ._regime_laws import viscous_law as viscous_law
from ._regime_laws import viscous_outer_law as viscous_outer_law
from ._regime_laws import viscous_spreading_law as viscous_spreading_law
from ._scenes import Bridge as Bridge
from ._scenes import CapScene as CapScene
from ._scenes import PairScene as PairScene
from ._scenes import WettedDiscScene as WettedDiscScene
from ._scenes import bridge_fillet as bridge_fillet
from ._scenes import cap_height as cap_height
from ._scenes import cap_sphere as cap_sphere
from ._sessile import SessileCoalescence as SessileCoalescence
from ._sessile import SessileScene as SessileScene
from ._sessile import sessile_law as sessile_law
from ._setups import APPROACHES as APPROACHES
from ._setups import Camera as Camera
from ._setups import Coalescence as Coalescence
from ._setups import Spreading as Spreading
from ._writing import FORMATS as FORMATS
from ._writing import WrittenRecording as WrittenRecording
from ._writing import experiment_toml as experiment_toml
from ._writing import truth_record as truth_record
from ._writing import write_recording as write_recording

__all__ = [
    "REGIME_NAMES",
    "RadiusLaw",
    "custom_law",
    "crossing_time",
    "power_law",
    "harmonic_blend",
    "smooth_blend",
    "ringing_tail",
    "time_at_radius",
    "viscous_law",
    "ilv_law",
    "inertial_law",
    "viscous_outer_law",
    "inertial_spreading_law",
    "viscous_spreading_law",
    "tanner_law",
    "gravity_spreading_law",
    "regime_law",
    "Liquid",
    "Medium",
    "APPROACHES",
    "Camera",
    "Coalescence",
    "Spreading",
    "SessileCoalescence",
    "SessileScene",
    "sessile_law",
    "Optics",
    "Sensor",
    "Truth",
    "SyntheticRecording",
    "synthesize",
    "PairScene",
    "CapScene",
    "WettedDiscScene",
    "Bridge",
    "bridge_fillet",
    "cap_height",
    "cap_sphere",
    "disc_coverage",
    "rectangle_coverage",
    "supersampled_coverage",
    "render_opacity",
    "backlight",
    "apply_optics",
    "expose",
    "FORMATS",
    "WrittenRecording",
    "experiment_toml",
    "truth_record",
    "write_recording",
]
