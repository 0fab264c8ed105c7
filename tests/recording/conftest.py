"""Tiny recordings written by independent writers (OpenCV, tifffile) in tmp_path.

Every fixture returns the numpy arrays that were handed to the writer; the
tests read the files back through dropkin and compare with those arrays.
"""

from __future__ import annotations

import numpy as np
import pytest

#: Frames x rows x cols of the small test stacks.
SHAPE = (7, 24, 32)


@pytest.fixture
def rng():
    return np.random.default_rng(20240601)


@pytest.fixture
def frames8(rng):
    """Random 8-bit frames."""
    return rng.integers(0, 256, size=SHAPE, dtype=np.uint8)


@pytest.fixture
def frames12(rng):
    """Random 12-bit camera data (0..4095) in 16-bit words."""
    return rng.integers(0, 4096, size=SHAPE, dtype=np.uint16)


@pytest.fixture(params=["uint8", "uint16"])
def frames(request, frames8, frames12):
    """Both bit depths: 8-bit, and 12-bit values in 16-bit words."""
    return frames8 if request.param == "uint8" else frames12


@pytest.fixture
def smooth8():
    """Smooth 8-bit frames for lossy codecs: a gradient with a bright spot that
    moves 4 columns per frame, so that every frame differs from the others."""
    rows, cols = np.mgrid[:48, :64]
    stack = [
        40 + 2 * cols + 120 * np.exp(-((rows - 24) ** 2 + (cols - 8 - 4 * k) ** 2) / 40)
        for k in range(10)
    ]
    return np.clip(np.rint(stack), 0, 255).astype(np.uint8)


def nearest_written(read: np.ndarray, written: np.ndarray) -> int:
    """Index of the written frame closest (mean absolute difference) to `read`."""
    errors = np.abs(written.astype(float) - read.astype(float)).mean(axis=(1, 2))
    return int(np.argmin(errors))


@pytest.fixture
def nearest():
    return nearest_written
