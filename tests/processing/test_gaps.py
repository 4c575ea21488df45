"""Gap filling: inserted points follow the truth, carry the marker and an uncertainty; long gaps split."""
import numpy as np
import pytest
from cleaning_tracks import track_from_xy, xy_of

from editor.io.payload import is_inserted
from editor.processing.gaps import GapParams, fill_gaps, find_gaps


def walk_with_gap(gap=(300, 330), n=800, sigma=1.0, seed=0, radius=None, speed=2.0, ele=True):
    """An invented walk at ``speed`` m/s (straight, or on a circle of ``radius``) missing rows ``gap``."""
    rng = np.random.default_rng(seed)
    t = np.arange(n, dtype=float)
    s = speed * t
    if radius is None:
        tx, ty = s, np.zeros(n)
    else:
        tx, ty = radius * np.sin(s / radius), radius * (1 - np.cos(s / radius))
    te = 400 + 0.05 * s  # a steady 5 % climb
    keep = np.ones(n, dtype=bool)
    keep[gap[0]:gap[1]] = False
    x, y = tx + rng.normal(0, sigma, n), ty + rng.normal(0, sigma, n)
    e = te + rng.normal(0, 0.5, n) if ele else None
    track = track_from_xy(x[keep], y[keep], None if e is None else e[keep], t[keep])
    return track, (t, tx, ty, te), keep


def test_find_gaps_uses_the_median_interval_and_the_minimum():
    t = np.r_[np.arange(0, 100, 1.0), np.arange(130, 200, 1.0), np.arange(206, 220, 1.0)]
    rows, median = find_gaps(t, 5.0, 10.0)
    assert median == 1.0
    assert rows.tolist() == [99]  # the 6 s step is over 5 x median but under the 10 s minimum


def test_a_30_second_gap_is_filled_at_the_nominal_interval_near_the_truth():
    track, (t, tx, ty, te), keep = walk_with_gap()
    prop = fill_gaps(track, GapParams(activity="walk"))
    new = prop.reasons["inserted"]
    assert len(new) == 30 and prop.info["filled"] == 1
    assert prop.reasons["gap"].tolist() == [299]
    new_t = (prop.points.time[new] - track.points.time[0]) / np.timedelta64(1, "s")
    assert np.array_equal(new_t, np.arange(300, 330, dtype=float))  # whole seconds, like the logger
    x, y = xy_of(prop.as_track(track))
    err = np.hypot(x[new] - tx[300:330], y[new] - ty[300:330])
    assert err.max() < 3.0
    assert np.abs(prop.points.ele[new] - te[300:330]).max() < 2.0
    # every inserted point is marked in our own extension namespace, nothing else is
    assert all(is_inserted(p) for p in prop.points.extra[new])
    assert not any(is_inserted(p) for p in np.delete(prop.points.extra, new))
    assert prop.after.points == prop.before.points + 30


def test_uncertainty_is_largest_in_the_middle_and_covers_the_error():
    track, (t, tx, ty, te), keep = walk_with_gap(gap=(300, 340), radius=100.0, sigma=2.0, seed=3)
    prop = fill_gaps(track, GapParams(activity="walk"))
    new = prop.reasons["inserted"]
    s = prop.sigma_h_m[new]
    assert np.isfinite(s).all() and np.isnan(np.delete(prop.sigma_h_m, new)).all()
    assert s[len(s) // 2] > 1.5 * s[0] and s[len(s) // 2] > 1.5 * s[-1]
    assert np.isfinite(prop.sigma_v_m[new]).all()
    # sigma is per horizontal axis: the radial error of a 2-D normal stays within 3.5 sigma
    # with probability 1 - exp(-3.5^2 / 2) = 99.8 %
    x, y = xy_of(prop.as_track(track))
    err = np.hypot(x[new] - tx[300:340], y[new] - ty[300:340])
    assert np.all(err < 3.5 * s)


def test_the_fill_follows_a_curve_better_than_a_straight_chord():
    # On a 100 m circle a 40 s gap at 2 m/s cuts off an arc whose chord sags by ~7.8 m; the
    # constant-velocity smoother carries the heading into the gap and follows the arc.
    track, (t, tx, ty, te), keep = walk_with_gap(gap=(300, 340), radius=100.0, sigma=1.0, seed=2)
    prop = fill_gaps(track, GapParams(activity="walk"))
    new = prop.reasons["inserted"]
    x, y = xy_of(prop.as_track(track))
    err_fill = np.hypot(x[new] - tx[300:340], y[new] - ty[300:340]).max()
    frac = (np.arange(300, 340) - 299) / 41.0
    cx = tx[299] + frac * (tx[340] - tx[299])
    cy = ty[299] + frac * (ty[340] - ty[299])
    err_chord = np.hypot(cx - tx[300:340], cy - ty[300:340]).max()
    assert err_chord > 7.0
    assert err_fill < 0.5 * err_chord


def test_long_gap_left_alone_or_split():
    track, *_ = walk_with_gap(gap=(300, 500))
    left = fill_gaps(track, GapParams(activity="walk", max_gap_s=120))
    assert left.is_noop() and left.reasons["unfilled"].tolist() == [299]
    split = fill_gaps(track, GapParams(activity="walk", max_gap_s=120, long_gap="split"))
    assert split.segment_starts.tolist() == [0, 300]
    assert len(split.segment_extra) == 2
    assert split.after.segments == 2
    # no distance is counted across the split: the 400 m jump is gone from the total
    assert split.before.distance_m - split.after.distance_m == pytest.approx(400, abs=10)
    with pytest.raises(ValueError):
        fill_gaps(track, GapParams(long_gap="bridge"))


def test_marker_can_be_switched_off():
    track, *_ = walk_with_gap()
    prop = fill_gaps(track, GapParams(activity="walk", mark_inserted=False))
    assert all(p is None for p in prop.points.extra[prop.reasons["inserted"]])


def test_gaps_outside_the_selection_are_not_filled():
    track, *_ = walk_with_gap()
    assert fill_gaps(track, GapParams(activity="walk"), rows=np.arange(0, 250)).is_noop()
    assert fill_gaps(track, GapParams(activity="walk"), rows=np.arange(250, 350)).info["inserted"] == 30


def test_two_segments_and_no_elevation():
    track, *_ = walk_with_gap(ele=False)
    two = track_from_xy(*xy_of(track), None, track.points.time_s() - track.points.time_s()[0], starts=(0, 600))
    prop = fill_gaps(two, GapParams(activity="walk"))
    assert prop.info["inserted"] == 30
    assert np.isnan(prop.points.ele).all()
    assert prop.segment_starts.tolist() == [0, 630]
    assert np.array_equal(prop.source_rows[prop.source_rows >= 0], np.arange(len(two.points)))
