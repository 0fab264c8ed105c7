"""The figures of one analysis as matplotlib Figures, in memory (for notebooks).

The same figures, drawn by the same code, as ``plots/`` holds after a run
(:func:`~dropkin.report._plots.write_plots`); they are made without pyplot,
so a notebook shows one by leaving it as a cell's value, and a script saves
one with ``fig.savefig(...)``.
"""

from __future__ import annotations

import warnings

import numpy as np

from ._plots import figure_makers
from ._style import _RC

__all__ = ["analysis_figures"]


def analysis_figures(series, verdict, *, overlay_files=()) -> dict:
    """The figures that apply to an analysis, by stem (``radius``, ``local_exponent``,
    ``residuals``, ``contact_angle``, ``overlays``), as :class:`matplotlib.figure.Figure`.

    ``overlays`` is drawn only from `overlay_files`, annotated frames
    already written (a result in memory has none).
    """
    import matplotlib

    drawn = {}
    with matplotlib.rc_context(_RC), warnings.catch_warnings(), np.errstate(all="ignore"):
        warnings.simplefilter("ignore", UserWarning)  # as write_plots: see there
        warnings.simplefilter("ignore", RuntimeWarning)
        for stem, draw in figure_makers(series, verdict, tuple(overlay_files)).items():
            drawn[stem] = draw()
    return drawn
