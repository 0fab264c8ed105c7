"""Annotated frames, to check a measurement by eye (``OUT/overlays/``)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from .._atomic import atomic_path

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
    span = np.maximum(prep.illumination - prep.dark, 1e-6)
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


def write_overlays(recording, series, extras, out_dir, *, count: int = 6) -> list[Path]:
    """Write annotated PNG frames into `out_dir`; return their paths.

    Each shows the measured outline (magenta), the fitted drop circles
    (amber), the line of centres or the substrate line (blue), the neck or
    contact points found in that frame (green) and a caption (frame, status,
    radius in px).
    """
    import cv2

    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    prep = extras["preparation"]
    edges = extras.get("edges")
    pair = prep.pair
    offset = np.zeros(2)
    roi = series.provenance.get("options", {}).get("roi")
    if roi is not None:
        offset = np.array([roi[0], roi[2]], dtype=np.float64)
    written = []
    shift = 4  # draw with sub-pixel precision (coordinates x 16)
    scale = 1 << shift

    def pt(rc):
        return (int(round((rc[1]) * scale)), int(round((rc[0]) * scale)))

    for index in choose_overlay_frames(series.status, count=count):
        raw = recording[index]
        image = _to_bgr(raw)
        trans = _transmission(raw, prep, roi)
        mask = (trans < series.details.get("edge_level", 0.5)).astype(np.uint8)
        contours, _ = cv2.findContours(mask, cv2.RETR_EXTERNAL, cv2.CHAIN_APPROX_NONE)
        shifted = [c + np.array([[[int(offset[1]), int(offset[0])]]]) for c in contours]
        cv2.drawContours(image, shifted, -1, _OUTLINE, 1, cv2.LINE_AA)
        setup = prep.spreading
        sessile = getattr(prep, "sessile", None)
        if sessile is not None:
            circles = list(sessile.caps)
        else:
            circles = [setup.drop] if setup is not None else list(pair.circles)
        for circle in circles:
            centre, radius = pt(circle.centre + offset), int(round(circle.radius * scale))
            cv2.circle(image, centre, radius, _FIT, 1, cv2.LINE_AA, shift)
        if setup is not None:
            if setup.view == "side":
                cols = image.shape[1] - 1
                row0 = setup.centre[0] + setup.tilt * (0 - setup.centre[1])
                row1 = setup.centre[0] + setup.tilt * (cols - offset[1] - setup.centre[1])
                cv2.line(
                    image,
                    pt((row0, 0) + offset * (1, 0)),
                    pt((row1, cols)),
                    _AXIS,
                    1,
                    cv2.LINE_AA,
                    shift,
                )
        elif sessile is not None:
            # The plate line, across the frame.
            cols = image.shape[1] - 1 - offset[1]
            ends = [(sessile.line.rows(c), c) for c in (-offset[1], cols)]
            cv2.line(
                image, pt(ends[0] + offset), pt(ends[1] + offset), _AXIS, 1, cv2.LINE_AA, shift
            )
        else:
            c0, c1 = (c.centre + offset for c in pair.circles)
            cv2.line(image, pt(c0), pt(c1), _AXIS, 1, cv2.LINE_AA, shift)
        if edges is not None and np.isfinite(edges[index]).all():
            a, b = edges[index]
            cv2.line(image, pt(a), pt(b), _NECK, 1, cv2.LINE_AA, shift)
            for p in (a, b):
                cv2.circle(image, pt(p), 3 * scale, _NECK, 1, cv2.LINE_AA, shift)
        radius_px = series.radius[index] / series.pixel_size
        label = f"frame {int(series.frame[index])}  {series.status[index]}"
        if np.isfinite(radius_px):
            label += f"  r = {radius_px:.2f} px"
        _put_label(image, label)
        path = out_dir / f"frame_{int(series.frame[index]):06d}.png"
        with atomic_path(path) as tmp:
            if not cv2.imwrite(str(tmp), image):
                raise OSError(f"cannot write {path}")
        written.append(path)
    return written


def _put_label(image, text: str) -> None:
    """Write `text` at the top left, on as many lines as the frame's width needs."""
    import cv2

    font, width = cv2.FONT_HERSHEY_SIMPLEX, image.shape[1] - 12
    lines, current = [], ""
    for word in text.split("  "):
        trial = f"{current}  {word}" if current else word
        if current and cv2.getTextSize(trial, font, 0.45, 1)[0][0] > width:
            lines.append(current)
            current = word
        else:
            current = trial
    lines.append(current)
    for i, line in enumerate(lines):
        size = 0.45
        while size > 0.25 and cv2.getTextSize(line, font, size, 1)[0][0] > width:
            size -= 0.05
        cv2.putText(image, line, (6, 16 + 16 * i), font, size, _TEXT, 1, cv2.LINE_AA)
