"""Gap filling: inserted points follow the truth, carry the marker and an uncertainty; long gaps split."""
import numpy as np
import pytest
from cleaning_tracks import track_from_xy, xy_of

from editor.model.payload import GAP_FILL_MARKER, is_inserted
from editor.processing.gaps import GapParams, fill_gaps, find_gaps, monotone_bridge


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
    prop = fill_gaps(track, GapParams(activity="walk"), inserted_marker=GAP_FILL_MARKER)
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
    prop = fill_gaps(track, GapParams(activity="walk", mark_inserted=False), inserted_marker=GAP_FILL_MARKER)
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


# ------------------------------------------------------------------ elevation across a long gap
def test_bridge_is_the_smoothers_own_curve_when_it_is_already_monotone():
    # With no measurement inside a gap the constant-velocity smoother's estimate is the cubic Hermite
    # curve through the smoothed end states; scipy.interpolate.CubicHermiteSpline is the reference.
    from scipy.interpolate import CubicHermiteSpline

    from editor.processing.kalman import rts_smooth

    rng = np.random.default_rng(0)
    t = np.arange(210.0)
    z = np.r_[100 + 0.2 * t[:60], np.full(90, np.nan), 130 + 0.1 * (t[150:] - 150)] + rng.normal(0, 1, 210)
    res = rts_smooth(t, z, 1.0, 1e-3)
    new = np.isnan(z)
    fill, limited = monotone_bridge(t, res.position, res.velocity, new)
    hermite = CubicHermiteSpline([59.0, 150.0], res.position[[59, 150]], res.velocity[[59, 150]])
    assert limited == 0
    assert np.allclose(fill, res.position[new], atol=1e-9)
    assert np.allclose(fill, hermite(t[new]), atol=1e-9)


def test_bridge_with_noisy_end_speeds_stays_between_the_ends():
    # Fritsch & Carlson (1980): with both end slopes of the secant's sign and alpha^2 + beta^2 <= 9
    # the cubic Hermite piece is monotone, hence within its end values. Random end speeds, including
    # ones against the secant and ones far too steep.
    rng = np.random.default_rng(1)
    for _ in range(200):
        span = rng.uniform(20, 200)
        t = np.r_[0.0, np.linspace(0, span, 50)[1:-1], span]
        value = np.r_[rng.normal(500, 20), np.zeros(48), rng.normal(500, 20)]
        rate = np.r_[rng.normal(0, 2), np.zeros(48), rng.normal(0, 2)]
        new = np.r_[False, np.ones(48, dtype=bool), False]
        fill, _ = monotone_bridge(t, value, rate, new)
        lo, hi = min(value[0], value[-1]), max(value[0], value[-1])
        assert lo - 1e-9 <= fill.min() and fill.max() <= hi + 1e-9
        steps = np.diff(np.r_[value[0], fill, value[-1]])
        assert np.all(steps >= -1e-9) or np.all(steps <= 1e-9)


def test_fill_does_not_invent_climb_across_a_long_gap():
    # Flat truth at 500 m; in the 20 s before a 100 s gap the recorded elevation wanders up by 15 m
    # (the slow wander of GNSS elevation), after it it is flat again. The smoother's bridge carries that
    # upward speed into the gap and overshoots; the fill must stay between the heights at the two ends.
    from editor.processing.kalman import rts_smooth

    rng = np.random.default_rng(4)
    n, gap = 400, (150, 250)
    t = np.arange(n, dtype=float)
    x, y = 1.4 * t, np.zeros(n)
    ele = 500 + np.clip((t - 130) / 20, 0, 1) * 15 * (t < gap[0]) + rng.normal(0, 0.5, n)
    keep = (t < gap[0]) | (t >= gap[1])
    track = track_from_xy(x[keep] + rng.normal(0, 1, keep.sum()), y[keep], np.round(ele[keep]), t[keep])
    prop = fill_gaps(track, GapParams(activity="walk"))
    new = prop.reasons["inserted"]
    assert len(new) == 100 and prop.info["ele_limited"] == 1
    filled = prop.points.ele[new]
    before, after = prop.points.ele[new[0] - 1], prop.points.ele[new[-1] + 1]
    assert min(before, after) - 2.0 <= filled.min() and filled.max() <= max(before, after) + 2.0
    # the constant-velocity bridge on the same context, unlimited, overshoots by far more
    sel = (t >= gap[0] - 60) & (t < gap[1] + 60)
    z = np.where(keep, np.round(ele), np.nan)[sel]
    bridge = rts_smooth(t[sel], z, prop.info["sigma_v_m"] ** 2, prop.info["q_v"]).position[np.isnan(z)]
    assert bridge.max() > max(before, after) + 5.0  # measured: 7 m
    # and the climb the fill adds is no more than the step between the ends
    assert np.abs(np.diff(filled)).sum() <= abs(after - before) + 2.0
