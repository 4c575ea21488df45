"""The combine model's smoother against statsmodels' Kalman smoother on the same state-space model."""
from __future__ import annotations

import numpy as np
import pytest
from statsmodels.tsa.statespace.kalman_smoother import KalmanSmoother

from editor.processing.elevation_model import combine_smooth, offset_drift_loglik


def _statsmodels_combine(t, rec, r_rec, ter, r_ter, q_h, q_b):
    # Reference: statsmodels KalmanSmoother, state [h, v, b], two measurements
    # recorded = h + b, terrain = h; exact diffuse initialisation (statsmodels' initialize_diffuse).
    n = len(t)
    h = np.append(np.diff(t), 0.0)
    ks = KalmanSmoother(k_endog=2, k_states=3, k_posdef=3)
    ks.bind(np.column_stack([rec, ter]).copy())
    ks["design"] = np.array([[1.0, 0.0, 1.0], [1.0, 0.0, 0.0]])
    cov = np.zeros((2, 2, n))
    cov[0, 0], cov[1, 1] = r_rec, r_ter
    ks["obs_cov"] = cov
    f = np.zeros((3, 3, n))
    f[0, 0] = f[1, 1] = f[2, 2] = 1.0
    f[0, 1] = h
    ks["transition"] = f
    ks["selection"] = np.eye(3)
    q = np.zeros((3, 3, n))
    q[0, 0], q[0, 1], q[1, 1] = q_h * h ** 3 / 3, q_h * h ** 2 / 2, q_h * h
    q[1, 0] = q[0, 1]
    q[2, 2] = q_b * h
    ks["state_cov"] = q
    ks.initialize_diffuse()
    return ks.smooth().smoothed_state


@pytest.mark.parametrize("seed", [0, 1])
def test_combine_equals_statsmodels(seed):
    rng = np.random.default_rng(seed)
    n = 80
    t = np.cumsum(rng.uniform(0.5, 3.0, n))
    truth = 400 + 30 * np.sin(t / 25)
    offset = 12 + np.cumsum(rng.standard_normal(n)) * 0.3
    rec = truth + offset + rng.standard_normal(n) * 0.5
    ter = truth + rng.standard_normal(n) * 2.0
    rec[10:14] = np.nan                      # missing recording
    ter[40:45] = np.nan                      # outside the terrain
    r_rec = np.full(n, 0.25)
    r_ter = rng.uniform(2.0, 6.0, n)
    q_h, q_b = 0.05, 0.02
    h, b, v = combine_smooth(t, np.array([0]), rec, r_rec, ter, r_ter, q_h, q_b)
    ref = _statsmodels_combine(t, rec, r_rec, ter, r_ter, q_h, q_b)
    # our start has a weak prior (sd 1e4 m) instead of an exactly diffuse one: differences ~1e-6 m
    np.testing.assert_allclose(h, ref[0], atol=1e-4)
    # at row 0 statsmodels' exact-diffuse smoothed velocity is off (as noted in test_kalman.py)
    np.testing.assert_allclose(v[1:], ref[1][1:], atol=1e-5)
    np.testing.assert_allclose(b, ref[2], atol=1e-4)


def test_segments_are_independent():
    rng = np.random.default_rng(4)
    t = np.r_[np.arange(30.0), np.arange(30.0) + 100]
    rec = rng.standard_normal(60) + 50
    ter = rng.standard_normal(60) + 40
    both = combine_smooth(t, np.array([0, 30]), rec, 0.3, ter, 4.0, 0.1, 0.01)
    first = combine_smooth(t[:30], np.array([0]), rec[:30], 0.3, ter[:30], 4.0, 0.1, 0.01)
    np.testing.assert_allclose(both[0][:30], first[0], atol=1e-8)


def test_drift_likelihood_prefers_the_true_ratio():
    # A random walk of step variance 0.04 plus white noise of variance 1: the maximum of the
    # concentrated likelihood lies near the true ratio 0.04 (a factor of a few, 2,000 points).
    rng = np.random.default_rng(7)
    n = 2000
    t = np.arange(n, dtype=float)
    d = np.cumsum(rng.standard_normal(n) * 0.2) + rng.standard_normal(n)
    ratios = 10.0 ** np.linspace(-4, 0, 41)
    ll = [offset_drift_loglik(t, np.array([0]), d, 1.0, r)[0] for r in ratios]
    best = ratios[int(np.argmax(ll))]
    assert 0.01 < best < 0.16
    _, scale = offset_drift_loglik(t, np.array([0]), d, 1.0, best)
    assert 0.6 < scale < 1.6
