"""The Kalman/RTS engine (editor.processing.kalman) against outside references.

References used:
* statsmodels' state-space Kalman smoother (KalmanSmoother / MLEModel), exact diffuse
  initialisation on both sides, time-varying transition and state covariance.
* scipy.interpolate.make_smoothing_spline: the smoother of this model is the natural
  cubic smoothing spline (Wahba 1978; Wecker & Ansley 1983) with lam = 1/q, w = 1/r.
* Kalata (1984), IEEE Trans. AES 20(2):174-182, steady-state alpha-beta gains
  (values in tests/reference/check-values.md) and scipy.linalg.solve_discrete_are.
* Simulation from the model itself with known q and noise.
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy.interpolate import make_smoothing_spline
from scipy.optimize import minimize_scalar
from statsmodels.tsa.statespace.mlemodel import MLEModel

from editor.processing import kalman as K
from statsmodels_reference import statsmodels_model, transition, unit_q


def statsmodels_smooth(t, z, r, q, q_form="continuous"):
    """statsmodels' smoother on the same model: exact diffuse start, one matrix per step."""
    return statsmodels_model(t, z, r, q, q_form).smooth()


def irregular_series(rng, n, q=0.2, sigma=2.0, start=0.0):
    dt = rng.uniform(0.4, 2.5, n - 1)
    if n > 10:
        dt[rng.choice(n - 1, 3, replace=False)] = 0.0      # duplicated timestamps
    t = start + np.concatenate(([0.0], np.cumsum(dt)))
    z = np.cumsum(np.cumsum(rng.normal(size=n)) * np.sqrt(q)) + rng.normal(size=n) * sigma + 3.0e4
    r = rng.uniform(0.5, 2.0, n) * sigma ** 2
    return t, z, r


def test_smoother_equals_statsmodels_with_gaps_and_duplicates():
    rng = np.random.default_rng(11)
    t, z, r = irregular_series(rng, 400, start=1.7e9)     # Unix-epoch times, 30 km coordinates
    z[[7, 50, 51, 52, 300, 399]] = np.nan                  # missing (not in the diffuse start)
    q = 0.2
    ref = statsmodels_smooth(t - t[0], z, r, q)        # statsmodels KalmanSmoother, exact diffuse
    ours = K.rts_smooth(t, z, r, q)
    assert np.abs(ours.position - ref.smoothed_state[0]).max() < 1e-6
    assert np.abs(ours.position_std - np.sqrt(ref.smoothed_state_cov[0, 0])).max() < 1e-6
    assert abs(ours.loglik - ref.llf) < 1e-6
    # At row 0 statsmodels' exact-diffuse smoothed velocity differs from the smoothing-spline
    # derivative (checked in the next test) and from its own approximate-diffuse result, so
    # velocities are compared from row 1 on.
    assert np.abs(ours.velocity[1:] - ref.smoothed_state[1][1:]).max() < 1e-6
    nu, s = K.innovations(t, z, r, q)                  # statsmodels forecasts_error(_cov)
    later = np.isfinite(z) & (np.arange(len(t)) >= 2)
    assert np.abs(nu[later] - ref.forecasts_error[0][later]).max() < 1e-6
    assert np.allclose(s[later], ref.forecasts_error_cov[0, 0][later], rtol=1e-9)
    assert np.isnan(nu[~np.isfinite(z)]).all()


def test_smoother_equals_smoothing_spline_including_missing_ends():
    # scipy's make_smoothing_spline minimises sum w (y - f)^2 + lam * int f''^2: the posterior
    # mean of this model with w = 1/r, lam = 1/q (Wahba 1978); missing rows read the spline.
    rng = np.random.default_rng(3)
    n = 120
    t = np.concatenate(([0.0], np.cumsum(rng.uniform(0.5, 2.0, n - 1))))
    z = np.cumsum(rng.normal(size=n)) + rng.normal(size=n)
    missing = np.array([0, 1, 40, 41, 42, 118, 119])
    z[missing] = np.nan
    r, q = rng.uniform(1.0, 3.0, n), 0.3
    ok = np.isfinite(z)
    spline = make_smoothing_spline(t[ok], z[ok], w=1.0 / r[ok], lam=1.0 / q)
    ours = K.rts_smooth(t, z, r, q)
    inside = (t >= t[ok][0]) & (t <= t[ok][-1])
    assert np.abs(ours.position[inside] - spline(t[inside])).max() < 1e-8
    assert np.abs(ours.velocity[inside] - spline.derivative()(t[inside])).max() < 1e-8
    # beyond the data a natural spline is straight (scipy's BSpline would extend the cubic)
    for end, rows in ((t[ok][0], [0, 1]), (t[ok][-1], [118, 119])):
        line = spline(end) + spline.derivative()(end) * (t[rows] - end)
        assert np.abs(ours.position[rows] - line).max() < 1e-8
    # a fully observed series, including the first row's velocity
    z_full = np.cumsum(rng.normal(size=n))
    spline = make_smoothing_spline(t, z_full, w=1.0 / r, lam=1.0 / q)
    ours = K.rts_smooth(t, z_full, r, q)
    assert np.abs(ours.velocity - spline.derivative()(t)).max() < 1e-8


def dense_posterior(t, z, r, q):
    """Textbook posterior of all states from the dense information matrix (numpy.linalg):
    exact diffuse start = no prior term; distinct times only."""
    n = len(t)
    info = np.zeros((2 * n, 2 * n))
    vec = np.zeros(2 * n)
    for i in range(n - 1):
        h = t[i + 1] - t[i]
        jac = np.zeros((2, 2 * n))
        jac[:, 2 * i:2 * i + 2] = -np.array([[1.0, h], [0.0, 1.0]])
        jac[:, 2 * i + 2:2 * i + 4] = np.eye(2)
        info += jac.T @ np.linalg.inv(q * unit_q(np.array([h]))[:, :, 0]) @ jac
    ok = np.isfinite(z)
    info[2 * np.flatnonzero(ok), 2 * np.flatnonzero(ok)] += 1.0 / r[ok]
    vec[2 * np.flatnonzero(ok)] = z[ok] / r[ok]
    cov = np.linalg.inv(info)
    mean = cov @ vec
    return mean[0::2], mean[1::2], np.sqrt(np.diag(cov)[0::2])


@pytest.mark.parametrize("n, missing", [(2, []), (3, []), (4, [1, 2]), (7, [0, 1]), (7, [5, 6]),
                                        (12, [0, 4, 5, 11])])
def test_small_series_and_gaps_match_dense_posterior(n, missing):
    rng = np.random.default_rng(n + len(missing))
    t = np.concatenate(([0.0], np.cumsum(rng.uniform(0.5, 2.0, n - 1))))
    z = t * 1.5 + rng.normal(size=n)
    z[missing] = np.nan
    r = rng.uniform(1.0, 3.0, n)
    mean, vel, std = dense_posterior(t, z, r, 0.4)
    ours = K.rts_smooth(t, z, r, 0.4)
    assert np.allclose(ours.position, mean, atol=1e-9, rtol=0)
    assert np.allclose(ours.velocity, vel, atol=1e-9, rtol=0)
    assert np.allclose(ours.position_std, std, atol=1e-9, rtol=0)


def test_loglik_and_innovations_agree_with_forward_filter_likelihood():
    rng = np.random.default_rng(5)
    t, z, r = irregular_series(rng, 300)
    z[[20, 21, 150]] = np.nan
    q = 0.5
    ll = K.loglik(t, z, r, q)
    assert ll == pytest.approx(K.rts_smooth(t, z, r, q, want_std=False).loglik, abs=1e-9)
    nu, s = K.innovations(t, z, r, q)
    ok = np.isfinite(s)
    # prediction-error decomposition; the two diffuse rows contribute log(2 pi) + log F_inf
    # with F_inf = 1 and dt0^2 (Durbin & Koopman 2012, sec. 7.2.2, P_inf = I)
    diffuse = np.isinf(s)
    assert diffuse.sum() == 2
    forward = -0.5 * np.sum(np.log(2 * np.pi * s[ok]) + nu[ok] ** 2 / s[ok])
    forward += -0.5 * (2 * np.log(2 * np.pi) + 2 * np.log(t[1] - t[0]))
    assert ll == pytest.approx(forward, abs=1e-8)


def test_discrete_form_equals_statsmodels_and_refuses_gaps():
    rng = np.random.default_rng(2)
    t = np.arange(80.0) * 2.0
    t[40:] += 0.5
    z = np.cumsum(rng.normal(size=80)) + rng.normal(size=80)
    ref = statsmodels_smooth(t, z, 1.5, 0.2, q_form="discrete")   # statsmodels, Kalata's Q
    ours = K.rts_smooth(t, z, 1.5, 0.2, q_form="discrete")
    assert np.abs(ours.position - ref.smoothed_state[0]).max() < 1e-9
    assert np.abs(ours.position_std - np.sqrt(ref.smoothed_state_cov[0, 0])).max() < 1e-9
    assert abs(ours.loglik - ref.llf) < 1e-8
    z[10] = np.nan
    with pytest.raises(ValueError, match="discrete"):
        K.rts_smooth(t, z, 1.5, 0.2, q_form="discrete")


@pytest.mark.parametrize("tracking_index, alpha, beta", [(1.0, 0.75, 0.5), (0.1, 0.36, 0.08),
                                                         (4.5, 0.9375, 1.125)])
def test_steady_state_gain_matches_kalata(tracking_index, alpha, beta):
    # Kalata (1984): Lambda = sigma_w T^2 / sigma_n with the discrete white-noise acceleration Q;
    # with T = sigma_n = 1, sigma_w^2 = Lambda^2 (check-values.md, exact cases).
    q = tracking_index ** 2
    assert K.steady_state_gain(1.0, 1.0, q, q_form="discrete") == pytest.approx((alpha, beta), abs=1e-12)
    # Kalata's explicit form, rho = (4 + L - sqrt(L^2 + 8 L)) / 4, at another step and noise
    lam = tracking_index
    rho = (4 + lam - np.sqrt(lam ** 2 + 8 * lam)) / 4
    dt, sigma_n = 2.0, 3.0
    sigma_w = lam * sigma_n / dt ** 2
    got = K.steady_state_gain(dt, sigma_n ** 2, sigma_w ** 2, q_form="discrete")
    assert got == pytest.approx((1 - rho ** 2, 2 * (1 - rho) ** 2), abs=1e-12)
    # the filter gain of our recursion on a uniform series converges to the same values
    a, b = K.filter_gains(np.arange(300.0), 1.0, q, q_form="discrete")
    assert (a[-1], b[-1]) == pytest.approx((alpha, beta), abs=1e-10)


def test_continuous_form_steady_state_caution_value():
    # check-values.md: continuous Q with q = T = sigma_n = 1 gives alpha = 0.756738, beta = 0.493216
    assert K.steady_state_gain(1.0, 1.0, 1.0, q_form="continuous") == pytest.approx(
        (0.756738, 0.493216), abs=5e-7)
    a, b = K.filter_gains(np.arange(300.0), 1.0, 1.0)
    assert (a[-1], b[-1]) == pytest.approx((0.756738, 0.493216), abs=5e-7)
    assert np.isnan(a[:2]).all()


def test_simulation_reduces_error_and_recovers_q():
    # truth drawn from the model itself: irregular steps, known q, white noise of known sigma
    rng = np.random.default_rng(21)
    n, q_true, sigma = 3000, 0.05, 4.0
    dt = rng.uniform(0.5, 1.5, n - 1)
    t = np.concatenate(([0.0], np.cumsum(dt)))
    pos, vel = np.zeros((n, 2)), np.zeros((n, 2))
    vel[0] = (4.0, -1.0)
    for i, h in enumerate(dt):
        chol = np.linalg.cholesky(q_true * np.array([[h ** 3 / 3, h ** 2 / 2], [h ** 2 / 2, h]]))
        w = chol @ rng.normal(size=(2, 2))
        pos[i + 1] = pos[i] + h * vel[i] + w[0]
        vel[i + 1] = vel[i] + w[1]
    z = pos + rng.normal(size=(n, 2)) * sigma
    problem = K.Problem(t, z, sigma ** 2)
    fit = minimize_scalar(lambda lq: -problem.loglik(10 ** lq), bounds=(-6, 2), method="bounded")
    q_hat = 10 ** fit.x
    assert q_true / 3 < q_hat < q_true * 3
    res = K.rts_smooth(t, z, sigma ** 2, q_hat)
    rmse_raw = np.sqrt(np.mean((z - pos) ** 2))
    rmse = np.sqrt(np.mean((res.position - pos) ** 2))
    assert rmse_raw / rmse >= 2.0
    # the posterior standard deviation is calibrated: about 95 % of errors within 1.96 sigma
    inside = np.abs(res.position - pos) < 1.96 * res.position_std
    assert 0.92 < inside.mean() < 0.98


def test_maximum_likelihood_q_matches_statsmodels_fit():
    rng = np.random.default_rng(8)
    n = 300
    t = np.concatenate(([0.0], np.cumsum(rng.uniform(0.8, 1.2, n - 1))))
    z = np.cumsum(np.cumsum(rng.normal(size=n)) * 0.3) + rng.normal(size=n) * 2.0
    h = np.append(np.diff(t), 0.0)

    class ConstantVelocity(MLEModel):
        def __init__(self):
            super().__init__(z, k_states=2, k_posdef=2, initialization="diffuse")
            self.ssm["design"] = np.array([[1.0, 0.0]])
            self.ssm["obs_cov"] = np.array([[4.0]])
            self.ssm["transition"] = transition(h)
            self.ssm["selection"] = np.eye(2)

        @property
        def start_params(self):
            return np.array([-1.0])

        def update(self, params, **kwargs):
            params = super().update(params, **kwargs)
            self.ssm["state_cov"] = 10.0 ** params[0] * unit_q(h)

    fitted = ConstantVelocity().fit(disp=False)        # statsmodels' own maximum likelihood
    problem = K.Problem(t, z, 4.0)
    ours = minimize_scalar(lambda lq: -problem.loglik(10 ** lq), bounds=(-6, 2), method="bounded",
                           options={"xatol": 1e-4})
    assert abs(ours.x - fitted.params[0]) < 0.01
    assert -ours.fun == pytest.approx(fitted.llf, abs=1e-4)


def test_concentrated_noise_scale_is_the_maximum():
    # the closed-form noise scale is the maximum of the likelihood along that direction
    rng = np.random.default_rng(4)
    t, z, r = irregular_series(rng, 200)
    problem = K.Problem(t, z, r)
    ll, scale = problem.concentrated(0.1)
    for factor in (0.9, 0.99, 1.01, 1.1):
        assert problem.loglik(0.1 * scale * factor, scale * factor) < ll
    assert problem.loglik(0.1 * scale, scale) == pytest.approx(ll)


def test_sequences_are_independent():
    # internal consistency: passing segments together equals smoothing each alone
    rng = np.random.default_rng(9)
    parts = [irregular_series(rng, n)[:2] for n in (1, 2, 9, 60)]
    t = np.concatenate([p[0] for p in parts])
    z = np.concatenate([p[1] for p in parts])
    starts = np.cumsum([0] + [len(p[0]) for p in parts[:-1]])
    together = K.rts_smooth(t, z, 2.0, 0.3, starts=starts)
    total = 0.0
    for (tp, zp), s0 in zip(parts, starts):
        alone = K.rts_smooth(tp, zp, 2.0, 0.3)
        part = slice(s0, s0 + len(tp))
        assert np.allclose(alone.position, together.position[part], atol=1e-9)
        assert np.allclose(alone.position_std, together.position_std[part], atol=1e-9)
        total += alone.loglik
    assert together.loglik == pytest.approx(total, abs=1e-9)


def test_small_inputs_and_missing_axes():
    one = K.rts_smooth([5.0], [[3.0, np.nan]], 4.0, 1.0)
    assert one.position[0, 0] == 3.0 and one.velocity[0, 0] == 0.0 and one.position_std[0, 0] == 2.0
    assert np.isnan(one.position[0, 1])
    two = K.rts_smooth([0.0, 2.0], [1.0, 5.0], 1.0, 1.0)
    assert np.allclose(two.position, [1.0, 5.0]) and np.allclose(two.velocity, [2.0, 2.0])
    # a single observed time among several rows: constant, unknown elsewhere
    z = np.array([np.nan, 7.0, np.nan])
    lone = K.rts_smooth([0.0, 1.0, 2.0], z, 1.0, 1.0)
    assert np.allclose(lone.position, 7.0)
    assert lone.position_std[1] == 1.0 and np.isinf(lone.position_std[[0, 2]]).all()
    empty = K.rts_smooth(np.zeros(0), np.zeros((0, 2)), 1.0, 1.0)
    assert empty.position.shape == (0, 2) and empty.loglik == 0.0


@pytest.mark.parametrize("kwargs, message", [
    (dict(t_s=[0.0, 2.0, 1.0]), "non-decreasing"),
    (dict(r=[1.0, 0.0, 1.0]), "variance"),
    (dict(q=0.0), "q must be"),
    (dict(z=[1.0, np.inf, 2.0]), "infinite"),
])
def test_bad_input_is_named(kwargs, message):
    args = dict(t_s=[0.0, 1.0, 2.0], z=[1.0, 2.0, 3.0], r=1.0, q=1.0)
    args.update(kwargs)
    with pytest.raises(ValueError, match=message):
        K.rts_smooth(**args)
