"""Frames to silhouettes: contrast, illumination, normalisation, masks.

Under backlighting a drop is a dark shape on a bright background. The light is
rarely even, so a fixed grey-level threshold would move the outline. Here a
frame is first divided by a smooth model of the illumination, giving the
*transmission*: about 1 on the background and about 0 in the dark rim of a
drop, whatever the bit depth or the lamp's gradient. The outline is where the
transmission crosses one half, the midpoint between the two levels, which is
also where a blurred step edge has its true position.

Under front light or in fluorescence the contrast is the other way round:
bright drops on a dark field. The same affine map then has a *negative* span
(the field's level below the drops' level), and it still sends the field to 1
and the drops to 0: every later step sees dark drops on a bright field, and
the half-way crossing (invariant under any affine map of the grey levels)
lies where it lay in the raw frame. :func:`light_span` is the signed span
every normalisation uses; :mod:`dropkin.vision._contrast` tells which way a
frame is lit.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "CONTRASTS",
    "light_span",
    "holes_filled",
    "label_regions",
    "dilate",
    "background_from_frames",
    "fit_illumination",
    "dark_level",
    "transmission",
    "silhouette_mask",
    "threshold_midpoint",
]


#: The two ways a recording can be lit: dark drops on a bright field
#: (backlight) or bright drops on a dark field (front light, fluorescence).
CONTRASTS = ("dark-drops", "bright-drops")


def _check_contrast(contrast: str) -> bool:
    """True for bright drops; ValueError for an unknown contrast."""
    if contrast not in CONTRASTS:
        raise ValueError(f"contrast must be one of {CONTRASTS}, got {contrast!r}")
    return contrast == "bright-drops"


def _check_frame(frame, name="frame"):
    frame = np.asarray(frame)
    if frame.ndim != 2:
        raise ValueError(f"{name} must be a 2-D array, got shape {frame.shape}")
    if frame.size == 0:
        raise ValueError(f"{name} is empty")
    return frame


def holes_filled(mask):
    """Fill the holes of a binary mask (regions not connected to the border).

    The same result as :func:`scipy.ndimage.binary_fill_holes` (4-connected
    background): the background is flood-filled from a 1-px border around
    the mask with OpenCV (one sequential pass, several times faster than
    either library's labelling on whole frames); what it does not reach is
    the mask and its holes.

    Examples
    --------
    >>> m = np.zeros((5, 5), bool); m[1:4, 1:4] = True; m[2, 2] = False
    >>> bool(holes_filled(m)[2, 2])
    True
    """
    import cv2

    mask = np.asarray(mask, dtype=bool)
    image = np.zeros((mask.shape[0] + 2, mask.shape[1] + 2), dtype=np.uint8)
    image[1:-1, 1:-1] = mask
    cv2.floodFill(image, None, (0, 0), 2, flags=4)
    return image[1:-1, 1:-1] != 2


def label_regions(mask):
    """Label the 4-connected regions of a binary mask: ``(labels, count)``.

    The same labels, in the same order (by each region's first pixel in
    raster order), as :func:`scipy.ndimage.label` with its default
    structure, computed with OpenCV's connected components.

    Examples
    --------
    >>> m = np.array([[1, 0, 1], [1, 0, 0], [0, 1, 1]], dtype=bool)
    >>> labels, count = label_regions(m)
    >>> labels.tolist(), count
    ([[1, 0, 2], [1, 0, 0], [0, 3, 3]], 3)
    """
    import cv2

    mask = np.asarray(mask, dtype=bool)
    count, labels = cv2.connectedComponents(mask.view(np.uint8), connectivity=4, ltype=cv2.CV_32S)
    return labels, count - 1


def dilate(mask, iterations: int):
    """Binary dilation by a 3 x 3 cross, `iterations` times (as
    :func:`scipy.ndimage.binary_dilation` with its default structure), via OpenCV."""
    import cv2

    cross = cv2.getStructuringElement(cv2.MORPH_CROSS, (3, 3))
    out = cv2.dilate(np.asarray(mask, dtype=np.uint8), cross, iterations=iterations)
    return out.astype(bool)


def background_from_frames(frames):
    """Background image as the per-pixel median of frames without drops.

    Parameters
    ----------
    frames : (K, M, N) ndarray
        Frames of the empty field of view (or a stack in which any one pixel
        is covered by a drop in fewer than half of the frames).

    Returns
    -------
    background : (M, N) ndarray of float64

    Examples
    --------
    >>> stack = np.stack([np.full((4, 5), 200.0)] * 3)
    >>> stack[1, 2, 2] = 10.0
    >>> background_from_frames(stack)[2, 2]
    np.float64(200.0)
    """
    frames = np.asarray(frames)
    if frames.ndim != 3 or frames.shape[0] == 0:
        raise ValueError(f"frames must be a (K, M, N) array with K >= 1, got {frames.shape}")
    return np.median(frames, axis=0).astype(np.float64)


def threshold_midpoint(frame, *, nbins: int = 256) -> float:
    """Otsu's threshold of a frame's grey levels, for a first bright/dark split.

    Parameters
    ----------
    frame : (M, N) ndarray
        Any numeric dtype.
    nbins : int, optional
        Histogram bins.

    Returns
    -------
    threshold : float
        Grey level that maximises the between-class variance (Otsu 1979,
        IEEE Trans. Syst. Man Cybern. 9, 62).
    """
    frame = _check_frame(frame)
    low, high = float(frame.min()), float(frame.max())
    if high <= low:
        return low
    if frame.dtype.kind == "u" and frame.dtype.itemsize <= 2:
        # Integer grey levels: count each level once, then bin the levels
        # with those counts as weights (the same bins as binning every pixel).
        counts = np.bincount(frame.ravel(), minlength=int(high) + 1)[int(low) :]
        levels = np.arange(int(low), int(high) + 1, dtype=np.float64)
        weighted, edges = np.histogram(levels, bins=nbins, range=(low, high), weights=counts)
        hist = weighted.astype(np.int64)
    else:
        values = frame.astype(np.float64, copy=False).ravel()
        hist, edges = np.histogram(values, bins=nbins, range=(low, high))
    centres = 0.5 * (edges[:-1] + edges[1:])
    weight1 = np.cumsum(hist)
    weight2 = weight1[-1] - weight1
    sum1 = np.cumsum(hist * centres)
    mean1 = sum1 / np.maximum(weight1, 1)
    mean2 = (sum1[-1] - sum1) / np.maximum(weight2, 1)
    between = weight1 * weight2 * (mean1 - mean2) ** 2
    return float(centres[int(np.argmax(between[:-1]))])


def fit_illumination(
    frame, *, background=None, degree: int = 2, step: int = 4, contrast: str = "dark-drops"
):
    """Smooth model of the backlight, fitted to the background pixels of a frame.

    Parameters
    ----------
    frame : (M, N) ndarray
        A backlit frame (bright background, dark drops) or, with `contrast`
        ``"bright-drops"``, bright drops on a dark field.
    background : (M, N) ndarray of bool, optional
        Pixels known to be background. By default, the pixels on the field's
        side of the Otsu threshold (brighter under backlight, darker with
        bright drops), shrunk by a few pixels so that blurred edges and the
        centre spot of a drop (which lies inside its rim) are not taken as
        background.
    degree : int, optional
        Degree of the 2-D polynomial (2 models a vignette or a gradient).
    step : int, optional
        Use every `step`-th row and column for the fit (speed).
    contrast : {"dark-drops", "bright-drops"}, optional
        Which way the frame is lit (see :func:`frame_contrast`).

    Returns
    -------
    illumination : (M, N) ndarray of float64
        The fitted brightness of the empty field of view.

    Examples
    --------
    >>> rows, cols = np.mgrid[0:40, 0:60]
    >>> light = 1000.0 + 3.0 * cols
    >>> frame = light.copy()
    >>> frame[10:20, 10:20] = 50.0
    >>> model = fit_illumination(frame, degree=1, step=1)
    >>> bool(np.allclose(model, light))
    True
    """
    frame = _check_frame(frame)  # any dtype: only the pixels fitted are made float
    if degree < 0:
        raise ValueError(f"degree must be >= 0, got {degree}")
    bright_drops = _check_contrast(contrast)
    if background is None:
        bright = frame > threshold_midpoint(frame)
        field = ~bright if bright_drops else bright
        drops = holes_filled(~field)
        background = ~dilate(drops, 3)
        if background.sum() < (degree + 1) * (degree + 2):
            background = field
    else:
        background = np.asarray(background, dtype=bool)
        if background.shape != frame.shape:
            raise ValueError("background mask must have the frame's shape")
    rows, cols = np.mgrid[0 : frame.shape[0] : step, 0 : frame.shape[1] : step]
    use = background[::step, ::step]
    if use.sum() < (degree + 1) * (degree + 2):
        return np.full(frame.shape, float(np.median(frame)))
    scale_r, scale_c = max(frame.shape[0] - 1, 1), max(frame.shape[1] - 1, 1)
    powers = [(i, j) for i in range(degree + 1) for j in range(degree + 1 - i)]

    def design(r, c):
        r, c = r / scale_r, c / scale_c
        return np.stack([r**i * c**j for i, j in powers], axis=-1)

    # Least squares through the normal equations: the few terms' products
    # summed without BLAS (whose threads only wait on one another on a busy
    # machine), then a small solve; the columns, scaled to 0..1, are well
    # conditioned.
    a = design(rows[use], cols[use])
    y = frame[::step, ::step][use].astype(np.float64)
    coeffs, *_ = np.linalg.lstsq(
        np.einsum("ki,kj->ij", a, a), np.einsum("ki,k->i", a, y), rcond=None
    )
    # Evaluate on the full grid in one pass, each power of the row weighting
    # a polynomial in the column: sum_i r^i (sum_j a_ij c^j).
    r_axis = np.arange(frame.shape[0]) / scale_r
    c_axis = np.arange(frame.shape[1]) / scale_c
    in_col = np.zeros((degree + 1, frame.shape[1]))
    for (i, j), coeff in zip(powers, coeffs, strict=True):
        in_col[i] += coeff * c_axis**j
    return np.einsum("ri,ic->rc", np.power.outer(r_axis, np.arange(degree + 1)), in_col)


def dark_level(frame, *, percentile: float = 0.5, contrast: str = "dark-drops") -> float:
    """Grey level of the drops' own extreme: their dark rim under backlight,
    their brightest part with `contrast` ``"bright-drops"``.

    A low percentile of the frame's grey levels (a high one, ``100 -
    percentile``, for bright drops), so that one dead or hot pixel does not
    set it; in the frame's own units.
    """
    frame = _check_frame(frame)
    q = 100.0 - percentile if _check_contrast(contrast) else percentile
    return float(np.percentile(frame, q))


def light_span(illumination, dark: float):
    """The signed span ``illumination - dark`` (float32) that the transmission
    divides by, kept away from zero: at least 1e-6 where the field is brighter
    than the drops (backlight), at most -1e-6 where it is darker (bright
    drops), the side chosen by the span's mean over the array.

    Examples
    --------
    >>> light_span(np.array([100.0, 3.0]), 3.0).tolist()
    [97.0, 9.999999974752427e-07]
    >>> light_span(np.array([5.0, 90.0]), 90.0).tolist()
    [-85.0, -9.999999974752427e-07]
    """
    span = np.subtract(illumination, np.float32(dark), dtype=np.float32)
    if float(np.mean(span)) < 0.0:
        return np.minimum(span, np.float32(-1e-6), out=span)
    return np.maximum(span, np.float32(1e-6), out=span)


def transmission(frame, illumination, dark: float, *, out=None):
    """Normalise a frame to 0 (drop rim) ... 1 (background).

    Parameters
    ----------
    frame : (M, N) ndarray
        Raw frame, any dtype (8-bit, 12-bit-in-16-bit, 16-bit).
    illumination : (M, N) ndarray
        Brightness of the empty field (see :func:`fit_illumination`).
    dark : float
        Grey level of a fully dark drop (see :func:`dark_level`); for bright
        drops on a dark field, their bright level (above `illumination`: the
        span is negative, see :func:`light_span`).
    out : (M, N) ndarray of float32, optional
        Array to write the result into.

    Returns
    -------
    transmission : (M, N) ndarray of float32
    """
    frame = np.asarray(frame)
    span = light_span(illumination, dark)
    result = np.subtract(frame, np.float32(dark), out=out, dtype=np.float32)
    return np.divide(result, span, out=result)


def silhouette_mask(trans, *, level: float = 0.5, min_area: int = 20, fill_holes: bool = True):
    """Binary silhouette of the drops from a transmission image.

    Parameters
    ----------
    trans : (M, N) ndarray
        Transmission (see :func:`transmission`).
    level : float, optional
        Pixels darker than this are inside a drop (one half: the midpoint).
    min_area : int, optional
        Dark specks smaller than this many pixels (dust) are removed.
    fill_holes : bool, optional
        Fill enclosed bright regions: the bright centre spot that a
        transparent drop shows under backlighting.

    Returns
    -------
    mask : (M, N) ndarray of bool

    Examples
    --------
    >>> t = np.ones((9, 9), dtype=np.float32)
    >>> t[2:7, 2:7] = 0.0
    >>> t[4, 4] = 1.0          # the bright spot
    >>> t[0, 8] = 0.0          # a speck of dust
    >>> m = silhouette_mask(t, min_area=3)
    >>> int(m.sum()), bool(m[4, 4]), bool(m[0, 8])
    (25, True, False)
    """
    trans = _check_frame(trans, "trans")
    mask = trans < level
    if fill_holes:
        mask = holes_filled(mask)
    if min_area > 1:
        labels, count = label_regions(mask)
        if count:
            sizes = np.bincount(labels.ravel())
            keep = sizes >= min_area
            keep[0] = False
            mask = keep[labels]
    return mask
