"""The error hierarchy: built-in bases, one-line messages, pickling.

Pickling matters because a batch sends errors from worker processes back to
the parent (the standard library's ``multiprocessing`` pickles them).
"""

import pickle

import pytest

from dropkin import errors

ALL = [
    errors.DropkinError,
    errors.ExperimentError,
    errors.QuantityError,
    errors.RecordingError,
    errors.MeasurementError,
    errors.FitError,
]


@pytest.mark.parametrize("cls", ALL)
def test_round_trips_through_pickle_with_all_fields(cls):
    err = cls(
        "is truncated",
        path="runs/a.tif",
        key="recording.frame_rate",
        value="-3 Hz",
        expected="a value above 0 Hz",
        frame=12,
    )
    back = pickle.loads(pickle.dumps(err))
    assert type(back) is cls
    assert str(back) == str(err)
    for name in ("message", "path", "key", "value", "expected", "frame"):
        assert getattr(back, name) == getattr(err, name)


@pytest.mark.parametrize(
    ("cls", "builtin"),
    [
        (errors.ExperimentError, ValueError),
        (errors.QuantityError, ValueError),
        (errors.RecordingError, OSError),
        (errors.MeasurementError, RuntimeError),
        (errors.FitError, ValueError),
    ],
)
def test_each_error_is_also_the_fitting_builtin(cls, builtin):
    assert issubclass(cls, errors.DropkinError)
    assert issubclass(cls, builtin)


def test_message_names_file_frame_key_value_and_what_is_allowed():
    err = errors.RecordingError("differs in size", path="shots/f_0007.png", frame=7)
    assert str(err) == "shots/f_0007.png: frame 7: differs in size"
    assert err.filename == "shots/f_0007.png"
    err = errors.ExperimentError(
        "must be positive",
        path="e.toml",
        key="recording.pixel_size",
        value="0 um",
        expected="a value above 0 m",
    )
    assert str(err) == (
        "e.toml: recording.pixel_size = '0 um': must be positive (expected a value above 0 m)"
    )


def test_message_is_always_one_line():
    err = errors.ExperimentError("bad\nvalue", key="liquid.name", value="a\nb")
    assert "\n" not in str(err)
