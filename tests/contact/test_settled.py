"""A gap that has closed for good stays closed, and a held reading is no
reading (dropkin.contact._settled).

Invented gap series (synthetic fixtures): a closing gap, then the readings of
a gap in contact (noise about zero), with a key frame's artefact (a reading
of a few tenths of a pixel) after the closure.
"""

import numpy as np
import pytest

from dropkin.contact import estimate_contact
from dropkin.contact._settled import fresh_gap, settled_gap


def test_a_reading_after_a_lasting_closure_is_held_at_the_floor():
    gap = [2.0, 1.5, 1.0, 0.5, 0.02, -0.01, 0.0, 0.03, 0.41, -0.02, np.nan, 0.2]
    out = settled_gap(gap, floor=0.1)
    np.testing.assert_array_equal(out[:8], gap[:8])  # up to the closure, and the noise
    assert out[8] == 0.1 and out[9] == -0.02 and np.isnan(out[10]) and out[11] == 0.1
    assert gap[8] == 0.41  # the input is not changed


def test_a_short_dip_before_the_closure_is_not_one():
    # A gap near the floor that reads closed in two frames, then open again,
    # has not closed: with run=3 nothing changes.
    gap = [1.0, 0.5, 0.05, 0.08, 0.3, 0.2, 0.0, 0.0, 0.0]
    np.testing.assert_array_equal(settled_gap(gap, floor=0.1), gap)
    # With run=2 the dip is a closure and the later readings are held.
    assert settled_gap(gap, floor=0.1, run=2)[4:6].tolist() == [0.1, 0.1]


def test_no_closure_and_short_series_are_unchanged():
    np.testing.assert_array_equal(settled_gap([3.0, 2.0, 1.0], floor=0.1), [3.0, 2.0, 1.0])
    np.testing.assert_array_equal(settled_gap([0.0], floor=0.1), [0.0])
    np.testing.assert_array_equal(settled_gap([], floor=0.1), [])
    with pytest.raises(ValueError):
        settled_gap([1.0], floor=0.1, run=0)


def test_a_key_frame_artefact_does_not_move_the_contact_late():
    # Drops closing at 0.5 px per frame touch at t = 4.6; the radius grows as
    # 2.5 sqrt(t - 4.6) px, ok from 15 px (r ~ t^(1/2), the inertial law: Phys. Rev. Lett. 95,
    # 164503 (2005)). Frame 23 reads an open gap of 0.41 px, as an MPEG-4 key
    # frame did in a compressed export of such a recording.
    t = np.arange(60.0)
    gap = np.clip(0.5 * (4.6 - t), 0.0, None)
    gap[23] = 0.41
    radius = np.where(t > 4.6, 2.5 * np.sqrt(np.clip(t - 4.6, 0.0, None)), np.nan)
    status = ["before-contact" if g > 0.6 else "unresolved" for g in gap]
    status = [s if r < 15 or np.isnan(r) else "ok" for s, r in zip(status, radius, strict=True)]
    status[23] = "unresolved"
    err = np.full(60, 0.1)
    args = (t, radius, err, status)
    raw = estimate_contact(*args, gap=gap, early_radius=30.0, gap_floor=0.1)
    held = estimate_contact(*args, gap=settled_gap(gap, 0.1), early_radius=30.0, gap_floor=0.1)
    # The gap is now fitted as a closing line meeting the level of contact
    # (dropkin.contact._gap), which reads a lone later open frame as no gap:
    # the raw readings give the instant too (before that fit, raw.time was
    # past frame 23, the artefact taken as a gap). The held readings must not
    # do worse.
    assert abs(raw.time - 4.6) < 0.5
    assert abs(held.time - 4.6) < 0.5 and held.bracket[0] <= 4.6


def test_an_open_reading_that_repeats_the_one_before_is_dropped():
    # A block held by an inter-frame codec: the gap read 0.421 px in the
    # frame after contact and in the ten frames after it, the last a few
    # millionths of a pixel off (another block on the axis changed).
    gap = [1.242, 0.618, 0.474, *[0.421] * 10, 0.421007, -0.003, -0.003, 0.002]
    out = fresh_gap(gap, floor=0.1)
    np.testing.assert_array_equal(out[:4], gap[:4])
    assert np.isnan(out[4:14]).all()
    np.testing.assert_array_equal(out[14:], gap[14:])  # closed readings stay
    # Readings a hundredth of a pixel apart (noise) are all kept.
    noisy = [1.0, 0.5, 0.51, 0.2]
    np.testing.assert_array_equal(fresh_gap(noisy, floor=0.1), noisy)
    assert fresh_gap([], floor=0.1).size == 0
