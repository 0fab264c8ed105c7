"""Figures of long series (issue 17, finding 12): binned, so their cost stays bounded.

A group of more than ``MAX_DRAWN`` rows is drawn as the medians of log-spaced
τ bins with their 16–84 % spread. The binned values are checked against
numpy's own ``median``, ``percentile`` and ``histogram`` of the same rows and
against ``scipy.stats.binned_statistic`` (general-purpose reference
libraries). The series are synthetic, invented for these tests: the inertial
law r = D₀ (γR³/ρ)^¼ τ^½ of water (the regime catalogue's law; D₀ = 1.2 as
in tests/scaling/test_verdict.py) with 1 % Gaussian noise.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.stats import binned_statistic

from dropkin.report import analysis_figures
from dropkin.report._dense import BINNED_TITLE, BINS, MAX_DRAWN, bin_log, draw_points
from dropkin.scaling import analyze_series, regime, sample_numbers
from dropkin.series import RadiusSeries

# docs/physics.md §5.1 (water, 20 °C) in air, as tests/scaling/test_verdict.py
WATER = sample_numbers(
    surface_tension=0.07274,
    viscosity=1.0016e-3,
    density=998.207,
    radius=1e-3,
    outer_viscosity=1.8e-5,
    outer_density=1.2,
)
T0 = 5.4e-6  # the contact instant of the synthetic series (s)
END = 2e-3  # the last frame (s)


def _series(rows: int, seed: int = 0, *, angles: bool = False) -> RadiusSeries:
    """`rows` frames over [0, END]: before contact, then ok with every 10th at the edge."""
    rng = np.random.default_rng(seed)
    law = regime("inertial").law(WATER)
    time = np.linspace(0.0, END, rows)
    tau = time - T0
    after = tau > 4e-6
    radius = np.full(rows, np.nan)
    radius[after] = law(tau[after], 1.2) * (1 + 0.01 * rng.standard_normal(after.sum()))
    status = np.where(after, "ok", np.where(tau <= 0, "before-contact", "unresolved"))
    status[np.flatnonzero(after)[::10]] = "at-edge"
    theta = None
    if angles:
        theta = np.full((rows, 2), np.nan)
        theta[after] = (
            150 - 5 * np.log(tau[after] / 1e-5)[:, None] + rng.normal(0, 1, (after.sum(), 2))
        )
    return RadiusSeries(
        frame=np.arange(rows),
        time=time,
        radius=radius,
        radius_err=np.where(after, 0.01 * radius, np.nan),
        status=tuple(status),
        contact_time=T0,
        contact_time_err=END / rows,
        drop_radius=1e-3,
        geometry="coalescence",
        view="side",
        frame_rate=rows / END,
        pixel_size=1e-6,
        angles=theta,
    )


def _verdict(series):
    return analyze_series(
        series.time,
        series.radius,
        series.radius_err,
        series.status,
        contact_time=T0,
        contact_bracket=(T0 - 2e-6, T0 + 2e-6),
        numbers=WATER,
        geometry="coalescence",
        bootstrap=0,
    )


@pytest.fixture(scope="module")
def long_run():
    """A verdict fitted on 2000 frames, and the figures of a 10⁵-row series of the same law."""
    verdict = _verdict(_series(2000))
    assert verdict and verdict.dominant
    series = _series(100_000, seed=1, angles=True)
    return series, verdict, analysis_figures(series, verdict)


def _markers(ax):
    """The marker lines of an axes (not the bars, guides or fitted curves)."""
    return [ln for ln in ax.get_lines() if ln.get_marker() not in (None, "None", "none", "")]


def _vertices(ax) -> int:
    lines = sum(len(ln.get_xdata()) for ln in ax.get_lines())
    return lines + sum(len(p.vertices) for c in ax.collections for p in c.get_paths())


def _bins_by_numpy(tau, value):
    """Each non-empty bin's median τ and value, 16th and 84th percentile, and rows."""
    edges = np.geomspace(tau.min(), tau.max(), BINS + 1)
    rows, _ = np.histogram(tau, edges)
    out = []
    for i in np.flatnonzero(rows):
        last = i == BINS - 1
        sel = (tau >= edges[i]) & ((tau <= edges[i + 1]) if last else (tau < edges[i + 1]))
        lo, hi = np.percentile(value[sel], [16, 84])
        out.append((np.median(tau[sel]), np.median(value[sel]), lo, hi, sel.sum()))
    return np.array(out).T, rows[rows > 0]


def test_bin_log_agrees_with_numpy_and_scipy():
    rng = np.random.default_rng(3)
    tau = 10 ** rng.uniform(-6, -2, 100_000)
    value = np.sqrt(tau) * (1 + 0.05 * rng.standard_normal(tau.size))
    b = bin_log(tau, value)
    (t, med, lo, hi, rows), counts = _bins_by_numpy(tau, value)
    # same rows and the same arithmetic (linear interpolation): equal to rounding
    np.testing.assert_array_equal(b.rows, counts)
    np.testing.assert_allclose(b.tau, t, rtol=1e-12)
    np.testing.assert_allclose(b.value, med, rtol=1e-12)
    np.testing.assert_allclose(b.lower, lo, rtol=1e-12)
    np.testing.assert_allclose(b.upper, hi, rtol=1e-12)
    ref = binned_statistic(tau, value, statistic="median", bins=b.edges).statistic
    np.testing.assert_allclose(b.value, ref[np.isfinite(ref)], rtol=1e-12)


def test_bin_log_refuses_what_it_cannot_bin():
    with pytest.raises(ValueError, match="positive"):
        bin_log([0.0, 1.0], [1.0, 2.0])
    with pytest.raises(ValueError, match="one length"):
        bin_log([1.0, 2.0], [1.0])


def test_rows_that_cannot_be_drawn_are_left_out_of_the_bins():
    """Infinite or missing values (a law that underflows to 0, say) are skipped, as
    matplotlib skips them, not an error: the bins hold the other rows."""
    from matplotlib.figure import Figure

    rng = np.random.default_rng(5)
    tau = np.geomspace(1e-6, 1e-3, 2 * MAX_DRAWN)
    value = 1 + 0.01 * rng.standard_normal(tau.size)
    value[::7], value[1::7] = np.inf, np.nan
    ax = Figure().add_subplot()
    _, binned = draw_points(ax, tau, value, label="ok", marker="o")
    (container,) = ax.containers
    good = np.isfinite(value)
    assert binned and container.get_label().startswith(f"ok ({good.sum()}, ")
    np.testing.assert_allclose(container[0].get_ydata(), bin_log(tau[good], value[good]).value)


def test_a_long_series_is_drawn_with_a_bounded_number_of_points(long_run):
    series, _, figures = long_run
    assert {"radius", "residuals", "contact_angle"} <= set(figures)
    for stem in ("radius", "residuals", "contact_angle"):
        (ax,) = figures[stem].axes
        markers = _markers(ax)
        assert markers, stem
        for line in markers:
            assert len(line.get_xdata()) <= BINS, (stem, line.get_label())
        # 10⁵ rows would be ≥ 10⁵ markers and 2·10⁵ bar ends one by one
        assert _vertices(ax) < 20 * BINS, stem
        legend = ax.get_legend() or figures[stem].legends[0]
        assert legend.get_title().get_text() == BINNED_TITLE, stem
        assert ax.containers and all("a bin)" in c.get_label() for c in ax.containers), stem


def test_the_binned_points_are_the_medians_of_their_rows(long_run):
    series, verdict, figures = long_run
    (ax,) = figures["radius"].axes
    tau = series.time - verdict.t0
    status = np.asarray(series.status)
    lines = ax.get_lines()
    for name in ("ok", "at-edge"):
        sel = (status == name) & (tau > 0) & np.isfinite(series.radius)
        assert sel.sum() > MAX_DRAWN
        (container,) = [c for c in ax.containers if c.get_label().startswith(f"{name} (")]
        points = container[0]
        bars = lines[lines.index(points) + 1]  # drawn just after its markers
        (t, med, lo, hi, rows), _ = _bins_by_numpy(tau[sel], series.radius[sel])
        np.testing.assert_allclose(points.get_xdata(), t * 1e3, rtol=1e-12)
        np.testing.assert_allclose(points.get_ydata(), med * 1e3, rtol=1e-12)
        ends = np.asarray(bars.get_ydata()).reshape(-1, 3)[:, :2]
        np.testing.assert_allclose(ends, np.column_stack((lo, hi)) * 1e3, rtol=1e-12)
        assert f"{rows.min():.0f}–{rows.max():.0f} a bin" in container.get_label()


def test_a_short_series_is_drawn_row_by_row():
    series = _series(MAX_DRAWN)
    verdict = _verdict(series)
    fig = analysis_figures(series, verdict)["radius"]
    (ax,) = fig.axes
    tau = series.time - verdict.t0
    ok = (np.asarray(series.status) == "ok") & (tau > 0)
    (container,) = [c for c in ax.containers if c.get_label().startswith("ok (")]
    assert container.get_label() == f"ok ({ok.sum()})"
    np.testing.assert_array_equal(container[0].get_xdata(), tau[ok] * 1e3)
    assert ax.get_legend().get_title().get_text() == ""


def test_no_legend_sits_on_the_points(long_run):
    """At most 2 % of the markers under any legend (each figure of the long series)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    _, _, figures = long_run
    for stem, fig in figures.items():
        FigureCanvasAgg(fig).draw()  # the layout as saved
        renderer = fig.canvas.get_renderer()
        for ax in fig.axes:
            xy = [ln.get_transform().transform(ln.get_xydata()) for ln in _markers(ax)]
            if not xy:
                continue
            xy = np.vstack(xy)
            for legend in [ax.get_legend(), *fig.legends]:
                if legend is None:
                    continue
                box = legend.get_window_extent(renderer)
                inside = (
                    (xy[:, 0] >= box.x0)
                    & (xy[:, 0] <= box.x1)
                    & (xy[:, 1] >= box.y0)
                    & (xy[:, 1] <= box.y1)
                )
                assert inside.sum() <= 0.02 * len(xy), (stem, int(inside.sum()), len(xy))
