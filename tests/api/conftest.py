"""The shipped sample the API tests share, and its analysis through the API."""

from __future__ import annotations

from pathlib import Path

import pytest

import dropkin

ROOT = Path(__file__).resolve().parents[2]
SAMPLE = ROOT / "sample_frames" / "fast_pair.tif"
# The notebook walk-through's options (examples/notebook_walkthrough.py).
OPTIONS = {
    "frame_rate": "60 kHz",
    "pixel_size": "20 µm/px",
    "liquid": "water",
    "temperature": "20 degC",
}


@pytest.fixture(scope="session")
def api_result():
    """``dropkin.analyze`` of the sample with :data:`OPTIONS`, in memory."""
    return dropkin.analyze(SAMPLE, **OPTIONS)
