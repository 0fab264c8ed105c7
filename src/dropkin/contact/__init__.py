"""The contact instant: its bracket, estimate and uncertainty.

:func:`estimate_contact` finds the instant in the per-frame statuses, radii
and gaps (:class:`ContactEstimate`, written to ``measure.json``); the
functions of :mod:`._bracket` give the bracket the frames prove, which every
fit of the radius law searches t0 in.
"""

from ._bracket import bracket_before_first_point as bracket_before_first_point
from ._bracket import default_bracket as default_bracket
from ._bracket import frames_bracket as frames_bracket
from ._estimate import ContactEstimate as ContactEstimate
from ._estimate import estimate_contact as estimate_contact

__all__ = [
    "ContactEstimate",
    "bracket_before_first_point",
    "default_bracket",
    "estimate_contact",
    "frames_bracket",
]
