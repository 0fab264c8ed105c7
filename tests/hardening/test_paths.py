"""Paths that are not valid UTF-8 work, or are refused in one line; never a signal.

Issue 17, finding 2: a recording in a folder whose name holds the bytes
``\\xff\\xfe`` (common on shared drives written by other systems) killed
``dropkin measure`` and ``dropkin analyze`` by SIGSEGV inside OpenCV, with
nothing on stderr. The commands run here as real subprocesses, with the
paths passed as bytes, as a shell would pass them.
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

SAMPLES = Path(__file__).resolve().parents[2] / "sample_frames"

pytestmark = pytest.mark.skipif(sys.platform != "linux", reason="bytes in names: POSIX")


def _dropkin(*args) -> subprocess.CompletedProcess:
    argv = [os.fsencode(sys.executable), b"-m", b"dropkin", *map(os.fsencode, args)]
    return subprocess.run(argv, capture_output=True, timeout=180)


def test_a_frames_folder_and_an_output_folder_named_in_bytes_are_analysed(tmp_path):
    root = os.fsencode(tmp_path)
    source = root + b"/shot\xff\xfe"
    out = root + b"/out\xfe"
    shutil.copytree(os.fsencode(SAMPLES / "viscous_pair"), source)
    done = _dropkin(
        "analyze", source, "-o", out, "--bootstrap", "20", "--overlays", "2", "--jobs", "1"
    )
    assert done.returncode == 0, (done.returncode, done.stderr[-2000:])
    assert done.stderr == b""
    assert os.path.isfile(out + b"/fit.json") and os.path.isfile(out + b"/report.html")
    assert len(os.listdir(out + b"/overlays")) == 2
    # measure.json names the input; it reads back as the same name
    with open(out + b"/measure.json", "rb") as handle:
        provenance = json.loads(handle.read().decode("utf-8"))["provenance"]
    assert os.fsencode(provenance["input_absolute"]) == source
    # dropkin fit reads that folder back and writes into it
    refit = _dropkin("fit", out + b"/radius.csv", "-o", out, "--bootstrap", "20")
    assert refit.returncode == 0, refit.stderr[-2000:]


def test_a_video_named_in_bytes_is_refused_in_one_line(tmp_path):
    cv2 = pytest.importorskip("cv2")
    plain = tmp_path / "clip.avi"
    writer = cv2.VideoWriter(str(plain), cv2.VideoWriter_fourcc(*"MJPG"), 30.0, (32, 24), False)
    if not writer.isOpened():
        pytest.skip("this OpenCV build cannot write MJPG to .avi")
    for k in range(4):
        writer.write(np.full((24, 32), 40 * k, np.uint8))
    writer.release()
    named = os.fsencode(tmp_path) + b"/clip\xff.avi"
    os.rename(plain, named)
    done = _dropkin("info", named, "--frame-rate", "1 kHz")
    lines = done.stderr.decode("utf-8", "replace").strip().splitlines()
    assert done.returncode == 1, (done.returncode, done.stderr)
    assert len(lines) == 1 and lines[0].startswith("dropkin: error: ")
    assert "not valid UTF-8" in lines[0]
