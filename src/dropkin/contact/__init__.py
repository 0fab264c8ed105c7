"""The contact instant: its bracket, estimate and uncertainty.

:func:`estimate_contact` finds the instant in the per-frame statuses, radii
and gaps (:class:`ContactEstimate`, written to ``measure.json``); the
functions of :mod:`._bracket` say which bracket a fit of the radius law
searches t0 in, and where its bootstrap redraws t0.
"""

from ._bracket import BRACKET_SIGMAS as BRACKET_SIGMAS
from ._bracket import bracket_before_first_point as bracket_before_first_point
from ._bracket import default_bracket as default_bracket
from ._bracket import measured_bracket as measured_bracket
from ._bracket import redraw_interval as redraw_interval
from ._estimate import ContactEstimate as ContactEstimate
from ._estimate import estimate_contact as estimate_contact

__all__ = [
    "BRACKET_SIGMAS",
    "ContactEstimate",
    "bracket_before_first_point",
    "default_bracket",
    "estimate_contact",
    "measured_bracket",
    "redraw_interval",
]
