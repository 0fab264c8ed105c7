"""``dropkin synth --format mp4 | jpeg``: lossy exports, read back by OpenCV.

The frames written are compared with the same recording rendered in memory:
the mean difference stays within a few grey counts (lossy, but the same
pictures), and OpenCV reads back every frame. A bad request is one line
saying why.
"""

import json

import cv2
import numpy as np
from click.testing import CliRunner

from dropkin import synth
from dropkin.cli import main

SMALL = ["--frames", "8", "--size", "64x96", "--pixel-size", "25 um", "--contact-frame", "2.5"]


def _run(*args):
    return CliRunner().invoke(main, ["synth", *args])


def _rendered(truth):
    law = synth.inertial_law(surface_tension=0.07274, density=998.2, drop_radius=1e-3)
    rec = synth.synthesize(
        synth.Coalescence(),
        law,
        camera=synth.Camera(truth["frame_rate_hz"], truth["pixel_size_m"], (64, 96)),
        frames=8,
        contact_frame=2.5,
        seed=0,
    )
    return rec.render()


def test_mp4_export_reads_back_as_the_frames(tmp_path):
    out = tmp_path / "clip.mp4"
    result = _run(str(out), *SMALL)
    assert result.exit_code == 0, result.output
    assert "8-bit mp4" in result.output
    assert (tmp_path / "clip.toml").is_file()
    truth = json.loads((tmp_path / "clip.truth.json").read_text())
    assert truth["export"] == {"format": "mp4", "codec": "mp4v", "bit_rate_bps": None}
    capture = cv2.VideoCapture(str(out))
    frames = []
    while True:
        ok, frame = capture.read()
        if not ok:
            break
        frames.append(frame[..., 0].astype(float))
    capture.release()
    assert len(frames) == 8
    expected = _rendered(truth).astype(float)
    assert np.abs(np.array(frames) - expected).mean() < 4.0


def test_jpeg_export_writes_jpeg_frames(tmp_path):
    out = tmp_path / "jpeg"
    result = _run(str(out), *SMALL, "--format", "jpeg", "--jpeg-quality", "50")
    assert result.exit_code == 0, result.output
    files = sorted(out.glob("frame_*.jpg"))
    assert len(files) == 8 and (out / "experiment.toml").is_file()
    truth = json.loads((out / "truth.json").read_text())
    assert truth["export"] == {"format": "jpeg", "quality": 50}
    got = np.array([cv2.imread(str(f), cv2.IMREAD_GRAYSCALE) for f in files], dtype=float)
    assert np.abs(got - _rendered(truth)).mean() < 4.0


def test_bad_lossy_requests_are_one_line(tmp_path):
    cases = [
        ([str(tmp_path / "a.mp4"), *SMALL, "--bit-depth", "12"], "8-bit frames only"),
        ([str(tmp_path / "b.mp4"), *SMALL[:2], "--size", "63x96"], "even number of rows"),
        ([str(tmp_path / "c.tif"), *SMALL, "--format", "mp4"], "must end in .mp4"),
        ([str(tmp_path / "d.mp4"), *SMALL, "--format", "jpeg"], "is a folder"),
        ([str(tmp_path / "e.mp4"), *SMALL, "--bit-rate", "40"], "no unit"),
    ]
    for args, said in cases:
        result = _run(*args)
        assert result.exit_code != 0, args
        # One line saying why (after click's usage lines for a bad option value).
        last = result.output.strip().splitlines()[-1]
        assert said in last and "Traceback" not in result.output, result.output
