"""The contact instant: its bracket, estimate and uncertainty."""

from ._estimate import ContactEstimate as ContactEstimate
from ._estimate import estimate_contact as estimate_contact

__all__ = [
    "ContactEstimate",
    "estimate_contact",
]
