"""Track smoothing (editor.processing.smoothing): proposals, segments, selections, fallbacks.

Outside references: simulations drawn from the model itself with known q and noise,
the spurious-ascent formula (N - 1) sigma / sqrt(pi) for white elevation noise
(check-values.md, derived: each difference is N(0, 2 sigma^2), E[max(d, 0)] = sigma/sqrt(pi)),
and pyproj through editor.geo.LocalProjection for the metric frame.
"""
from __future__ import annotations

import numpy as np
import pytest

from editor.geo import LocalProjection
from editor.model import Document, PointTable, Track
from editor.processing import kalman as K
from editor.processing import smoothing as S

ORIGIN = LocalProjection(46.52, 7.46)
START = np.datetime64("2024-05-04T07:30:00", "ns")


def simulate(n, q=0.05, q_v=5e-4, sigma=4.0, sigma_v=3.0, seed=1):
    """Constant-velocity truth drawn from the model (irregular 1 s steps), plus white noise."""
    rng = np.random.default_rng(seed)
    dt = rng.uniform(0.9, 1.1, n - 1)
    t = np.concatenate(([0.0], np.cumsum(dt)))
    truth = np.zeros((n, 3))
    vel = np.zeros((n, 3))
    vel[0] = (3.0, 1.0, 0.1)
    spectral = np.array([q, q, q_v])
    for i, h in enumerate(dt):
        chol = np.linalg.cholesky(np.array([[h ** 3 / 3, h ** 2 / 2], [h ** 2 / 2, h]]))
        w = (chol @ rng.normal(size=(2, 3))) * np.sqrt(spectral)
        truth[i + 1] = truth[i] + h * vel[i] + w[0]
        vel[i + 1] = vel[i] + w[1]
    noisy = truth + rng.normal(size=(n, 3)) * (sigma, sigma, sigma_v)
    lat, lon = ORIGIN.to_latlon(noisy[:, 0], noisy[:, 1])
    times = START + (t * 1e9).astype("timedelta64[ns]")
    points = PointTable.from_columns(lat, lon, 800.0 + noisy[:, 2], times)
    return Track(points=points), truth, t


def metric(track_or_points):
    p = getattr(track_or_points, "points", track_or_points)
    return ORIGIN.to_xy(p.lat, p.lon)


def test_strength_mapping_is_monotone_log_scale_with_exact_inverse():
    for axis in ("horizontal", "vertical"):
        s = np.linspace(10, 100, 10)
        q = np.array([S.strength_to_q(v, axis) for v in s])
        assert np.all(np.diff(q) < 0)
        assert np.allclose(np.diff(np.log10(q)), np.diff(np.log10(q))[0])
        assert all(S.q_to_strength(S.strength_to_q(v, axis), axis) == pytest.approx(v) for v in s)
        # 0 is the limit q -> infinity (the recording itself), and maps back to 0
        assert S.strength_to_q(0, axis) == np.inf and S.q_to_strength(np.inf, axis) == 0
        # 100 is the smoothest model the automatic estimate may pick (the end of its search range)
        assert np.log10(S.strength_to_q(100, axis)) == pytest.approx(S.LOG10_Q_RANGE[axis][1])
    assert S.strength_to_q(1e-9, "horizontal") == pytest.approx(1e6)
    assert S.strength_to_q(100, "vertical") == pytest.approx(1e-8)
    with pytest.raises(ValueError, match="between 0 and 100"):
        S.strength_to_q(101, "horizontal")


DEMO = __import__("pathlib").Path(__file__).resolve().parents[2] / "demo_tracks"


def test_strength_zero_keeps_the_recording_exactly_and_one_barely_moves_it():
    from editor.io.gpx import read_gpx
    from editor.processing.stats import track_totals

    track = read_gpx(DEMO / "demo_ride.gpx").tracks[0]
    prop = S.smooth(track, S.SmoothParams(horizontal_strength=0, vertical_strength=0))
    assert prop.is_noop() and not prop.changed.any()
    assert prop.points.equals(track.points)
    assert prop.after == prop.before == track_totals(track)
    assert prop.info["horizontal_strength"] == 0 and prop.info["vertical_strength"] == 0
    # one axis at 0 leaves that axis bit for bit while the other is smoothed
    elevation_only = S.smooth(track, S.SmoothParams(horizontal_strength=0, vertical_strength=60))
    assert np.array_equal(elevation_only.points.lat, track.points.lat)
    assert not np.array_equal(elevation_only.points.ele, track.points.ele, equal_nan=True)
    # no jump just above 0: strength 1 moves a typical fix by far less than the 5 m scatter
    # (median under 1 cm; fixes sharing a timestamp are averaged by the model, hence the max)
    near = S.smooth(track, S.SmoothParams(horizontal_strength=1, vertical_strength=1))
    x0, y0 = metric(track)
    x1, y1 = metric(near.points)
    moved = np.hypot(x1 - x0, y1 - y0)
    assert np.median(moved) < 0.01 and abs(near.after.distance_m - near.before.distance_m) < 0.003 * \
        near.before.distance_m


def test_automatic_smoothing_recovers_q_and_reduces_error():
    track, truth, _ = simulate(2500, q=0.05, sigma=4.0, seed=3)
    prop = S.smooth(track, S.SmoothParams(horizontal_sigma_m=4.0, vertical_sigma_m=3.0))
    assert 0.05 / 3 < prop.info["q_h"] < 0.05 * 3
    assert 5e-4 / 3 < prop.info["q_v"] < 5e-4 * 3
    x0, y0 = metric(track)
    x1, y1 = metric(prop.points)
    raw = np.sqrt(np.mean((x0 - truth[:, 0]) ** 2 + (y0 - truth[:, 1]) ** 2))
    smoothed = np.sqrt(np.mean((x1 - truth[:, 0]) ** 2 + (y1 - truth[:, 1]) ** 2))
    assert raw / smoothed >= 2.0
    ele_raw = np.sqrt(np.mean((track.points.ele - 800 - truth[:, 2]) ** 2))
    ele_smooth = np.sqrt(np.mean((prop.points.ele - 800 - truth[:, 2]) ** 2))
    assert ele_raw / ele_smooth >= 2.0
    # proposal contract
    assert prop.tool == "smooth" and prop.label == "Smooth track"
    assert prop.changed.all() and len(prop.removed) == 0 and len(prop.inserted) == 0
    assert prop.sigma_h_m.shape == (2500,) and np.all(prop.sigma_h_m < 4.0)
    assert prop.sigma_v_m.shape == (2500,) and np.all(prop.sigma_v_m < 3.0)
    speed = prop.info["speed_mps"]
    assert speed.shape == (2500,) and np.isfinite(speed).all()
    assert prop.info["max_speed_smoothed_mps"] == pytest.approx(speed.max())
    assert "not" in prop.info["caution"] and "navigation" in prop.info["caution"]
    assert prop.after.distance_m < prop.before.distance_m


def test_estimated_noise_recovers_sigma():
    track, _, _ = simulate(3000, sigma=3.0, sigma_v=1.0, seed=5)
    est = S.estimate_strength(track, params=S.SmoothParams(estimate_noise=True))
    assert np.sqrt(est.r_h) == pytest.approx(3.0, rel=0.15)
    assert np.sqrt(est.r_v) == pytest.approx(1.0, rel=0.15)


def test_white_elevation_noise_ascent_removed():
    # A flat profile plus white noise: summing every rise adds (N - 1) sigma / sqrt(pi) of
    # ascent (check-values.md, "Climb from noisy elevation").
    n, sigma = 4001, 2.0
    rng = np.random.default_rng(12)
    x = np.arange(n) * 4.0
    lat, lon = ORIGIN.to_latlon(x, np.zeros(n))
    times = START + (np.arange(n) * 1_000_000_000).astype("timedelta64[ns]")
    ele = 300.0 + rng.normal(size=n) * sigma
    track = Track(points=PointTable.from_columns(lat, lon, ele, times))
    prop = S.smooth(track, S.SmoothParams(vertical_sigma_m=sigma))
    expected = (n - 1) * sigma / np.sqrt(np.pi)
    assert prop.before.raw_ascent_m == pytest.approx(expected, rel=0.05)
    assert prop.after.raw_ascent_m < 0.1 * prop.before.raw_ascent_m


def test_segments_are_smoothed_separately():
    first, _, _ = simulate(300, seed=7)
    second, _, _ = simulate(200, seed=8)
    both = PointTable.concat([first.points, second.points])
    params = S.SmoothParams(horizontal_strength=45, vertical_strength=45)
    two = Track(points=both, segment_starts=[0, 300], segment_extra=[None, None])
    one = Track(points=both.copy())
    together = S.smooth(two, params)
    # each segment alone gives the same result (the projection centre differs: < 1e-9 degrees)
    for track, part in ((first, slice(0, 300)), (second, slice(300, 500))):
        alone = S.smooth(track, params)
        assert np.allclose(alone.points.lat, together.points.lat[part], atol=1e-9, rtol=0)
        assert np.allclose(alone.points.ele, together.points.ele[part], atol=1e-6, rtol=0)
    merged = S.smooth(one, params)
    assert not np.allclose(merged.points.lat[295:305], together.points.lat[295:305], atol=1e-9, rtol=0)


def test_selection_changes_only_selected_rows_with_whole_segment_context():
    track, _, _ = simulate(600, seed=9)
    params = S.SmoothParams(horizontal_strength=50, vertical_strength=50)
    full = S.smooth(track, params)
    rows = np.arange(200, 260)
    part = S.smooth(track, params, rows=rows)
    assert np.array_equal(np.flatnonzero(part.changed), rows)
    untouched = np.setdiff1d(np.arange(600), rows)
    assert np.array_equal(part.points.lat[untouched], track.points.lat[untouched])
    assert np.allclose(part.points.lat[rows], full.points.lat[rows], atol=1e-12, rtol=0)
    assert np.isnan(part.sigma_h_m[untouched]).all() and np.isfinite(part.sigma_h_m[rows]).all()


def test_dop_scales_measurement_variance_as_documented():
    track, _, _ = simulate(400, seed=10)
    t = track.points.time_s()
    hdop = np.full(400, 1.2)
    hdop[[50, 51, 300]] = (6.0, 30.0, 0.0)      # 30 clips at 20x the median, 0 means unknown
    track.points.hdop[:] = hdop
    params = S.SmoothParams(horizontal_strength=40, smooth_elevation=False)
    prop = S.smooth(track, params)
    ratio = np.clip(np.where(hdop > 0, hdop / 1.2, 1.0), 0.5, 20.0)
    proj = LocalProjection.centred_on(track.points.lat, track.points.lon)
    x, y = proj.to_xy(track.points.lat, track.points.lon)
    ref = K.rts_smooth(t, np.column_stack([x, y]), (5.0 * ratio) ** 2, S.strength_to_q(40, "horizontal"))
    lat, lon = proj.to_latlon(ref.position[:, 0], ref.position[:, 1])
    assert np.allclose(prop.points.lat, lat, atol=1e-12, rtol=0)
    assert np.array_equal(prop.points.ele, track.points.ele, equal_nan=True)
    assert prop.sigma_v_m is None


def test_no_timestamps_falls_back_to_distance_index():
    track, truth, _ = simulate(500, seed=11)
    p = track.points
    untimed = Track(points=PointTable.from_columns(p.lat, p.lon, p.ele))
    prop = S.smooth(untimed, S.SmoothParams(horizontal_strength=60, vertical_strength=60))
    assert prop.info["segments_indexed_by_distance"] == [0]
    assert np.isnan(prop.info["speed_mps"]).all()
    assert prop.changed.all()
    x1, y1 = metric(prop.points)
    x0, y0 = metric(track)
    assert np.mean(np.hypot(x1 - truth[:, 0], y1 - truth[:, 1])) < np.mean(
        np.hypot(x0 - truth[:, 0], y0 - truth[:, 1]))


def test_times_going_backwards_fall_back_to_distance_index():
    track, _, _ = simulate(200, seed=15)
    times = track.points.time.copy()
    times[120] = times[10]
    odd = Track(points=PointTable.from_columns(track.points.lat, track.points.lon,
                                               track.points.ele, times))
    prop = S.smooth(odd, S.SmoothParams(horizontal_strength=50, vertical_strength=50))
    assert prop.info["segments_indexed_by_distance"] == [0]
    assert prop.changed.all()


def test_estimate_uses_only_the_selected_rows():
    quiet, _, _ = simulate(1500, sigma=2.0, seed=16)
    noisy, _, _ = simulate(1500, sigma=12.0, seed=17)
    both = PointTable.concat([quiet.points, noisy.points])
    offset = quiet.points.time[-1] - noisy.points.time[0] + np.timedelta64(1, "s")
    both.time[1500:] = noisy.points.time + offset
    track = Track(points=both)
    params = S.SmoothParams(estimate_noise=True, smooth_elevation=False)
    first = S.estimate_strength(track, rows=np.arange(1500), params=params)
    second = S.estimate_strength(track, rows=np.arange(1500, 3000), params=params)
    assert np.sqrt(first.r_h) == pytest.approx(2.0, rel=0.2)
    assert np.sqrt(second.r_h) == pytest.approx(12.0, rel=0.2)
    assert np.isnan(first.q_v) and np.isnan(first.vertical_strength)


def test_partly_missing_times_are_interpolated_along_the_distance():
    track, _, _ = simulate(300, seed=13)
    times = track.points.time.copy()
    times[[0, 100, 101, 299]] = np.datetime64("NaT")
    gappy = Track(points=PointTable.from_columns(track.points.lat, track.points.lon,
                                                 track.points.ele, times))
    prop = S.smooth(gappy, S.SmoothParams(horizontal_strength=50, vertical_strength=50))
    assert prop.info["segments_indexed_by_distance"] == []
    assert np.isfinite(prop.info["speed_mps"]).all()


def test_small_and_partial_tracks():
    track, _, _ = simulate(5, seed=2)
    p = track.points
    single = Track(points=p.take(slice(0, 1)))
    prop = S.smooth(single)
    assert prop.is_noop() and prop.sigma_h_m[0] == pytest.approx(5.0)
    pair = Track(points=p.take(slice(0, 2)))
    assert S.smooth(pair).is_noop()          # two fixes: the straight line through both
    empty = S.smooth(Track())
    assert empty.is_noop() and len(empty.points) == 0
    # a segment without elevation keeps none; the other is smoothed
    longer, _, _ = simulate(200, seed=4)
    pts = longer.points.copy()
    pts.ele[100:] = np.nan
    mixed = Track(points=pts, segment_starts=[0, 100], segment_extra=[None, None])
    prop = S.smooth(mixed, S.SmoothParams(horizontal_strength=50))
    assert np.isnan(prop.points.ele[100:]).all() and np.isnan(prop.sigma_v_m[100:]).all()
    assert np.all(prop.points.ele[:100] != pts.ele[:100])


def test_progress_and_cancel_hooks():
    track, _, _ = simulate(400, seed=6)
    seen = []
    est = S.estimate_strength(track, progress=seen.append)
    assert seen[-1] == 1.0 and np.all(np.diff(seen) >= 0) and len(seen) == est.evaluations + 1
    assert np.isfinite([est.loglik_h, est.loglik_v]).all()
    calls = []

    def cancel_on_third() -> bool:
        calls.append(1)
        return len(calls) >= 3

    with pytest.raises(S.EstimateCancelled):
        S.estimate_strength(track, cancelled=cancel_on_third)


def test_proposal_applies_and_reverts_on_the_document():
    track, _, _ = simulate(100, seed=14)
    doc = Document(tracks=[track])
    original = track.points.copy()
    prop = S.smooth(doc.tracks[0], S.SmoothParams(horizontal_strength=30, vertical_strength=30))
    inverse = prop.edit().apply(doc)
    assert doc.tracks[0].points.equals(prop.points)
    inverse.apply(doc)
    assert doc.tracks[0].points.equals(original)


def test_standard_deviation_of_one_axis_group_only():
    track, *_ = simulate(300)
    params = S.SmoothParams(horizontal_strength=40.0, vertical_strength=40.0)
    both = S.smooth(track, params)
    vertical = S.smooth(track, params, want_std="vertical")
    assert vertical.sigma_h_m is None
    np.testing.assert_array_equal(vertical.sigma_v_m, both.sigma_v_m)
    assert vertical.points.equals(both.points)
