"""The legend's place, chosen from where the points are drawn.

matplotlib's ``loc="best"`` tries every place against every point drawn, a
cost that grows with the series (seconds at 10⁵ points). Here the legend's
size is worked out from its texts' widths, the points drawn (markers and bar ends,
a few hundred once a long series is binned) are counted under a box of that
size in each corner of the axes, and the emptiest corner is taken; when
every corner would cover more than 2 % of them, the legend goes below the
axes and the figure grows by its height.
"""

from __future__ import annotations

import numpy as np

from ._dense import BINNED_TITLE

__all__ = ["legend_corner", "place_legend"]

#: A corner whose box covers more than this share of the points is crowded.
_CROWDED = 0.02
#: Points at most that :func:`legend_corner` counts (every k-th of more).
_COUNTED = 20_000
#: The legend's font sizes (pt), of its entries and of its title.
_FONT, _TITLE_FONT = 7.0, 6.5
#: The figure's margins around the axes (in): tick labels and axis labels,
#: as the constrained layout leaves them (a little more, to be safe).
_MARGIN_W, _MARGIN_H = 0.55, 0.5


def _text_width(text: str, size: float) -> float:
    """The width (pt) of one line of `text` at `size` pt, as Agg lays it out."""
    from matplotlib.backends.backend_agg import RendererAgg
    from matplotlib.font_manager import FontProperties

    renderer = RendererAgg(1, 1, 72)  # at 72 dpi a pixel is a point
    return renderer.get_text_width_height_descent(text, FontProperties(size=size), ismath=False)[0]


def _legend_size(ax, labels, title, handlelength) -> tuple[float, float]:
    """The legend's width and height (with its gap to the axes' edge) as fractions
    of the axes, from its texts' widths and matplotlib's legend spacings (in
    font sizes: border gap 0.5, border pad 0.4, handle pad 0.8, row gap 0.5)."""
    lines = [line for label in labels for line in label.split("\n")]
    widths = [_text_width(t, _FONT) + _FONT * (handlelength + 0.8) for t in lines]
    if title:
        widths.append(_text_width(title, _TITLE_FONT))
    width_pt = max(widths) + _FONT * (0.5 + 0.4 * 2)
    height_pt = _FONT * (1.5 * len(lines) - 0.5 + 1.3) + (1.5 * _TITLE_FONT if title else 0.0)
    fig_w, fig_h = ax.figure.get_size_inches()
    title_h = 0.15 if ax.get_title(loc="left") or ax.get_title() else 0.0
    axes_w, axes_h = fig_w - _MARGIN_W, fig_h - _MARGIN_H - title_h
    return width_pt / 72 / axes_w, height_pt / 72 / axes_h


def legend_corner(ax, points, size=(0.45, 0.4)) -> str | None:
    """The corner of `ax` where a box of `size` (fractions of the axes) covers the
    fewest of `points`; None when even that box covers more than 2 % of them.

    `points` are (x, y) pairs of arrays in data coordinates, as drawn; call
    it once the axes' limits are set. Ties go to the upper left, upper right,
    lower right, lower left, in that order.
    """
    xy = [np.column_stack((np.ravel(x), np.ravel(y))) for x, y in points if np.size(x)]
    if not xy:
        return "upper left"
    xy = np.vstack(xy)
    xy = xy[:: max(1, len(xy) // _COUNTED)]
    frac = (ax.transData + ax.transAxes.inverted()).transform(xy)
    frac = frac[np.isfinite(frac).all(axis=1)]
    w, h = min(size[0], 1.0), min(size[1], 1.0)
    left, right = frac[:, 0] <= w, frac[:, 0] >= 1 - w
    upper, lower = frac[:, 1] >= 1 - h, frac[:, 1] <= h
    crowd = {
        "upper left": left & upper,
        "upper right": right & upper,
        "lower right": right & lower,
        "lower left": left & lower,
    }
    corner = min(crowd, key=lambda k: int(crowd[k].sum()))
    return None if crowd[corner].sum() > _CROWDED * len(frac) else corner


def place_legend(ax, points, *, binned: bool = False, **options) -> None:
    """The axes' legend in the corner :func:`legend_corner` chooses for its size,
    or below the axes (the figure made taller by its height) when every
    corner is crowded.

    `binned` titles it :data:`BINNED_TITLE`; `options` go to matplotlib's legend.
    """
    title = BINNED_TITLE if binned else None
    labels = ax.get_legend_handles_labels()[1]
    size = _legend_size(ax, labels, title, options.get("handlelength", 2.0))
    corner = legend_corner(ax, points, size)
    if corner is not None:
        ax.legend(loc=corner, title=title, title_fontsize=_TITLE_FONT, **options)
        return
    fig = ax.figure
    legend = fig.legend(
        loc="outside lower center", title=title, title_fontsize=_TITLE_FONT, **options
    )
    lines = len(legend.get_texts()) + (title is not None)
    fig.set_figheight(fig.get_figheight() + 0.14 * lines + 0.05)
