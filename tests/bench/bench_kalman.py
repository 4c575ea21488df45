"""Speed of the Kalman/RTS engine against statsmodels on the same model (prints, never asserts).

Run from the repository root:  /work/venv/bin/python tests/bench/bench_kalman.py

Scenario: 100,000 fixes (about 28 h at 1 s) with timestamp jitter, occasional 2 s steps
and repeated timestamps, 1 % of rows missing in gaps of 50, three axes (x and y share
q and r, elevation has its own). statsmodels runs the same state-space model (exact
diffuse start, one transition and state covariance per step) axis by axis, which is its
fastest set-up; every time is the best of several runs, measured in this run.
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np
from statsmodels.tsa.statespace.mlemodel import MLEModel

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # tests/: the statsmodels reference

from editor.geo import LocalProjection  # noqa: E402
from editor.model import PointTable, Track  # noqa: E402
from editor.processing import kalman as K  # noqa: E402
from editor.processing import smoothing as S  # noqa: E402
from statsmodels_reference import statsmodels_model, transition, unit_q  # noqa: E402

N = 100_000
Q_H, Q_V, SIGMA_H, SIGMA_V = 0.05, 5e-4, 5.0, 10.0


CPU = {}


def best_of(runs: int, func):
    """Best wall-clock time of ``runs`` calls; the best process CPU time goes to ``CPU[func]``."""
    times, cpu, out = [], [], None
    for _ in range(runs):
        start, start_cpu = time.perf_counter(), time.process_time()
        out = func()
        times.append(time.perf_counter() - start)
        cpu.append(time.process_time() - start_cpu)
    CPU["last"] = min(cpu)
    return min(times), out


def ms(seconds: float) -> str:
    """Wall-clock milliseconds with the CPU time of the same measurement."""
    return f"{seconds * 1e3:8.1f} ms (cpu {CPU['last'] * 1e3:6.1f})"


def scenario(n: int, seed: int = 0):
    rng = np.random.default_rng(seed)
    dt = np.clip(1.0 + rng.normal(0.0, 0.02, n - 1), 0.9, 1.1)
    dt[rng.random(n - 1) < 0.01] = 2.0
    dt[rng.random(n - 1) < 0.002] = 0.0
    t = np.concatenate(([0.0], np.cumsum(dt)))
    # constant-velocity truth drawn exactly from the model at these times:
    # per step w_v ~ N(0, q dt), w_p = dt/2 w_v + N(0, q dt^3 / 12)
    q = np.array([Q_H, Q_H, Q_V])
    h = dt[:, None]
    w_v = rng.normal(size=(n - 1, 3)) * np.sqrt(q * h)
    w_p = 0.5 * h * w_v + rng.normal(size=(n - 1, 3)) * np.sqrt(q * h ** 3 / 12.0)
    vel = np.vstack([(2.0, 1.0, 0.05), (2.0, 1.0, 0.05) + np.cumsum(w_v, axis=0)])
    truth = np.vstack([np.zeros(3), np.cumsum(h * vel[:-1] + w_p, axis=0)])
    z = truth + rng.normal(size=(n, 3)) * (SIGMA_H, SIGMA_H, SIGMA_V)
    z[:, 2] += 600.0
    for s in rng.choice(np.arange(100, n - 100, 100), n // 5000, replace=False):
        z[s:s + 50] = np.nan
    return t, z


def statsmodels_axis(t, z, r, q, want_cov):
    ks = statsmodels_model(t, z, r, q)
    ks.set_smoother_output(0, smoother_state=True, smoother_state_cov=want_cov)
    return ks.smooth()


def statsmodels_loglik(t, z, r, q):
    """statsmodels' log-likelihood of one axis: the Kalman filter only."""
    return statsmodels_model(t, z, r, q).loglike()


def statsmodels_all(t, z, want_cov):
    out = []
    for axis, (r, q) in enumerate(((SIGMA_H ** 2, Q_H), (SIGMA_H ** 2, Q_H), (SIGMA_V ** 2, Q_V))):
        out.append(statsmodels_axis(t, z[:, axis], r, q, want_cov))
    return out


class StatsmodelsFit(MLEModel):
    """The same model with log10 q as the only parameter; k axes share q (block-diagonal)."""

    def __init__(self, t, z, r):
        k = z.shape[1]
        super().__init__(z, k_states=2 * k, k_posdef=2 * k, initialization="diffuse")
        h = np.append(np.diff(t), 0.0)
        n = len(t)
        design = np.zeros((k, 2 * k))
        design[np.arange(k), 2 * np.arange(k)] = 1.0
        self.ssm["design"] = design
        self.ssm["obs_cov"] = np.eye(k) * r
        f = np.zeros((2 * k, 2 * k, n))
        self._unit = np.zeros((2 * k, 2 * k, n))
        for a in range(k):
            f[2 * a:2 * a + 2, 2 * a:2 * a + 2] = transition(h)
            self._unit[2 * a:2 * a + 2, 2 * a:2 * a + 2] = unit_q(h)
        self.ssm["transition"] = f
        self.ssm["selection"] = np.eye(2 * k)

    @property
    def start_params(self):
        return np.array([-2.0])

    def update(self, params, **kwargs):
        params = super().update(params, **kwargs)
        self.ssm["state_cov"] = 10.0 ** params[0] * self._unit


def as_track(t, z):
    origin = LocalProjection(46.8, 8.2)
    lat, lon = origin.to_latlon(z[:, 0], z[:, 1])
    times = np.datetime64("2024-06-01T05:00:00", "ns") + np.round(t * 1e9).astype("timedelta64[ns]")
    return Track(points=PointTable.from_columns(lat, lon, z[:, 2], times))


def main() -> None:
    t, z = scenario(N)
    r = np.array([SIGMA_H ** 2, SIGMA_H ** 2, SIGMA_V ** 2])
    print(f"{N} points, {t[-1] / 3600:.1f} h, {np.isnan(z[:, 0]).mean():.1%} missing, 3 axes\n")

    sm_mean, sm = best_of(2, lambda: statsmodels_all(t, z, want_cov=False))
    sm_mean_txt = ms(sm_mean)
    sm_cov, sm_c = best_of(2, lambda: statsmodels_all(t, z, want_cov=True))
    sm_cov_txt = ms(sm_cov)

    def ours(want_std):
        xy = K.rts_smooth(t, z[:, :2], r[0], Q_H, want_std=want_std)
        ele = K.rts_smooth(t, z[:, 2], r[2], Q_V, want_std=want_std)
        return xy, ele

    our_mean, (xy, ele) = best_of(11, lambda: ours(False))
    our_mean_txt = ms(our_mean)
    our_std, (xy_s, ele_s) = best_of(11, lambda: ours(True))
    our_std_txt = ms(our_std)
    pos = np.column_stack([xy.position, ele.position])
    vel = np.column_stack([xy.velocity, ele.velocity])
    std = np.column_stack([xy_s.position_std, ele_s.position_std])
    ref_pos = np.column_stack([s.smoothed_state[0] for s in sm])
    ref_vel = np.column_stack([s.smoothed_state[1] for s in sm])
    ref_std = np.column_stack([np.sqrt(s.smoothed_state_cov[0, 0]) for s in sm_c])
    print("RTS smoother, means and velocities")
    print(f"  ours {our_mean_txt}   statsmodels {sm_mean_txt}   "
          f"ratio {sm_mean / our_mean:6.1f}x   (guide <= 50 ms, >= 5x)")
    print(f"  max |position - statsmodels| = {np.abs(pos - ref_pos).max():.2e} m, "
          f"max |velocity - statsmodels| (rows >= 1) = {np.abs(vel[1:] - ref_vel[1:]).max():.2e} m/s")
    print("RTS smoother with per-point posterior std")
    print(f"  ours {our_std_txt}   statsmodels {sm_cov_txt}   "
          f"ratio {sm_cov / our_std:6.1f}x   ours with std / ours without {our_std / our_mean:4.2f}"
          "   (guide <= 2x)")
    print(f"  max |std - statsmodels| = {np.abs(std - ref_std).max():.2e} m")

    sm_ll_time, sm_ll = best_of(2, lambda: sum(
        statsmodels_loglik(t, z[:, a], r[a], q) for a, q in ((0, Q_H), (1, Q_H), (2, Q_V))))
    sm_ll_txt = ms(sm_ll_time)
    our_ll_time, our_ll = best_of(11, lambda: K.loglik(t, z[:, :2], r[0], Q_H) + K.loglik(t, z[:, 2], r[2], Q_V))
    our_ll_txt = ms(our_ll_time)
    problems = (K.Problem(t, z[:, :2], r[0]), K.Problem(t, z[:, 2], r[2]))
    pass_time, _ = best_of(15, lambda: problems[0].loglik(Q_H) + problems[1].loglik(Q_V))
    print("Log-likelihood, 3 axes")
    print(f"  ours, one call of loglik() per axis group {our_ll_txt}   statsmodels filter {sm_ll_txt}   "
          f"ratio {sm_ll_time / our_ll_time:6.1f}x")
    print(f"  one pass on prepared data (what the strength search repeats) {ms(pass_time)}   "
          f"ratio {sm_ll_time / pass_time:6.1f}x   (guide <= 20 ms)")
    print(f"  |loglik - statsmodels| = {abs(our_ll - sm_ll):.2e} (relative {abs(our_ll - sm_ll) / abs(sm_ll):.1e})")

    track = as_track(t, z)
    est_time, est = best_of(5, lambda: S.estimate_strength(track))
    est_txt = ms(est_time)
    tt = track.points.time_s()
    proj = LocalProjection.centred_on(track.points.lat, track.points.lon)
    x, y = proj.to_xy(track.points.lat, track.points.lon)

    def statsmodels_fit():
        fit_h = StatsmodelsFit(tt, np.column_stack([x, y]), SIGMA_H ** 2).fit(disp=False)
        fit_v = StatsmodelsFit(tt, z[:, 2:3], SIGMA_V ** 2).fit(disp=False)
        return fit_h, fit_v

    sm_fit_time, (fit_h, fit_v) = best_of(1, statsmodels_fit)
    sm_fit_txt = ms(sm_fit_time)
    print("Automatic strength (maximum likelihood over log10 q_h and log10 q_v)")
    print(f"  estimate_strength {est_txt}, {est.evaluations} likelihood passes   "
          f"statsmodels fit {sm_fit_txt}   ratio {sm_fit_time / est_time:6.1f}x   "
          "(guide <= 250 ms, >= 8x)")
    print(f"  log10 q_h ours {np.log10(est.q_h):.4f} statsmodels {fit_h.params[0]:.4f} "
          f"(|diff| {abs(np.log10(est.q_h) - fit_h.params[0]):.4f});  "
          f"log10 q_v ours {np.log10(est.q_v):.4f} statsmodels {fit_v.params[0]:.4f} "
          f"(|diff| {abs(np.log10(est.q_v) - fit_v.params[0]):.4f})   (guide < 0.01)")
    print(f"  true log10 q_h {np.log10(Q_H):.4f}, log10 q_v {np.log10(Q_V):.4f}")

    small = as_track(*scenario(10_000, seed=1))
    params = S.SmoothParams(horizontal_strength=45.0, vertical_strength=55.0)
    slider, prop = best_of(9, lambda: S.smooth(small, params))
    print("Interactive: smooth() proposal for 10,000 points at a fixed strength "
          "(projection, both smoothers with std, back-projection, before/after totals)")
    print(f"  {ms(slider)}   (guide well under 60 ms)")
    auto, _ = best_of(3, lambda: S.smooth(small))
    print(f"  with automatic strength: {ms(auto)}")


if __name__ == "__main__":
    main()
