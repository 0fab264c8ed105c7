"""The contact instant's record and the bracket a fit of the radius law searches t0 in."""

import math

import numpy as np

from dropkin.contact import (
    BRACKET_SIGMAS,
    ContactEstimate,
    bracket_before_first_point,
    default_bracket,
    estimate_contact,
    measured_bracket,
    redraw_interval,
)


def test_record_round_trips_through_its_file_form():
    contact = ContactEstimate(2.5e-5, 1.5e-6, (2.0e-5, 3.0e-5), 7, "gap closure over 5 frames")
    fields = contact.to_dict()
    assert fields == {
        "contact_time_s": 2.5e-5,
        "contact_time_err_s": 1.5e-6,
        "contact_bracket_s": [2.0e-5, 3.0e-5],
        "contact_method": "gap closure over 5 frames",
    }
    back = ContactEstimate.from_dict(fields)
    assert back == ContactEstimate(2.5e-5, 1.5e-6, (2.0e-5, 3.0e-5), None, contact.method)
    none = ContactEstimate(None, None, None, None, "no frame shows the drops in contact")
    assert not ContactEstimate.from_dict(none.to_dict())
    assert none.to_dict()["contact_bracket_s"] is None


def test_estimate_of_a_clean_series_is_inside_its_bracket_and_serialises():
    # A neck r = 0.02 sqrt(t - 30.5 µs) seen at 100 kfps after 3 frames of gap.
    t = np.arange(40) * 1e-5
    t0 = 3.05e-5
    r = 0.02 * np.sqrt(np.clip(t - t0, 0.0, None))
    status = ["before-contact"] * 4 + ["ok"] * 36
    r[:4] = np.nan
    contact = estimate_contact(t, r, np.full(40, 1e-7), status)
    lo, hi = contact.bracket
    assert lo <= contact.time <= hi and contact.err <= (hi - lo) / math.sqrt(12.0)
    assert ContactEstimate.from_dict(contact.to_dict()).time == contact.time


def test_measured_bracket_is_two_standard_errors_cut_to_the_frames():
    assert BRACKET_SIGMAS == 2.0
    assert measured_bracket(10.0, 1.0, None) == (8.0, 12.0)
    assert measured_bracket(10.0, 1.0, [9.0, 20.0]) == (9.0, 12.0)
    # Unknown, zero or non-finite error: the frames' bracket.
    for err in (None, 0.0, math.nan):
        assert measured_bracket(10.0, err, [9.0, 20.0]) == (9.0, 20.0)
    # A cut that leaves nothing keeps the frames' bracket; nothing at all: None.
    assert measured_bracket(10.0, 1.0, [13.0, 20.0]) == (13.0, 20.0)
    assert measured_bracket(None, None, None) is None


def test_default_bracket_and_the_cut_before_the_first_point():
    frames = np.arange(10) * 2e-6
    assert default_bracket(frames, 5.0, 1.0) == (3.0, 7.0)
    lo, hi = default_bracket(frames, 5e-6, None)  # ± half a frame
    assert math.isclose(lo, 4e-6) and math.isclose(hi, 6e-6)
    # The first measured point after lo is at 5.5 µs: t0 ends 1 % of a frame before it.
    lo, hi = bracket_before_first_point(4e-6, 8e-6, np.array([3e-6, 5.5e-6]), frames)
    assert lo == 4e-6 and math.isclose(hi, 5.5e-6 - 0.02e-6)
    assert bracket_before_first_point(4e-6, 4e-6, np.array([5.5e-6]), frames) == (4e-6, 4e-6)


def test_a_bootstrap_redraws_t0_over_a_free_bracket_only():
    assert redraw_interval((1.0, 2.0)) == (1.0, 2.0)
    assert redraw_interval((1.0, 1.0)) is None
