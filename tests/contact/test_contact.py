"""The contact instant's record and the bracket a fit of the radius law searches t0 in."""

import math

import numpy as np

from dropkin.contact import (
    ContactEstimate,
    bracket_before_first_point,
    default_bracket,
    estimate_contact,
    frames_bracket,
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


def test_frames_bracket_runs_from_the_last_frame_apart_to_the_first_in_contact():
    # Issue 13: the bracket is what the frames prove. Reference: the status
    # vocabulary (dropkin.status: ok, unresolved and at-edge show contact).
    t = np.arange(8) * 1e-5
    apart, unres, ok, lost = "before-contact", "unresolved", "ok", "not-found"
    assert frames_bracket(t, [apart] * 3 + [ok] * 5) == (t[2], t[3])
    # An unresolved frame shows a neck too narrow to measure: in contact.
    assert frames_bracket(t, [apart] * 3 + [unres, unres] + [ok] * 3) == (t[2], t[3])
    assert frames_bracket(t, [apart] * 3 + ["at-edge"] + [ok] * 4) == (t[2], t[3])
    # A frame where nothing was found proves nothing either way.
    assert frames_bracket(t, [apart, apart, lost, lost, unres] + [ok] * 3) == (t[1], t[4])
    # A before-contact frame after a measured neck is a misreading.
    assert frames_bracket(t, [apart, ok, ok, apart, ok, ok, ok, ok]) == (t[0], t[1])
    # A before-contact frame amid unresolved ones moves the bracket's start.
    assert frames_bracket(t, [apart, unres, apart, unres, ok, ok, ok, ok]) == (t[2], t[3])
    # Nothing apart, or nothing in contact: no bracket.
    assert frames_bracket(t, [ok] * 8) is None
    assert frames_bracket(t, [apart] * 8) is None
    # Other evidence of a gap (measure.json) reaches further back, never forward.
    status = [apart] * 4 + [ok] * 4
    assert frames_bracket(t, status, last_apart=t[1]) == (t[1], t[4])
    assert frames_bracket(t, status, last_apart=3.5e-5) == (t[3], t[4])


def test_frames_bracket_holds_the_estimate_of_a_clean_series():
    # The measured instant of estimate_contact lies in the bracket the frames prove.
    t = np.arange(40) * 1e-5
    r = 0.02 * np.sqrt(np.clip(t - 3.05e-5, 0.0, None))
    status = ["before-contact"] * 4 + ["ok"] * 36
    r[:4] = np.nan
    contact = estimate_contact(t, r, np.full(40, 1e-7), status)
    lo, hi = frames_bracket(t, status)
    assert (lo, hi) == (t[3], t[4]) and lo <= contact.time <= hi


def test_default_bracket_and_the_cut_before_the_first_point():
    frames = np.arange(10) * 2e-6
    status = ["before-contact"] * 3 + ["ok"] * 7
    assert default_bracket(frames, status, 5e-6) == (4e-6, 6e-6)  # the frames, not the instant
    # No frame before contact: the frame interval holding the instant.
    assert default_bracket(frames, ["ok"] * 10, 5e-6) == (4e-6, 6e-6)
    assert default_bracket(frames, ["ok"] * 10, -1e-6) == (-3e-6, 0.0)
    # The first measured point after lo is at 5.5 µs: t0 ends 1 % of a frame before it.
    lo, hi = bracket_before_first_point(4e-6, 8e-6, np.array([3e-6, 5.5e-6]), frames)
    assert lo == 4e-6 and math.isclose(hi, 5.5e-6 - 0.02e-6)
    assert bracket_before_first_point(4e-6, 4e-6, np.array([5.5e-6]), frames) == (4e-6, 4e-6)
