"""Every frame measured at three edge levels in one pass (issue 13, systematics).

The direction of the shift follows from the optics: across a blurred edge the
transmission rises monotonically from the drop's dark rim (0) to the
background (1). Going outward from the dark neck (or the dark drop, for the
contact line), a lower level is crossed first, so a lower level gives a smaller
radius and a higher level a larger one. For a straight edge blurred by a
Gaussian of sigma, level L is crossed at ``sigma * Phi^-1(L)`` from the edge
(``scipy.stats.norm.ppf``), ``+-0.253 sigma`` for 0.6 and 0.4; sigma here is
the point-spread sigma combined with a pixel's own averaging (1/sqrt(12) px,
the standard deviation of a uniform pixel). The bottom view of spreading
measures an area by summed coverage, which blur conserves: there the level
hardly matters.
"""

import math

import numpy as np
import pytest
from scipy.stats import norm

from dropkin import synth
from dropkin.errors import DropkinError, ExperimentError
from dropkin.measure import MeasureOptions
from dropkin.series import CSV_COLUMNS, read_radius_csv, read_series, write_series

from .test_measure import CASES, SPREAD_LAW, _measure, _recording

PIXEL = 15e-6


@pytest.fixture(scope="module")
def pair_path(tmp_path_factory):
    path = tmp_path_factory.mktemp("levels") / "pair.tif"
    synth.write_recording(_recording(CASES["horizontal-8bit"]), path)
    return path


def test_neck_at_lower_level_is_smaller_by_the_blurred_edge_offset(pair_path):
    series, _ = _measure(pair_path)
    assert sorted(series.level_radii) == [0.4, 0.6]
    ok = np.array(series.status) == "ok"
    assert ok.sum() >= 30
    low = series.level_radii[0.4][ok] / PIXEL
    main = series.radius[ok] / PIXEL
    high = series.level_radii[0.6][ok] / PIXEL
    assert np.isfinite(low).all() and np.isfinite(high).all()
    assert (low < main).all() and (main < high).all()
    # Straight-edge offset (scipy's normal quantile); the neck's saddle curves
    # the edge, so allow a factor of two either way.
    sigma = math.hypot(CASES["horizontal-8bit"]["blur"], 1.0 / math.sqrt(12.0))
    offset = sigma * norm.ppf(0.6)
    for shift in (np.mean(main - low), np.mean(high - main)):
        assert 0.5 * offset < shift < 2.0 * offset


def test_main_level_is_the_single_level_run_bit_for_bit(pair_path):
    three, _ = _measure(pair_path)
    single, _ = _measure(pair_path, level_spread=0.0)
    assert single.level_radii == {}
    np.testing.assert_array_equal(three.radius, single.radius)
    np.testing.assert_array_equal(three.radius_err, single.radius_err)
    assert three.status == single.status
    assert three.contact_time == single.contact_time
    assert single.details["edge_levels"] == [0.5]
    assert three.details["edge_levels"] == [0.4, 0.5, 0.6]


@pytest.mark.parametrize("view", ["side", "bottom"])
def test_contact_radius_at_three_levels(tmp_path, view):
    pixel = 14e-6
    rec = synth.synthesize(
        synth.Spreading(view=view, drop_radius=1e-3, reflectivity=0.0),
        SPREAD_LAW,
        camera=synth.Camera(25e3, pixel, (224, 320)),
        frames=40,
        contact_frame=5.3,
        optics=synth.Optics(blur_px=1.5),
        sensor=synth.Sensor(bit_depth=8),
        seed=11,
    )
    path = tmp_path / "drop.tif"
    synth.write_recording(rec, path)
    series, _ = _measure(path)
    single, _ = _measure(path, level_spread=0.0)
    np.testing.assert_array_equal(series.radius, single.radius)
    ok = np.array(series.status) == "ok"
    assert ok.sum() >= 20
    low = series.level_radii[0.4][ok] / pixel
    main = series.radius[ok] / pixel
    high = series.level_radii[0.6][ok] / pixel
    if view == "side":
        assert (low < main).all() and (main < high).all()
    else:  # the area by summed coverage: the level moves it by a few hundredths of a px
        assert np.max(np.abs(low - main)) < 0.05 and np.max(np.abs(high - main)) < 0.05


def test_other_levels_follow_the_main_level_and_are_clipped():
    assert MeasureOptions().other_levels == (0.4, 0.6)
    assert MeasureOptions(level=0.3, level_spread=0.05).other_levels == (0.25, 0.35)
    assert MeasureOptions(level=0.9).other_levels == (0.8, 0.95)
    assert MeasureOptions(level=0.95).other_levels == (0.85,)
    assert MeasureOptions(level_spread=0.0).other_levels == ()


def test_a_bad_level_spread_is_refused(pair_path):
    with pytest.raises(ExperimentError, match="level_spread"):
        _measure(pair_path, level_spread=-0.1)


def test_radius_csv_round_trip_with_and_without_level_columns(pair_path, tmp_path):
    series, _ = _measure(pair_path)
    write_series(series, tmp_path / "with")
    text = (tmp_path / "with" / "radius.csv").read_text()
    header = text.splitlines()[0].split(",")
    assert header == [*CSV_COLUMNS, "radius_level_0.4_m", "radius_level_0.6_m"]
    back = read_series(tmp_path / "with" / "radius.csv")
    assert sorted(back.level_radii) == [0.4, 0.6]
    for level, values in series.level_radii.items():
        np.testing.assert_array_equal(back.level_radii[level], values)
    np.testing.assert_array_equal(back.radius, series.radius)
    # An old radius.csv, the contract's columns only: it reads, without level radii.
    old = tmp_path / "old.csv"
    width = len(CSV_COLUMNS)
    old.write_text(
        "\n".join(",".join(line.split(",")[:width]) for line in text.splitlines()) + "\n"
    )
    alone = read_radius_csv(old)
    assert alone.level_radii == {}
    np.testing.assert_array_equal(alone.radius, series.radius)
    assert alone.status == series.status


def test_radius_csv_with_a_foreign_or_short_column_is_refused(tmp_path):
    rows = ["0,0.0,,,,not-found", "1,1e-05,,,,not-found"]
    foreign = tmp_path / "foreign.csv"
    foreign.write_text(",".join([*CSV_COLUMNS, "comment"]) + "\n" + "\n".join(rows) + "\n")
    with pytest.raises(DropkinError, match="other columns"):
        read_radius_csv(foreign)
    short = tmp_path / "short.csv"
    short.write_text(",".join([*CSV_COLUMNS, "radius_level_0.4_m"]) + "\n" + rows[0] + "\n")
    with pytest.raises(DropkinError, match="line 2: has 6 fields"):
        read_radius_csv(short)
    negative = tmp_path / "negative.csv"
    negative.write_text(
        ",".join([*CSV_COLUMNS, "radius_level_0.4_m"]) + "\n" + rows[0] + ",-1e-6\n"
    )
    with pytest.raises(DropkinError, match="radius_level_0.4_m is negative"):
        read_radius_csv(negative)
