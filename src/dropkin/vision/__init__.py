"""Per-frame image analysis: pure functions on arrays, in pixels.

Nothing here reads files or knows units; :mod:`dropkin.measure` streams the
frames and turns pixels into metres. Per-frame statuses are the integer codes
of :mod:`dropkin.status` (re-exported here: ``STATUS_NAMES`` is
:data:`dropkin.status.STATUSES`).
"""

from ..status import AT_EDGE as AT_EDGE
from ..status import BEFORE_CONTACT as BEFORE_CONTACT
from ..status import NOT_FOUND as NOT_FOUND
from ..status import OK as OK
from ..status import STATUSES as STATUS_NAMES
from ..status import UNRESOLVED as UNRESOLVED
from ._band import Band as Band
from ._band import make_band as make_band
from ._band import sample_band as sample_band
from ._bridge import SessilePair as SessilePair
from ._bridge import find_sessile_pair as find_sessile_pair
from ._bridge import sessile_background_mask as sessile_background_mask
from ._bridge_chunk import measure_bridges as measure_bridges
from ._circle import CircleFit as CircleFit
from ._circle import fit_circle as fit_circle
from ._contrast import frame_contrast as frame_contrast
from ._contrast import outline_vote as outline_vote
from ._contrast import rim_level as rim_level
from ._neck import NeckResult as NeckResult
from ._neck import neck_from_band as neck_from_band
from ._neck_chunk import measure_necks as measure_necks
from ._pair import DropPair as DropPair
from ._pair import edge_blur as edge_blur
from ._pair import find_drop_pair as find_drop_pair
from ._pair import substrate_rows as substrate_rows
from ._silhouette import CONTRASTS as CONTRASTS
from ._silhouette import background_from_frames as background_from_frames
from ._silhouette import dark_level as dark_level
from ._silhouette import fit_illumination as fit_illumination
from ._silhouette import light_span as light_span
from ._silhouette import silhouette_mask as silhouette_mask
from ._silhouette import threshold_midpoint as threshold_midpoint
from ._silhouette import transmission as transmission
from ._spreading import ContactLineResult as ContactLineResult
from ._spreading import SpreadingSetup as SpreadingSetup
from ._spreading import find_spreading_drop as find_spreading_drop
from ._spreading import measure_contact_lines as measure_contact_lines
from ._spreading import spreading_background_mask as spreading_background_mask

__all__ = [
    "AT_EDGE",
    "BEFORE_CONTACT",
    "NOT_FOUND",
    "OK",
    "STATUS_NAMES",
    "UNRESOLVED",
    "Band",
    "SessilePair",
    "find_sessile_pair",
    "measure_bridges",
    "sessile_background_mask",
    "CircleFit",
    "ContactLineResult",
    "SpreadingSetup",
    "find_spreading_drop",
    "measure_contact_lines",
    "spreading_background_mask",
    "DropPair",
    "NeckResult",
    "background_from_frames",
    "CONTRASTS",
    "dark_level",
    "frame_contrast",
    "outline_vote",
    "light_span",
    "rim_level",
    "edge_blur",
    "find_drop_pair",
    "fit_circle",
    "fit_illumination",
    "make_band",
    "measure_necks",
    "neck_from_band",
    "sample_band",
    "silhouette_mask",
    "substrate_rows",
    "threshold_midpoint",
    "transmission",
]
