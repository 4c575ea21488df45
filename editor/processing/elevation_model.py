"""State-space models of the elevation tool, solved exactly in information form with one banded Cholesky.

Combine model (per knot ``i`` = distinct time of a segment)
-----------------------------------------------------------
State ``x = [h, v, b]``: the true height ``h`` and its rate ``v`` follow the same constant-velocity
model as the smoother (:mod:`.kalman`: white acceleration of spectral density ``q_h``,
``Q(dt) = q_h [[dt^3/3, dt^2/2], [dt^2/2, dt]]``), and the recording's offset ``b`` is a random walk
with ``Var(b[i+1] - b[i]) = q_b dt`` -- a slowly varying error that absorbs a barometer's drift
and calibration, or a satellite receiver's slow elevation wander. Two measurements of the same
height::

    recorded = h + b + e_rec,   Var(e_rec) = r_rec[i]
    terrain  = h + e_ter,       Var(e_ter) = r_ter[i]       (NaN = missing, either)

Why information form: with a flat (improper) prior on the first state of every segment, the
smoothed means are the solution of ``P x = g`` with ``P`` the posterior precision. ``P`` is
block-tridiagonal with 3x3 blocks, i.e. banded with half-bandwidth 5 when the states are
interleaved ``h0 v0 b0 h1 v1 b1 ...``; one LAPACK ``pbtrf`` factorisation (scipy's
``cholesky_banded``) solves it in O(n). This is the RTS smoother's mean (Rauch, Tung & Striebel
1965 give the same estimate as the maximum a posteriori solution; the equivalence is standard,
cited from memory), checked against statsmodels' Kalman smoother in the tests. A weak prior
(standard deviation :data:`WEAK_PRIOR_M`) on each segment's first state keeps ``P`` definite when a
segment has no terrain at all (then ``b`` stays 0 and ``h`` follows the recording).

The local-level likelihood (:func:`offset_drift_loglik`) estimates ``q_b`` from the difference
between the recording and the terrain: a random walk plus white noise, its diffuse likelihood
``-1/2 [sum log r + sum log(q dt) + log det P + y'R^-1 y - g'P^-1 g]`` (the Gaussian marginal
likelihood with the walk's increments as prior), concentrated over a common variance scale.
"""
from __future__ import annotations

import numpy as np
from scipy.linalg import cho_solve_banded, cholesky_banded

#: Standard deviation (m, m/s, m) of the weak prior on each segment's first state.
WEAK_PRIOR_M = 1.0e4
#: Shortest step between knots; shorter steps (same-time rows) are merged into one knot first.
_KD = 5


def knots(t: np.ndarray, starts: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """``(knot_of_row, knot_times, first_knot_of_segment)``: rows with the same time in a segment share a knot."""
    n = len(t)
    new = np.ones(n, dtype=bool)
    new[1:] = np.diff(t) > 0
    new[starts] = True
    knot_of_row = np.cumsum(new) - 1
    first = knot_of_row[starts]
    return knot_of_row, t[new], first


def _merge(knot_of_row, m, z, r):
    """Information (sum of 1/r) and information-weighted sum of z per knot; NaN z or r counts as missing."""
    ok = np.isfinite(z) & np.isfinite(r) & (r > 0)
    w = np.where(ok, 1.0 / np.where(ok, r, 1.0), 0.0)
    info = np.bincount(knot_of_row, weights=w, minlength=m)
    wz = np.bincount(knot_of_row, weights=np.where(ok, w * np.where(ok, z, 0.0), 0.0), minlength=m)
    return info, wz


def combine_smooth(t, starts, recorded, r_rec, terrain, r_ter, q_h: float, q_b: float
                   ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Smoothed ``(h, b, v)`` per row of the combine model (see module notes). Arrays of length n."""
    t = np.asarray(t, dtype=np.float64)
    starts = np.asarray(starts, dtype=np.int64)
    kr, tk, first = knots(t, starts)
    m = len(tk)
    i_rec, g_rec = _merge(kr, m, np.asarray(recorded, float), np.broadcast_to(r_rec, t.shape))
    i_ter, g_ter = _merge(kr, m, np.asarray(terrain, float), np.broadcast_to(r_ter, t.shape))
    # steps between consecutive knots; none across a segment boundary
    dt = np.diff(tk)
    link = np.ones(max(m - 1, 0), dtype=bool)
    link[first[1:] - 1] = False
    dt = np.where(link, dt, 1.0)
    on = link.astype(np.float64)
    a00, a01, a11 = 12.0 / dt ** 3 / q_h * on, 6.0 / dt ** 2 / q_h * on, 4.0 / dt / q_h * on
    wb = 1.0 / (q_b * dt) * on
    prior = np.zeros(m)
    prior[first] = 1.0 / WEAK_PRIOR_M ** 2

    # diagonal blocks (lower triangle), per knot: entries (h,h) (v,h) (v,v) (b,h) (b,v) (b,b)
    hh = i_rec + i_ter + prior
    vv = prior.copy()
    bb = i_rec + prior
    bh = i_rec.copy()
    vh = np.zeros(m)
    # F'WF = [[12/dt^3, 6/dt^2], [6/dt^2, 4/dt]]/q on the earlier knot, W on the later one
    hh[:-1] += a00
    vh[:-1] += a01
    vv[:-1] += a11
    bb[:-1] += wb
    hh[1:] += a00
    vh[1:] -= a01
    vv[1:] += a11
    bb[1:] += wb
    ab = np.zeros((_KD + 1, 3 * m))
    ab[0, 0::3], ab[0, 1::3], ab[0, 2::3] = hh, vv, bb
    ab[1, 0::3] = vh          # (v_i, h_i)
    ab[1, 1::3] = 0.0         # (b_i, v_i)
    ab[2, 0::3] = bh          # (b_i, h_i)
    # off-diagonal blocks -W A (rows: knot i+1, cols: knot i):
    # hv part [[-12/dt^3, -6/dt^2], [6/dt^2, 2/dt]]/q, b part -wb
    if m > 1:
        ab[3, 0:-3:3] = -a00                 # (h_{i+1}, h_i)
        ab[2, 1:-3:3] = -a01                 # (h_{i+1}, v_i): offset 3 + 0 - 1 = 2
        ab[4, 0:-3:3] = a01                  # (v_{i+1}, h_i): offset 4
        ab[3, 1:-3:3] = 2.0 / dt / q_h * on  # (v_{i+1}, v_i)
        ab[3, 2:-3:3] = -wb                  # (b_{i+1}, b_i)
    rhs = np.zeros(3 * m)
    rhs[0::3] = g_rec + g_ter
    rhs[2::3] = g_rec
    chol = cholesky_banded(ab, lower=True, check_finite=False)
    x = cho_solve_banded((chol, True), rhs, check_finite=False)
    return x[0::3][kr], x[2::3][kr], x[1::3][kr]


class OffsetDrift:
    """Random walk plus white noise for one series ``d``, prepared once for many likelihood evaluations.

    Variances: white ``scale * r_rel[i]``, walk ``scale * ratio * dt``; :meth:`loglik` maximises over
    ``scale`` in closed form (see module notes) with one tridiagonal Cholesky per call.
    """

    def __init__(self, t, starts, d, r_rel=1.0):
        t = np.asarray(t, dtype=np.float64)
        d = np.asarray(d, dtype=np.float64)
        kr, tk, first = knots(t, np.asarray(starts, dtype=np.int64))
        m = len(tk)
        r_all = np.asarray(np.broadcast_to(r_rel, t.shape), dtype=np.float64)
        self.info, self.g = _merge(kr, m, d, r_all)
        ok = np.isfinite(d) & np.isfinite(r_all)
        observed = np.bincount(kr, weights=ok.astype(float), minlength=m) > 0
        dt = np.diff(tk)
        self.link = np.ones(max(m - 1, 0), dtype=bool)
        self.link[first[1:] - 1] = False
        self.dt = np.where(self.link, dt, 1.0)
        self.log_dt = float(np.log(self.dt[self.link]).sum())
        self.first = first
        self.m = m
        segments_observed = len(np.unique(np.searchsorted(first, np.flatnonzero(observed), side="right")))
        self.dof = max(int(ok.sum()) - segments_observed, 1)
        self.zrz = float(np.sum(d[ok] ** 2 / r_all[ok]))
        self.log_r = float(np.log(r_all[ok]).sum())

    def loglik(self, ratio: float) -> tuple[float, float]:
        """``(loglik, scale)`` at the walk-to-white ratio ``ratio`` (1/s)."""
        w = np.where(self.link, 1.0 / (ratio * self.dt), 0.0)
        ab = np.zeros((2, self.m))
        ab[0] = self.info
        ab[0, :-1] += w
        ab[0, 1:] += w
        ab[0, self.first] += 1.0 / WEAK_PRIOR_M ** 2
        ab[1, :-1] = -w
        chol = cholesky_banded(ab, lower=True, check_finite=False)
        mean = cho_solve_banded((chol, True), self.g, check_finite=False)
        quad = self.zrz - float(self.g @ mean)
        scale = max(quad / self.dof, 1e-12)
        logdet_p = 2.0 * float(np.log(chol[0]).sum())
        n_links = int(self.link.sum())
        ll = -0.5 * (self.dof * np.log(2 * np.pi * scale) + self.dof + self.log_r
                     + n_links * np.log(ratio) + self.log_dt + logdet_p)
        return float(ll), scale


def offset_drift_loglik(t, starts, d, r_rel, ratio: float) -> tuple[float, float]:
    """Concentrated diffuse log-likelihood of ``d`` as random walk + white noise; returns ``(loglik, scale)``.

    Variances: white ``scale * r_rel[i]``, walk ``scale * ratio * dt``; ``scale`` maximised in closed form.
    """
    return OffsetDrift(t, starts, d, r_rel).loglik(ratio)
