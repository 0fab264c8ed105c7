"""Annotated frames, to check a measurement by eye (``OUT/overlays/``)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from .._atomic import write_bytes_atomic
from ..vision import light_span

__all__ = ["choose_overlay_frames", "write_overlays"]

# BGR colours, chosen for contrast on a grey frame.
_FIT = (40, 170, 255)  # drop circles: amber
_AXIS = (200, 120, 30)  # line of centres: steel blue
_NECK = (60, 220, 60)  # neck or contact points: green
_OUTLINE = (200, 60, 200)  # measured outline: magenta
_TEXT = (255, 255, 255)


def _transmission(frame, prep, roi):
    frame = np.asarray(frame, dtype=np.float64)
    if roi is not None:
        frame = frame[roi[0] : roi[1], roi[2] : roi[3]]
    span = light_span(prep.illumination, prep.dark)
    return (frame - prep.dark) / span


def choose_overlay_frames(status, *, count: int = 6) -> list[int]:
    """Indices of a few frames spread over the recording.

    The last frame before contact, the first measured frame, then measured
    frames spread evenly in the logarithm of their index after contact (the
    neck changes fastest early), and the last frame.
    """
    n = len(status)
    picks: list[int] = []
    before = [i for i, s in enumerate(status) if s == "before-contact"]
    ok = [i for i, s in enumerate(status) if s == "ok"]
    if before:
        picks.append(before[-1])
    if ok:
        first, last = ok[0], ok[-1]
        spread = np.unique(np.geomspace(1, last - first + 1, max(count - 2, 2)).astype(int) - 1)
        picks.extend(first + int(k) for k in spread)
    picks.append(n - 1)
    seen: list[int] = []
    for i in picks:
        if 0 <= i < n and i not in seen:
            seen.append(i)
    return sorted(seen)[:count]


def _to_bgr(frame):
    import cv2

    frame = np.asarray(frame, dtype=np.float64)
    low, high = np.percentile(frame, [0.5, 99.5])
    scaled = np.clip((frame - low) / max(high - low, 1e-9) * 255.0, 0, 255).astype(np.uint8)
    return cv2.cvtColor(scaled, cv2.COLOR_GRAY2BGR)


#: Small frames are enlarged (by a whole factor, nearest neighbour) to about
#: this width, so that the lines and the caption can be read.
_MIN_WIDTH = 360
_STRIP = (32, 32, 32)  # caption strip: near black, the caption white on it


def _outline_mask(trans, level, setup, roi_shape, sessile=None):
    """Pixels darker than the edge level; for drops on a plate (side view) only
    those above the substrate line, so the mirror image is not outlined."""
    mask = (trans < level).astype(np.uint8)
    rows, cols = np.indices(roi_shape)
    if setup is not None and setup.view == "side":
        mask[rows >= setup.centre[0] + setup.tilt * (cols - setup.centre[1])] = 0
    elif sessile is not None:
        mask[rows >= sessile.line.rows(cols)] = 0
    return mask


def _annotate(image, index, series, extras, pt, zoom, offset):
    """Draw the outline, the circles, the axis or substrate and the neck on `image`."""
    import cv2

    prep = extras["preparation"]
    setup = prep.spreading
    sessile = getattr(prep, "sessile", None)
    roi = series.provenance.get("options", {}).get("roi")
    trans = _transmission(extras["frame"], prep, roi)
    level = series.details.get("edge_level", 0.5)
    mask = _outline_mask(trans, level, setup, trans.shape, sessile)
    contours, _ = cv2.findContours(mask, cv2.RETR_EXTERNAL, cv2.CHAIN_APPROX_NONE)
    for c in contours:
        rc = (c[:, 0, ::-1] + offset).astype(np.float64)  # (row, col) in the frame
        poly = np.array([pt(p) for p in rc], dtype=np.int32).reshape(-1, 1, 2)
        cv2.polylines(image, [poly], True, _OUTLINE, 1, cv2.LINE_AA, 4)
    before = series.status[index] == "before-contact"
    # a spreading drop's circle is fitted to the first frames: drawn only while it holds
    if sessile is not None:
        circles = list(sessile.caps)
    elif setup is not None:
        circles = [setup.drop] if before else []
    else:
        circles = list(prep.pair.circles)
    for circle in circles:
        r = int(round(circle.radius * zoom * 16))
        cv2.circle(image, pt(circle.centre + offset), r, _FIT, 1, cv2.LINE_AA, 4)
    if setup is not None:
        if setup.view == "side":
            cols = (image.shape[1] / zoom) - 1
            row0 = setup.centre[0] + setup.tilt * (0 - offset[1] - setup.centre[1]) + offset[0]
            row1 = setup.centre[0] + setup.tilt * (cols - offset[1] - setup.centre[1]) + offset[0]
            cv2.line(image, pt((row0, 0)), pt((row1, cols)), _AXIS, 1, cv2.LINE_AA, 4)
    elif sessile is not None:  # the plate line, across the frame
        last = (image.shape[1] / zoom) - 1 - offset[1]
        ends = [np.array((sessile.line.rows(c), c)) + offset for c in (-offset[1], last)]
        cv2.line(image, pt(ends[0]), pt(ends[1]), _AXIS, 1, cv2.LINE_AA, 4)
    else:
        c0, c1 = (c.centre + offset for c in prep.pair.circles)
        cv2.line(image, pt(c0), pt(c1), _AXIS, 1, cv2.LINE_AA, 4)
    edges = extras.get("edges")
    if edges is not None and np.isfinite(edges[index]).all():
        a, b = edges[index]
        cv2.line(image, pt(a), pt(b), _NECK, 1, cv2.LINE_AA, 4)
        for p in (a, b):
            cv2.circle(image, pt(p), (2 + zoom) * 16, _NECK, 1, cv2.LINE_AA, 4)


def write_overlays(recording, series, extras, out_dir, *, count: int = 6) -> list[Path]:
    """Write annotated PNG frames into `out_dir`; return their paths.

    Each shows the measured outline (magenta; for a drop on a plate, only
    above the substrate line), the fitted drop circles (amber; for a
    spreading drop only before contact, where the circle fitted to the first
    frames still describes it), the line of centres or the substrate line
    (blue), the neck or contact points found in that frame (green), and a
    caption (frame, status, radius in px) in white on a dark strip above the
    frame, never over it. Frames narrower than 360 px are enlarged by a whole
    factor (nearest neighbour) first.
    """
    import cv2

    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    offset = np.zeros(2)
    roi = series.provenance.get("options", {}).get("roi")
    if roi is not None:
        offset = np.array([roi[0], roi[2]], dtype=np.float64)
    written = []
    for index in choose_overlay_frames(series.status, count=count):
        raw = recording[index]
        image = _to_bgr(raw)
        zoom = max(1, min(4, -(-_MIN_WIDTH // max(image.shape[1], 1))))
        if zoom > 1:
            image = cv2.resize(image, None, fx=zoom, fy=zoom, interpolation=cv2.INTER_NEAREST)

        def pt(rc, zoom=zoom):  # (row, col) in frame pixels -> cv2 point, 4 fractional bits
            return (
                int(round((rc[1] + 0.5) * zoom * 16 - 8)),
                int(round((rc[0] + 0.5) * zoom * 16 - 8)),
            )

        _annotate(image, index, series, {**extras, "frame": raw}, pt, zoom, offset)
        radius_px = series.radius[index] / series.pixel_size
        label = f"frame {int(series.frame[index])}  {series.status[index]}"
        if np.isfinite(radius_px):
            label += f"  r = {radius_px:.2f} px"
        image = _with_caption(image, label)
        path = out_dir / f"frame_{int(series.frame[index]):06d}.png"
        # encoded in memory: OpenCV is never handed a file name (one that is
        # not valid UTF-8 crashed it)
        ok, encoded = cv2.imencode(".png", image)
        if not ok:
            raise OSError(f"cannot write {path}")
        write_bytes_atomic(path, encoded.tobytes())
        written.append(path)
    return written


def _caption_lines(text: str, width: int, font, size: float) -> list[str]:
    import cv2

    lines, current = [], ""
    for word in text.split("  "):
        trial = f"{current}  {word}" if current else word
        if current and cv2.getTextSize(trial, font, size, 1)[0][0] > width:
            lines.append(current)
            current = word
        else:
            current = trial
    lines.append(current)
    return lines


def _with_caption(image, text: str):
    """`image` with a dark strip on top holding `text` in white, on as many lines as needed."""
    import cv2

    font, size = cv2.FONT_HERSHEY_SIMPLEX, 0.5
    lines = _caption_lines(text, image.shape[1] - 12, font, size)
    step = 20
    strip = np.empty((step * len(lines) + 8, image.shape[1], 3), dtype=np.uint8)
    strip[...] = _STRIP
    for i, line in enumerate(lines):
        scale = size
        while scale > 0.3 and cv2.getTextSize(line, font, scale, 1)[0][0] > image.shape[1] - 12:
            scale -= 0.05
        cv2.putText(strip, line, (6, 18 + step * i), font, scale, _TEXT, 1, cv2.LINE_AA)
    return np.vstack([strip, image])
