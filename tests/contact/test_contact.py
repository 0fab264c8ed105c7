"""The contact instant's record and the bracket a fit of the radius law searches t0 in."""

import math

import numpy as np
import pytest

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
        "contact_signals": {},
        "contact_disagreement": None,
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


def _closing_then_neck(t0_frame, *, leak, speed=2.0, growth=0.6, frames=40):
    """A synthetic fixture in pixels and frames (invented): a gap closing at
    `speed` px/frame onto contact at `t0_frame`, after which blur still
    carries `leak` px of light onto the axis beside a neck narrower than the
    blur (frames ``unresolved``), and from r = 12 px a measured neck growing
    linearly at `growth` px/frame (``ok``)."""
    t = np.arange(frames, dtype=np.float64)
    since = t - t0_frame
    gap = np.where(since < 0, -speed * since + leak, leak * np.exp(-np.maximum(since, 0) / 20))
    r = np.where(since > 0, growth * since, np.nan)
    status = np.where(since < -0.8, "before-contact", np.where(r >= 12.0, "ok", "unresolved"))
    r[status != "ok"] = np.nan
    gap[status == "ok"] = 0.01 * np.cos(t[status == "ok"])  # no light beside a wide neck
    return t, r, np.full(frames, 0.1), list(status), gap


def test_a_neck_below_the_blur_is_not_a_gap():
    # Frames just after contact read a small gap (light carried beside a
    # sub-pixel neck, ~sigma^2/R: 0.1-0.25 px on dropkin.synth recordings with
    # sigma = 2-3 px); above the fixed 0.1 px floor they used to count as open
    # and clamp t0 up to 13 frames late.
    for leak in (0.0, 0.05, 0.25, 0.6):
        t, r, err, status, gap = _closing_then_neck(4.85, leak=leak)
        contact = estimate_contact(t, r, err, status, gap=gap, early_radius=20.0, gap_floor=0.1)
        assert abs(contact.time - 4.85) < 0.1, (leak, contact)
        assert contact.bracket[0] <= 4.85 <= contact.bracket[1]
        light = contact.signals["light_on_axis"]
        assert light["last_open_s"] == 4.0 and light["first_closed_s"] == 5.0
        assert contact.to_dict()["contact_signals"]["gap_closure"]["time_s"] == pytest.approx(
            4.85, abs=0.1
        )


def test_the_statuses_give_way_to_the_light_on_the_axis():
    # A frame called before-contact whose gap reads at the level of contact
    # shows a neck below the blur: the bracket starts before it.
    t, r, err, status, gap = _closing_then_neck(4.5, leak=0.3)
    status[5] = "before-contact"
    contact = estimate_contact(t, r, err, status, gap=gap, early_radius=20.0, gap_floor=0.1)
    assert contact.bracket[0] == 4.0 and abs(contact.time - 4.5) < 0.1


def test_disagreeing_signals_are_reported_and_a_mirror_meeting_is_not_contact():
    # The gap reaches zero 2.5 frames before the radius starts to grow (as
    # when the drop meets its mirror image on a reflective plate before it
    # touches the plate): the disagreement is said, and with a mirror the
    # radius, which only contact makes grow, is kept.
    t = np.arange(40, dtype=np.float64)
    t_touch = 7.3
    gap = np.where(t < t_touch - 2.5, 0.5 * (t_touch - 2.5 - t), 0.0)
    r = np.where(t > t_touch, 3.0 * np.sqrt(np.maximum(t - t_touch, 0)), np.nan)
    status = ["before-contact"] * 4 + ["unresolved"] * 4 + ["ok"] * 32
    r[:8] = np.nan
    err = np.full(40, 0.05)
    for mirror, kept in ((True, "radius extrapolation"), (False, "gap closure")):
        contact = estimate_contact(t, r, err, status, gap=gap, early_radius=20.0, mirror=mirror)
        assert contact.disagreement and f"the {kept} was kept" in contact.disagreement
        assert contact.to_dict()["contact_disagreement"] == contact.disagreement
        signals = contact.signals
        assert signals["gap_closure"]["time_s"] == pytest.approx(t_touch - 2.5, abs=0.2)
        assert signals["radius_extrapolation"]["time_s"] == pytest.approx(t_touch, abs=0.3)
    assert abs(contact.time - (t_touch - 2.5)) < 0.2  # without a mirror: the gap
    mirrored = estimate_contact(t, r, err, status, gap=gap, early_radius=20.0, mirror=True)
    assert abs(mirrored.time - t_touch) < 0.3
