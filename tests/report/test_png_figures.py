"""Issue 18: the PNG figures packed as RGB at zlib level 1, for the pixels matplotlib draws.

Each figure of an analysis is saved by ``_save`` and, from the same laid-out
figure, by matplotlib's own PNG writer (RGBA, Pillow's default level); both
files are decoded by Pillow, a reader independent of the code under test,
and must hold the same pixels and the same 300 dpi.
"""

from __future__ import annotations

import warnings
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

import dropkin.cli
from dropkin.pipeline import read_fit
from dropkin.report._plots import figure_makers
from dropkin.report._style import _RC, _import_matplotlib, _save
from dropkin.series import read_series

SAMPLES = Path(__file__).resolve().parents[2] / "sample_frames"


@pytest.fixture(scope="module")
def analysed(tmp_path_factory):
    out = tmp_path_factory.mktemp("png") / "out"
    argv = ["analyze", str(SAMPLES / "spreading_drop"), "-o", str(out), "--bootstrap", "20"]
    result = CliRunner().invoke(dropkin.cli.main, argv)
    assert result.exit_code == 0, result.output
    return out


def test_png_figures_hold_the_pixels_matplotlib_draws(analysed, tmp_path):
    from PIL import Image

    matplotlib = _import_matplotlib()
    series, verdict = read_series(analysed / "radius.csv"), read_fit(analysed / "fit.json")
    overlays = sorted((analysed / "overlays").glob("*.png"))
    makers = figure_makers(series, verdict, overlays)
    assert {"radius", "contact_angle", "overlays"} <= set(makers)
    with matplotlib.rc_context(_RC), warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for stem, draw in makers.items():
            fig = draw()
            (ours,) = _save(fig, tmp_path, stem)
            theirs = tmp_path / f"{stem}.matplotlib.png"
            fig.savefig(theirs, format="png", dpi=300)  # laid out by _save: not again
            with Image.open(ours) as a, Image.open(theirs) as b:
                assert a.mode == "RGB" and b.mode == "RGBA", stem
                assert a.size == b.size and a.size[0] == 1020, stem
                assert a.info["dpi"] == pytest.approx((300, 300), abs=1e-3)
                assert np.array_equal(np.asarray(a.convert("RGBA")), np.asarray(b)), stem


@pytest.mark.parametrize("height_in", [2.37, (711 - 1e-10) / 300, 2.6, 1.0 + 1.0 / 3.0])
def test_a_figure_of_any_height_is_saved_whole(tmp_path, height_in):
    # a height that is not a whole number of pixels (711 px less a rounding error
    # came from a sessile drop's montage) must give the rows matplotlib draws
    from PIL import Image

    from dropkin.report._style import _new_figure

    _import_matplotlib()
    fig = _new_figure(height_in)
    ax = fig.add_subplot()
    ax.plot([1, 2, 3], [3, 1, 2])
    ax.set_title(f"{height_in:.6f} in")
    (ours,) = _save(fig, tmp_path, "figure")
    fig.savefig(tmp_path / "theirs.png", format="png", dpi=300)
    with Image.open(ours) as a, Image.open(tmp_path / "theirs.png") as b:
        assert a.size == b.size
        assert np.array_equal(np.asarray(a.convert("RGBA")), np.asarray(b))


def test_a_drawing_of_an_unexpected_size_is_saved_by_matplotlib(tmp_path, monkeypatch):
    # should the drawing and its canvas ever disagree on the size, matplotlib's own
    # PNG writer saves the figure (RGBA), rather than an error or a cut image
    from PIL import Image

    from dropkin.report._style import _new_figure

    _import_matplotlib()
    fig = _new_figure(2.0)
    fig.add_subplot().plot([1, 2], [2, 1])
    fig.savefig(tmp_path / "theirs.png", format="png", dpi=300)
    monkeypatch.setattr(fig.canvas, "get_width_height", lambda **kw: (10, 10))
    (ours,) = _save(fig, tmp_path, "figure")
    with Image.open(ours) as a, Image.open(tmp_path / "theirs.png") as b:
        assert a.mode == "RGBA" and a.size == b.size == (1020, 600)
        assert np.array_equal(np.asarray(a), np.asarray(b))
