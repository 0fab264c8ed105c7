"""The records of a spreading drop: where it is (:class:`SpreadingSetup`) and
what a chunk of frames shows (:class:`ContactLineResult`), in pixels.

See :mod:`dropkin.vision._spreading` for how they are found.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ._circle import CircleFit

__all__ = ["VIEWS", "SpreadingSetup", "ContactLineResult", "check_view"]

VIEWS = ("side", "bottom")


@dataclass(frozen=True)
class SpreadingSetup:
    """Where the drop and the substrate are, from one reference frame (pixels).

    Attributes
    ----------
    view : str
        ``"side"`` or ``"bottom"``.
    drop : CircleFit
        Side view: the circle fitted to the drop's outline above the
        substrate (the sphere before contact, the cap's circle after).
        Bottom view: the drop's outline seen from below.
    centre : (2,) ndarray
        (row, col) of the drop axis: side view, where it meets the substrate
        line; bottom view, the centre of the drop's outline.
    tilt : float
        Side view: slope d(row)/d(col) of the substrate line, which passes
        through `centre`; 0 in bottom view.
    blur : float
        Edge blur, the sigma (px) of an equivalent Gaussian, measured across
        the drop's outline (see :func:`dropkin.vision.edge_blur`).
    background_level : float
        Transmission of the background beside the drop.
    drop_level : float
        Side view: transmission of the drop's dark rim. Bottom view: of the
        drop's outline outside the wetted disc (the ring).
    plate_level : float
        Side view: transmission of the substrate band away from the drop;
        NaN in bottom view.
    mirror : bool
        Side view: the band shows the drop's mirror image.
    in_contact : bool
        The reference frame already shows contact (side view: the drop's
        circle reaches the substrate; bottom view: a wetted disc).
    wetted : CircleFit or None
        Bottom view: the wetted disc in the reference frame, if any.
    wetted_level : float
        Bottom view: transmission of the wetted disc, NaN if the reference
        frame shows none (and in side view).
    """

    view: str
    drop: CircleFit
    centre: np.ndarray
    tilt: float
    blur: float
    background_level: float
    drop_level: float
    plate_level: float
    mirror: bool
    in_contact: bool
    wetted: CircleFit | None = None
    wetted_level: float = math.nan

    @property
    def substrate_row(self) -> float:
        """Side view: row of the substrate surface at the drop axis (NaN in bottom view)."""
        return float(self.centre[0]) if self.view == "side" else math.nan

    @property
    def axis_col(self) -> float:
        """Column of the drop axis."""
        return float(self.centre[1])

    @property
    def drop_radius(self) -> float:
        """Radius (px) of the drop's circle (see `drop`)."""
        return float(self.drop.radius)


@dataclass(frozen=True)
class ContactLineResult:
    """Contact-line measurements for a chunk of frames (pixels).

    Attributes
    ----------
    radius : (K,) ndarray
        Contact radius (px): side view, half the distance between the two
        contact points; bottom view, ``sqrt(A / pi)`` of the wetted area.
        NaN where there is no measurement.
    radius_err : (K,) ndarray
        Its standard uncertainty (px), from the fit's scatter and the image
        noise, at least 0.1 px.
    edges : (K, 2, 2) ndarray
        Two contact points (row, col) per frame: side view, the left and
        right ends of the contact line on the substrate; bottom view, the
        ends of the wetted disc's horizontal diameter.
    status : (K,) ndarray of int8
        Codes into :data:`dropkin.status.STATUSES`.
    gap : (K,) ndarray
        Side view: the gap (px) between the drop and the substrate on the
        axis, as conserved transmission (sub-pixel gaps still show); about
        zero once in contact; NaN where not measurable. NaN in bottom view.
    angles : (K, 2) ndarray
        Side view: apparent contact angle (degrees, inside the liquid) at the
        left and right contact points, from the local fit of the outline;
        NaN where there is no measurement and in bottom view.
    level_radius : (K, L) ndarray
        The contact radius (px) at each of the other edge levels asked for (L
        of them, in their order; L = 0 if none), measured in the same pass;
        NaN where the main level has none or that level's is not found.
    """

    radius: np.ndarray
    radius_err: np.ndarray
    edges: np.ndarray
    status: np.ndarray
    gap: np.ndarray
    angles: np.ndarray
    level_radius: np.ndarray


def check_view(view):
    """Raise ValueError unless `view` is one of :data:`VIEWS`."""
    if view not in VIEWS:
        raise ValueError(f"view must be 'side' or 'bottom', got {view!r}")
