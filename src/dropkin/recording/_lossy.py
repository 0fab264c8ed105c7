"""Whether a recording's pixels went through lossy compression, and which.

A video's codec is named by the four-character code of its stream (OpenCV's
``CAP_PROP_FOURCC``, which its FFmpeg back end fills with the codec's tag,
e.g. ``FMP4`` for MPEG-4 Part 2 written as ``mp4v``); a frame file's by its
format (JPEG, unless its start-of-frame marker says lossless JPEG). A lossy
codec drops fine detail in blocks (8 x 8 or 16 x 16 px) and rings beside sharp
edges, and an inter-frame codec may keep a block unchanged over frames where
it changed a little: radii are then good to about a pixel, not to the tenths a
raw recording gives. The readers set ``lossy`` (a description, or None)
from these tables; measure.json and the report carry it with :data:`CAUTION`.
"""

from __future__ import annotations

__all__ = ["CAUTION", "video_codec", "fourcc_text"]

#: What a lossy source means for the numbers, said wherever it is noted.
CAUTION = (
    "sub-pixel accuracy is not expected: compression blocks and ringing move edges "
    "by a fraction of a pixel, and an inter-frame codec may hold a block still over "
    "several frames; radii are good to about a pixel"
)

# Codec tags (compared without case) of lossy video codecs, by family.
_LOSSY = {
    "MPEG-4 Part 2": ("fmp4", "mp4v", "xvid", "divx", "dx50", "3iv2", "m4s2", "mp42", "mp43"),
    "H.264": ("avc1", "h264", "x264", "davc", "avc3"),
    "H.265/HEVC": ("hev1", "hvc1", "hevc", "h265", "x265"),
    "Motion JPEG": ("mjpg", "mjpa", "mjpb", "jpeg", "avrn", "ljpg"),
    "MPEG-1/2": ("mpg1", "mpg2", "mp1v", "mp2v", "pim1", "mpeg"),
    "VP8/VP9": ("vp80", "vp90", "vp08", "vp09"),
    "AV1": ("av01",),
    "Windows Media Video": ("wmv1", "wmv2", "wmv3", "wvc1"),
    "DV": ("dvsd", "dv25", "dv50", "dvhd", "cdvc"),
    "ProRes": ("apcn", "apch", "apcs", "apco", "ap4h", "ap4x"),
}
_BY_TAG = {tag: family for family, tags in _LOSSY.items() for tag in tags}


def fourcc_text(code: float) -> str:
    """The four characters of a codec tag as OpenCV returns it (a float), or ``""``."""
    try:
        number = int(code)
    except (TypeError, ValueError, OverflowError):
        return ""
    if not 0 < number < 2**32:
        return ""
    text = number.to_bytes(4, "little").decode("latin-1")
    return text if text.isprintable() else ""


def video_codec(code: float) -> tuple[str, str | None]:
    """The codec tag of a video stream, and a description if its codec is lossy.

    Examples
    --------
    >>> import cv2
    >>> video_codec(cv2.VideoWriter_fourcc(*"FMP4"))
    ('FMP4', 'MPEG-4 Part 2 video (codec tag FMP4)')
    >>> video_codec(cv2.VideoWriter_fourcc(*"FFV1"))
    ('FFV1', None)
    """
    tag = fourcc_text(code)
    family = _BY_TAG.get(tag.strip().lower())
    return tag, None if family is None else f"{family} video (codec tag {tag.strip()})"
