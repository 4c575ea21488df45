"""Spike and catch-up removal on invented tracks with known faults."""
import numpy as np
import pytest
from cleaning_tracks import track_from_xy, wandering_path
from scipy.stats import chi2, norm

from editor.processing.activity import ACTIVITIES
from editor.processing.spikes import SpikeParams, despike, gate


def noisy_walk(n=3000, sigma=3.0, seed=0, speed=1.4):
    rng = np.random.default_rng(seed)
    t, x, y = wandering_path(n, speed, seed=seed)
    return t, x + rng.normal(0, sigma, n), y + rng.normal(0, sigma, n), x, y, rng


def test_gate_values_follow_the_chi_square_law():
    # 2 degrees of freedom: chi-square is exponential with mean 2, so ppf(p) = -2 ln(1 - p) (closed form).
    assert gate(0.999, 2) == pytest.approx(-2 * np.log(0.001), rel=1e-12)
    assert gate(0.999, 2) == pytest.approx(13.8155, abs=1e-4)
    # 1 degree of freedom: the square of the two-sided normal quantile (scipy.stats.norm as reference).
    assert gate(0.999, 1) == pytest.approx(norm.ppf(0.9995) ** 2, rel=1e-9)
    # and the same numbers as scipy.stats.chi2.ppf for other levels
    for confidence in (0.95, 0.99, 0.9999):
        for dof in (1, 2, 3):
            assert gate(confidence, dof) == pytest.approx(chi2.ppf(confidence, dof), rel=1e-12)


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_isolated_spikes_of_30_to_80_m_on_3_m_noise_are_all_found(seed):
    t, x, y, _, _, rng = noisy_walk(seed=seed)
    rows = np.sort(rng.choice(np.arange(20, len(t) - 20, 40), size=40, replace=False))
    size = rng.uniform(30, 80, len(rows))
    angle = rng.uniform(0, 2 * np.pi, len(rows))
    x[rows] += size * np.cos(angle)
    y[rows] += size * np.sin(angle)
    prop = despike(track_from_xy(x, y, None, t), SpikeParams(activity="walk"))
    assert np.isin(rows, prop.removed).all()
    false = np.setdiff1d(prop.removed, rows)
    assert len(false) <= 0.01 * len(t)
    assert prop.info["gate_h"] == pytest.approx(13.8155, abs=1e-4)
    # the estimated scatter is close to the simulated 3 m
    assert prop.info["sigma_h_m"] == pytest.approx(3.0, rel=0.15)


def test_clean_noisy_walk_loses_at_most_one_percent():
    t, x, y, *_ = noisy_walk(seed=4)
    prop = despike(track_from_xy(x, y, None, t), SpikeParams(activity="walk"))
    assert len(prop.removed) <= 0.01 * len(t)


def test_two_spikes_in_a_row_do_not_mask_each_other():
    t, x, y, *_ = noisy_walk(seed=5)
    x[1000:1002] += 45.0  # the filter pulled by the first must not hide the second
    x[2000:2003] -= 35.0
    y[2000:2003] += 20.0
    prop = despike(track_from_xy(x, y, None, t), SpikeParams(activity="walk"))
    assert np.isin([1000, 1001, 2000, 2001, 2002], prop.removed).all()
    assert not np.isin([999, 1002, 1999, 2003], prop.removed).any()


def test_elevation_spike_is_found():
    t, x, y, *_, rng = noisy_walk(seed=6)
    ele = 500 + 0.02 * np.arange(len(t)) + rng.normal(0, 2.0, len(t))
    ele[[700, 1900]] += [40.0, -35.0]
    prop = despike(track_from_xy(x, y, ele, t), SpikeParams(activity="walk"))
    assert {700, 1900} <= set(prop.reasons["spike"].tolist())
    assert prop.info["gate_v"] == pytest.approx(norm.ppf(0.9995) ** 2)
    off = despike(track_from_xy(x, y, ele, t), SpikeParams(activity="walk", check_elevation=False))
    assert not np.isin([700, 1900], off.removed).any()


def tunnel_track(seed=7, gap_s=60, offset_m=150.0, decay_s=2.5):
    """Walk, lose the signal for ``gap_s`` seconds, then fixes converge on the truth from far away."""
    t, x, y, tx, ty, rng = noisy_walk(n=1500, seed=seed)
    keep = (t < 600) | (t >= 600 + gap_s)
    after = t - (600 + gap_s)
    offset = np.where(after >= 0, offset_m * np.exp(-np.maximum(after, 0) / decay_s), 0.0)
    angle = 2.0  # the wrong first fixes all lie in one direction, converging
    x = x + offset * np.cos(angle)
    y = y + offset * np.sin(angle)
    return t[keep], x[keep], y[keep], offset[keep]


def test_catch_up_after_a_tunnel_is_removed():
    t, x, y, offset = tunnel_track()
    prop = despike(track_from_xy(x, y, None, t), SpikeParams(activity="walk"))
    removed = np.zeros(len(t), dtype=bool)
    removed[prop.removed] = True
    far = offset > 25.0  # clearly wrong fixes (over eight sigma of the 3 m noise)
    assert far.sum() >= 5
    assert removed[far].all()
    assert removed[offset == 0].sum() <= 0.01 * len(t)
    assert prop.after.distance_m < prop.before.distance_m - 250  # 150 m out and back is gone


def test_cold_start_converging_fixes_at_segment_start_are_removed():
    t, x, y, *_ = noisy_walk(n=800, seed=8)
    offset = 200.0 * np.exp(-t / 2.0)
    x = x + offset
    prop = despike(track_from_xy(x, y, None, t), SpikeParams(activity="walk"))
    assert np.isin(np.flatnonzero(offset > 20.0), prop.removed).all()
    assert len(np.setdiff1d(prop.removed, np.flatnonzero(offset > 1.0))) <= 8


def test_a_drive_with_turns_keeps_its_points():
    rng = np.random.default_rng(9)
    t, x, y = wandering_path(3000, 25.0, seed=9, turn_sd=0.06)
    x, y = x + rng.normal(0, 3, len(t)), y + rng.normal(0, 3, len(t))
    prop = despike(track_from_xy(x, y, None, t))
    assert prop.info["activity"] == "drive"
    assert len(prop.removed) <= 0.01 * len(t)


def test_a_real_change_of_speed_is_not_deleted_wholesale():
    # walking, then 5 minutes in a car at 15 m/s, then walking: with the walk limits the car part
    # cannot be bridged, so it is left alone rather than deleted.
    rng = np.random.default_rng(10)
    speed = np.r_[np.full(600, 1.4), np.full(300, 15.0), np.full(600, 1.4)]
    x = np.cumsum(speed) + rng.normal(0, 3, len(speed))
    y = rng.normal(0, 3, len(speed))
    t = np.arange(len(speed), dtype=float)
    prop = despike(track_from_xy(x, y, None, t), SpikeParams(activity="walk"))
    assert len(prop.removed) < 30
    assert prop.info["unresolved_zones"] >= 1


def test_only_selected_rows_are_removed():
    t, x, y, *_ = noisy_walk(seed=11)
    x[[500, 1500, 2500]] += 60
    prop = despike(track_from_xy(x, y, None, t), SpikeParams(activity="walk"), rows=np.arange(1000, 2000))
    assert 1500 in prop.removed and 500 not in prop.removed and 2500 not in prop.removed
    assert np.isin(prop.removed, np.arange(1000, 2000)).all()


def test_removed_rows_leave_segments_consistent():
    t, x, y, *_ = noisy_walk(seed=12)
    x[[100, 1600]] += 70
    track = track_from_xy(x, y, None, t, starts=(0, 1500))
    prop = despike(track, SpikeParams(activity="walk"))
    assert {100, 1600} <= set(prop.removed.tolist())
    assert prop.segment_starts.tolist() == [0, 1500 - int((prop.removed < 1500).sum())]
    assert prop.after.points == len(t) - len(prop.removed)


def test_activity_presets_are_ordered():
    names = list(ACTIVITIES)
    assert names == ["walk", "run", "ride", "drive"]
    speeds = [ACTIVITIES[k].max_speed_mps for k in names]
    assert speeds == sorted(speeds)


def test_no_timestamps_means_no_change():
    t, x, y, *_ = noisy_walk(n=200, seed=13)
    x[50] += 80
    assert despike(track_from_xy(x, y, None, None)).is_noop()


def test_a_fast_ending_is_not_cut_off():
    # walking, then the last three minutes at car speed: nothing trusted follows the fast part,
    # so it is left alone rather than cut off
    rng = np.random.default_rng(14)
    speed = np.r_[np.full(600, 1.4), np.full(180, 15.0)]
    x = np.cumsum(speed) + rng.normal(0, 3, len(speed))
    y = rng.normal(0, 3, len(speed))
    prop = despike(track_from_xy(x, y, None, np.arange(len(speed), dtype=float)), SpikeParams(activity="walk"))
    assert len(prop.removed) < 10
