"""A prediction for a sample described by an experiment: ``dropkin predict``.

The experiment (its file, options, or both) names the liquid and the medium;
the liquid library fills in what it leaves out, with a note for each value
filled (see :func:`dropkin.liquids._notes.fill_notes`); the sample's numbers
then give the :class:`~dropkin.scaling.Prediction`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ...experiment import Experiment, load_experiment
from ...liquids import LiquidLibrary, celsius_text, load_liquid_library, resolve_fluids
from ...liquids._notes import fill_notes
from ..regimes._numbers import sample_numbers_from_experiment
from ._predict import Prediction, predict
from ._text import prediction_to_dict

__all__ = ["SamplePrediction", "sample_experiment", "predict_sample"]


@dataclass(frozen=True)
class SamplePrediction:
    """A prediction and the sample it was made for.

    Attributes
    ----------
    prediction : Prediction
    experiment : Experiment
        As used: the library's values filled in.
    """

    prediction: Prediction
    experiment: Experiment

    def heading(self) -> str:
        """One line naming the liquid (mixture, temperature) and the medium."""
        liquid, medium = self.experiment.liquid, self.experiment.medium
        text = liquid.name or "liquid given by value"
        if liquid.glycerol_mass_fraction is not None:
            text += f" ({100 * liquid.glycerol_mass_fraction:.4g} wt % glycerol)"
        if liquid.temperature is not None:
            text += f" at {celsius_text(liquid.temperature)}"
        return f"{text} in {medium.name or 'a medium given by value'}"

    def to_dict(self) -> dict:
        """:func:`~dropkin.scaling.prediction_to_dict` plus the fluids' names and state."""
        data = prediction_to_dict(self.prediction)
        data["sample"] = {
            section: {
                "name": fluid.name,
                "glycerol_mass_fraction": fluid.glycerol_mass_fraction,
                "temperature_k": fluid.temperature,
            }
            for section, fluid in (
                ("liquid", self.experiment.liquid),
                ("medium", self.experiment.medium),
            )
        }
        return data


def sample_experiment(source=None, *, experiment=None, overrides=None) -> Experiment:
    """The sample of a recording's experiment file, a named file, or overrides alone.

    Parameters
    ----------
    source : str or os.PathLike, optional
        A recording whose experiment file is found beside it.
    experiment : str or os.PathLike, optional
        An experiment file named explicitly.
    overrides : dict, optional
        Dotted keys and values that take precedence (see
        :meth:`dropkin.experiment.Experiment.with_overrides`); with neither
        `source` nor `experiment`, they describe the whole sample.
    """
    if source is not None or experiment is not None:
        return load_experiment(source or experiment, experiment=experiment, overrides=overrides)
    return Experiment().with_overrides(overrides)


def predict_sample(
    exp: Experiment, *, geometry=None, contact_angle=None, user_library=None
) -> SamplePrediction:
    """What the sample of `exp` should show, when, and how to record it.

    Parameters
    ----------
    exp : Experiment
        As given (missing fluid values are taken from the liquid library).
    geometry : str, optional
        ``coalescence``, ``sessile-coalescence`` or ``spreading``; default the
        experiment's, else ``coalescence`` (with a note saying so).
    contact_angle : float, optional
        Contact angle on the substrate, degrees; default the experiment
        file's ``drops.contact_angle``.
    user_library : LiquidLibrary or path, optional
        The user's liquid library, searched before the built-in liquids.

    Raises
    ------
    ExperimentError
        For an unknown liquid, a value out of a correlation's range, or a
        value the prediction needs that is nowhere given.
    """
    library = user_library
    if library is not None and not isinstance(library, LiquidLibrary):
        library = load_liquid_library(library)
    full = resolve_fluids(exp, user_library=library)
    notes = fill_notes(exp, full, user_library=library)
    if geometry is None:
        geometry = exp.setup.geometry or "coalescence"
        if exp.setup.geometry is None:
            notes.append("geometry not given: coalescence assumed")
    angle = exp.drops.contact_angle if contact_angle is None else math.radians(contact_angle)
    numbers = sample_numbers_from_experiment(full, contact_angle=angle)
    prediction = predict(
        numbers,
        geometry,
        full.setup.view,
        frame_rate=full.recording.frame_rate,
        pixel_size=full.recording.pixel_size,
        notes=notes,
    )
    return SamplePrediction(prediction=prediction, experiment=full)
