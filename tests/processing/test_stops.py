"""Stop collapsing: standing still with jitter adds ~0 distance afterwards; moving parts are untouched."""
import numpy as np
import pytest
from cleaning_tracks import track_from_xy, xy_of

from editor.geo.distance import geodesic_steps
from editor.processing.stops import StopParams, collapse_stops


def walk_stop_walk(seed=3, jitter_m=3.0, stop_s=300, walk_m=500.0, speed=1.4):
    """Walk east, stand still for ``stop_s`` seconds with jitter, walk north. Moving parts are noise-free."""
    rng = np.random.default_rng(seed)
    n_walk = int(walk_m / speed)
    x1 = np.arange(n_walk) * speed
    y1 = np.zeros(n_walk)
    xs = np.full(stop_s, walk_m) + rng.normal(0, jitter_m, stop_s)
    ys = np.zeros(stop_s) + rng.normal(0, jitter_m, stop_s)
    x2 = np.full(n_walk, walk_m)
    y2 = (np.arange(n_walk) + 1) * speed
    x, y = np.concatenate((x1, xs, x2)), np.concatenate((y1, ys, y2))
    ele = np.full(len(x), 420.0)
    ele[n_walk:n_walk + stop_s] += np.round(rng.normal(0, 2.0, stop_s))  # jittery, 1 m resolution
    t = np.arange(len(x), dtype=float)
    truth_m = walk_m - speed + n_walk * speed  # the two legs, stop adds nothing
    return track_from_xy(x, y, ele, t), n_walk, n_walk + stop_s, truth_m


def test_stop_with_jitter_adds_about_zero_distance_after_collapse():
    track, s0, s1, truth_m = walk_stop_walk()
    prop = collapse_stops(track, StopParams(activity="walk"))
    # Distances measured with pyproj's geodesic (Karney) as an outside reference.
    raw = geodesic_steps(track.points.lat, track.points.lon).sum()
    after = geodesic_steps(prop.points.lat, prop.points.lon).sum()
    assert raw - truth_m > 1000.0  # 300 s of 3 m jitter add over a kilometre
    assert abs(after - truth_m) < 10.0  # measured: within 2 m over 30 seeds
    assert prop.after.distance_m == pytest.approx(after, rel=1e-6)
    assert prop.info["stops"] == 1
    stop_rows = prop.reasons["stop"]
    # the whole stop core is collapsed onto one position
    assert stop_rows.min() <= s0 + 10 and stop_rows.max() >= s1 - 10
    assert len(np.unique(prop.points.lat[stop_rows])) == 1
    # timestamps all kept
    assert np.array_equal(prop.points.time, track.points.time)


def test_moving_parts_are_untouched():
    track, s0, s1, _ = walk_stop_walk(seed=5)
    prop = collapse_stops(track, StopParams(activity="walk"))
    outside = np.r_[0:s0 - 15, s1 + 15:len(track.points)]
    assert not prop.changed[outside].any()
    assert len(prop.removed) == 0 and len(prop.inserted) == 0


def test_collapsed_position_is_near_the_true_stop():
    track, s0, s1, _ = walk_stop_walk(seed=7)
    prop = collapse_stops(track, StopParams(activity="walk"))
    x, y = xy_of(prop.as_track(track))
    row = prop.reasons["stop"][len(prop.reasons["stop"]) // 2]
    # median of 300 points with 3 m scatter: standard error about 0.2 m
    assert np.hypot(x[row] - 500.0, y[row]) < 1.5


def test_stop_elevation_median_removes_standing_climb_and_keep_leaves_it():
    track, s0, s1, _ = walk_stop_walk(seed=9)
    flat = collapse_stops(track, StopParams(activity="walk"))
    assert track.points.ele[s0:s1].std() > 1.0
    assert flat.after.raw_ascent_m < 0.05 * flat.before.raw_ascent_m
    kept = collapse_stops(track, StopParams(activity="walk", elevation="keep"))
    assert np.array_equal(kept.points.ele, track.points.ele)
    with pytest.raises(ValueError):
        collapse_stops(track, StopParams(elevation="mean"))


def test_continuous_walk_with_noise_has_no_stop():
    rng = np.random.default_rng(1)
    n = 1200
    x = np.arange(n) * 1.2 + rng.normal(0, 3, n)
    y = rng.normal(0, 3, n)
    prop = collapse_stops(track_from_xy(x, y, None, np.arange(n, dtype=float)), StopParams(activity="walk"))
    assert prop.is_noop()


def test_short_pause_below_minimum_duration_is_kept():
    track, s0, s1, _ = walk_stop_walk(stop_s=25)
    prop = collapse_stops(track, StopParams(activity="walk", min_duration_s=60))
    assert prop.is_noop()


def test_only_selected_rows_change():
    track, s0, s1, _ = walk_stop_walk(seed=4)
    mid = (s0 + s1) // 2
    rows = np.arange(s0 - 50, mid)
    prop = collapse_stops(track, StopParams(activity="walk"), rows=rows)
    changed = np.flatnonzero(prop.changed)
    assert len(changed) > 50
    assert np.isin(changed, rows).all()


def test_no_timestamps_means_no_change():
    track, *_ = walk_stop_walk()
    track.points.time[:] = np.datetime64("NaT")
    assert collapse_stops(track).is_noop()
