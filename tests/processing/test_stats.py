"""Totals: distance against the geodesic reference, climb against closed forms."""
import numpy as np
import pytest
from geographiclib.geodesic import Geodesic

from editor.model import PointTable, Track
from editor.processing.stats import StatsParams, climb, segment_totals, track_totals


def track_from(lat, lon, ele=None, t_s=None, starts=(0,)):
    time = None
    if t_s is not None:
        time = np.datetime64("2026-06-01T06:00:00", "ns") + (np.asarray(t_s) * 1e9).astype("timedelta64[ns]")
    pts = PointTable.from_columns(lat, lon, ele=ele, time=time)
    return Track(pts, list(starts), segment_extra=[None] * len(starts))


def test_sine_hill_of_known_amplitude():
    # A profile 100 + 50 sin(x) over one full period climbs exactly 100 m and descends 100 m (closed form).
    x = np.linspace(0, 2 * np.pi, 5001)
    up, down = climb(100 + 50 * np.sin(x), 5.0)
    assert up == pytest.approx(100.0, abs=1e-6) and down == pytest.approx(100.0, abs=1e-6)
    # Three periods of a 20 m-amplitude wave: 3 x 40 m each way (the first quarter rises only 20 m)
    x = np.linspace(0, 6 * np.pi, 30001)
    up, down = climb(20 * np.sin(x), 5.0)
    assert up == pytest.approx(20 + 2 * 40 + 20, abs=1e-6)
    assert down == pytest.approx(3 * 40, abs=1e-6)


def test_white_noise_raw_ascent_follows_closed_form_and_threshold_removes_it():
    # tests/reference/check-values.md: summing every rise of truth + N(0, sigma^2) noise adds (N-1) sigma / sqrt(pi).
    rng = np.random.default_rng(11)
    n, sigma, runs = 1001, 1.0, 800
    raw = np.array([climb(rng.normal(0, sigma, n), 0.0)[0] for _ in range(runs)])
    expected = (n - 1) * sigma / np.sqrt(np.pi)
    assert raw.mean() == pytest.approx(expected, rel=0.01)
    thresholded = np.array([climb(rng.normal(0, sigma, n), 5.0)[0] for _ in range(100)])
    assert thresholded.mean() < 0.05 * expected


def test_climb_threshold_ignores_one_metre_steps():
    # Elevation quantised to 1 m flickering between two values (common practice for logger data).
    e = np.array([200, 201, 200, 201, 200, 201, 201, 200] * 50, dtype=float)
    assert climb(e, 5.0) == (0.0, 0.0)
    assert climb(e, 0.0)[0] == pytest.approx(150.0)


def test_slow_start_counts_from_the_lowest_point():
    e = np.array([100, 97, 96, 99, 104, 110, 120], dtype=float)
    assert climb(e, 5.0) == (24.0, 0.0)


def test_nan_elevations_are_skipped():
    e = np.array([10, np.nan, 30, np.nan, 50], dtype=float)
    assert climb(e, 5.0) == (40.0, 0.0)


def test_distance_matches_geodesic_on_a_long_track():
    # A 1,000 km meandering track; reference: geographiclib's geodesic per step (Karney, PyPI).
    rng = np.random.default_rng(2)
    n = 20_000
    heading = np.cumsum(rng.normal(0, 0.05, n))
    step_deg = 50 / 111_000 * rng.uniform(0.5, 1.5, n)
    lat = 44 + np.cumsum(np.cos(heading) * step_deg)
    lon = 5 + np.cumsum(np.sin(heading) * step_deg / np.cos(np.radians(44)))
    totals = track_totals(track_from(lat, lon))
    ref = sum(Geodesic.WGS84.Inverse(lat[i], lon[i], lat[i + 1], lon[i + 1])["s12"] for i in range(n - 1))
    assert ref > 900_000
    assert totals.distance_m == pytest.approx(ref, rel=1e-5)


def test_no_distance_between_segments_and_per_segment_totals():
    lat = np.array([45.0, 45.001, 46.0, 46.001])
    lon = np.array([7.0, 7.0, 7.0, 7.0])
    track = track_from(lat, lon, t_s=[0, 10, 20, 30], starts=(0, 2))
    parts = segment_totals(track)
    assert len(parts) == 2
    total = track_totals(track)
    assert total.distance_m == pytest.approx(parts[0].distance_m + parts[1].distance_m)
    assert total.distance_m < 300  # the 111 km jump between segments is not counted
    assert total.segments == 2 and total.points == 4
    assert total.duration_s == pytest.approx(20.0)  # 10 s inside each segment


def test_moving_time_and_max_speed():
    # 100 s at 5 m/s north, 60 s standing still, 1 s steps
    v = 5.0
    y = np.concatenate([np.arange(101) * v, np.full(60, 100 * v)])
    lat = 45 + y / 111_132.0
    t = np.arange(len(y), dtype=float)
    totals = track_totals(track_from(lat, np.full(len(y), 7.0), t_s=t), StatsParams(moving_speed_mps=0.5))
    assert totals.moving_time_s == pytest.approx(100.0)
    assert totals.duration_s == pytest.approx(len(y) - 1)
    assert totals.max_speed_mps == pytest.approx(5.0, rel=3e-3)


def test_no_times_gives_nan_time_totals():
    totals = track_totals(track_from([45.0, 45.001], [7.0, 7.0]))
    assert np.isnan(totals.duration_s) and np.isnan(totals.max_speed_mps)
    assert totals.distance_m > 100


def test_empty_and_single_point_tracks():
    assert track_totals(track_from([], [])).distance_m == 0
    single = track_totals(track_from([45.0], [7.0], ele=[100.0], t_s=[0]))
    assert single.points == 1 and single.distance_m == 0 and single.ascent_m == 0
