"""A recording as the array of its frames: shape, numpy conversion, indexing, dask.

The reference is the stack tifffile wrote (and numpy's own indexing of it):
whatever dropkin returns must be what numpy returns on the same array.
"""

from __future__ import annotations

import pickle

import numpy as np
import pytest
import tifffile

from dropkin.recording import open_recording


@pytest.fixture
def stack(tmp_path, frames):
    path = tmp_path / "stack.tif"
    tifffile.imwrite(path, frames, photometric="minisblack")
    with open_recording(path, frame_rate=2000.0) as rec:
        yield rec, tifffile.imread(path)


def test_shape_ndim_dtype_and_asarray_are_those_of_the_stack(stack):
    rec, ref = stack
    assert (rec.shape, rec.ndim, rec.size, rec.dtype) == (ref.shape, 3, ref.size, ref.dtype)
    assert rec.frame_shape == ref.shape[1:]
    got = np.asarray(rec)
    np.testing.assert_array_equal(got, ref)
    assert got.dtype == ref.dtype  # 12-bit values in 16-bit words stay as they are
    assert np.asarray(rec, dtype=np.float64).dtype == np.float64


@pytest.mark.parametrize(
    "key",
    [
        (2,),
        (2, 5),
        (-1, slice(3, 9), slice(None, None, 2)),
        (slice(1, 6, 2), 4),
        (slice(None), slice(2, 10), 7),
        (Ellipsis, 3),
        (slice(5, 1, -2), slice(0, 4)),
        (np.array([0, 6, 3]), slice(1, 3)),
        (np.array([[1, 2], [0, 0]]), 3),
        (slice(0, 3), np.array([1, 4]), np.array([0, 2])),
        (np.array([True, False] * 3 + [True]),),
        (None, 1),
    ],
    ids=repr,
)
def test_tuple_indexing_is_numpys(stack, key):
    rec, ref = stack
    np.testing.assert_array_equal(rec[key], ref[key])


def test_a_slice_stays_lazy_and_its_array_is_the_slice_of_the_stack(stack):
    rec, ref = stack
    part = rec[2:6]
    assert type(part) is type(rec) and part.shape == (4, *ref.shape[1:])
    np.testing.assert_array_equal(np.asarray(part), ref[2:6])


@pytest.mark.parametrize("scheduler", ["synchronous", "threads"])
def test_the_dask_view_computes_to_the_stack(stack, scheduler):
    rec, ref = stack
    view = rec.to_dask(chunk_size=3)
    assert view.shape == ref.shape and view.dtype == ref.dtype
    assert view.chunks[0] == (3, 3, 1)
    np.testing.assert_array_equal(view.compute(scheduler=scheduler), ref)
    # a reduction over frames reads each chunk once, per chunk
    np.testing.assert_allclose(view.mean(axis=0).compute(scheduler=scheduler), ref.mean(axis=0))


def test_the_dask_view_survives_pickling(stack):
    rec, ref = stack
    view = pickle.loads(pickle.dumps(rec.to_dask(chunk_size=4)))
    np.testing.assert_array_equal(view[1:5, 2].compute(scheduler="synchronous"), ref[1:5, 2])


def test_a_bad_chunk_size_is_refused(stack):
    rec, _ = stack
    with pytest.raises(ValueError, match="chunk_size must be at least 1"):
        rec.to_dask(chunk_size=0)
