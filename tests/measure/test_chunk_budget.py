"""Chunks sized in bytes: large frames go a few at a time, small frames keep --chunk-size.

The budget (``recording/_limits.py``) is lowered here so that small synthetic
frames stand for large ones; the memory itself is measured in
``benchmarks/whole_job.py`` (figure e), not in the suite. Each test counts
the frames handed to the per-frame analysis at once and checks the series
against the one measured in chunks of one frame (cutting a recording into
chunks must not change a number; common practice for streaming).
"""

import numpy as np
import pytest

from dropkin import synth, vision
from dropkin.experiment import load_experiment
from dropkin.measure import MeasureOptions, measure
from dropkin.recording import _limits, frames_at_once, frames_mapped, open_recording

FRAMES = 40
SHAPE = (300, 360)  # 8-bit: 108,000 bytes a frame decoded, 540,000 with work arrays


@pytest.fixture(scope="module")
def recordings(tmp_path_factory):
    """The same synthetic coalescence as a PNG folder (decoded chunk by chunk)
    and as an uncompressed TIFF stack (memory-mapped)."""
    import tifffile

    folder = tmp_path_factory.mktemp("budget")
    rec = synth.synthesize(
        synth.Coalescence(view="side", drop_radius=1e-3, angle_deg=0.0),
        synth.inertial_law(surface_tension=0.072, density=998.0, drop_radius=1e-3),
        camera=synth.Camera(2e5, 15e-6, SHAPE),
        frames=FRAMES,
        contact_frame=3.4,
        seed=5,
    )
    png = folder / "png"
    synth.write_recording(rec, png)
    stack = folder / "raw.tif"
    with tifffile.TiffWriter(stack) as tif:
        for frame in rec.render():
            tif.write(frame, contiguous=True, photometric="minisblack")
    (folder / "raw.toml").write_text(synth.experiment_toml(rec))
    return {"decoded": png, "mapped": stack}


def _measure_counting(path, monkeypatch, chunk_size):
    """The series and the number of frames in each call of the neck search."""
    sizes = []
    original = vision.measure_necks

    def counting(frames, *args, **kwargs):
        sizes.append(len(frames))
        return original(frames, *args, **kwargs)

    monkeypatch.setattr(vision, "measure_necks", counting)
    exp = load_experiment(path)
    rec = open_recording(
        path, frame_rate=exp.recording.frame_rate, pixel_size=exp.recording.pixel_size
    )
    series, _ = measure(rec, exp, options=MeasureOptions(chunk_size=chunk_size))
    monkeypatch.setattr(vision, "measure_necks", original)
    return series, sizes, rec


@pytest.mark.parametrize("kind", ["decoded", "mapped"])
def test_the_byte_budget_bounds_the_frames_held_for_large_frames(recordings, monkeypatch, kind):
    path = recordings[kind]
    whole, ones, _ = _measure_counting(path, monkeypatch, 1)
    assert ones == ([1] * FRAMES if kind == "decoded" else [4] * (FRAMES // 4))  # map: 4 chunks
    # a budget of three frames with their work arrays, a map of five frames
    per_frame = SHAPE[0] * SHAPE[1] * (1 + _limits.WORK_BYTES_PER_PIXEL)
    monkeypatch.setattr(_limits, "CHUNK_BYTES", 3 * per_frame)
    monkeypatch.setattr(_limits, "MAP_BYTES", 5 * SHAPE[0] * SHAPE[1])
    assert frames_at_once(SHAPE, 1, 64) == 3
    assert frames_mapped(SHAPE, 1, 3) == 5
    series, sizes, _ = _measure_counting(path, monkeypatch, 64)
    held = 3 if kind == "decoded" else 5
    assert sum(sizes) == FRAMES and max(sizes) == held
    assert series.status == whole.status
    assert np.array_equal(series.radius, whole.radius, equal_nan=True)


@pytest.mark.parametrize("kind", ["decoded", "mapped"])
def test_small_frames_keep_the_chunk_size_asked_for(recordings, monkeypatch, kind):
    # The recording as a whole is over the budget (40 frames, a budget of 20):
    # each chunk is sized by one frame, never by the recording's length.
    per_frame = SHAPE[0] * SHAPE[1] * (1 + _limits.WORK_BYTES_PER_PIXEL)
    monkeypatch.setattr(_limits, "CHUNK_BYTES", 20 * per_frame)
    monkeypatch.setattr(_limits, "MAP_BYTES", 10**9)
    _, sizes, _ = _measure_counting(recordings[kind], monkeypatch, 8)
    expected = [8] * (FRAMES // 8) if kind == "decoded" else [32, 8]  # mapped: four chunks a span
    assert sizes == expected


def test_budget_at_the_sizes_of_real_cameras():
    # 512 x 512 and 1024 x 1024 16-bit frames, a 5792 x 5792 one (the largest
    # frame read, 64 MiB): the chunk asked for is an upper bound.
    assert frames_at_once((512, 512), 2, 64) == 64
    assert frames_at_once((1024, 1024), 2, 64) == 16
    assert frames_at_once((1024, 1024), 2, 4) == 4
    assert frames_at_once((5792, 5792), 2, 64) == 1
    assert frames_mapped((1024, 1024), 2, 16) * 1024 * 1024 * 2 <= _limits.MAP_BYTES
