"""Kalman filter and Rauch–Tung–Striebel smoother for tracks: arrays in, arrays out.

Model (per axis; the ``k`` axes are independent and share ``q``)
----------------------------------------------------------------
State ``x = [position, velocity]`` (metres, m/s) at each row's own time (no
resampling), ``x[i+1] = F(dt) x[i] + w``, ``F(dt) = [[1, dt], [0, 1]]``, and

* ``q_form="continuous"`` (default): white acceleration noise of spectral density
  ``q`` (m^2/s^3), ``Q(dt) = q [[dt^3/3, dt^2/2], [dt^2/2, dt]]``;
* ``q_form="discrete"``: piecewise-constant acceleration of variance ``q``
  (m^2/s^4), ``Q(dt) = q [[dt^4/4, dt^3/2], [dt^3/2, dt^2]]`` (Kalata 1984). It
  describes a fixed sampling grid, so it is refused with missing measurements.

Measurements ``z[i] = position[i] + e``, ``Var(e) = r[i]`` (m^2); NaN means
missing: the state is predicted through, not updated. Rows with the same time
(``dt = 0``) observe the same state. Independent sequences (track segments) can
be passed together with ``starts``; nothing is smoothed across their boundaries.

Initialisation: exact diffuse (Durbin & Koopman 2012, ch. 5, cited from memory),
i.e. the limit of an infinitely wide prior on the first position and velocity, so nothing is
assumed about where the track starts or how fast it moves. The first two
distinct observed times of a sequence fix the state; an axis with fewer than
two is returned as documented in :func:`rts_smooth`.

The log-likelihood is the Gaussian prediction-error (innovation) log-likelihood
summed over observed measurements, in the exact diffuse form with the
convention of statsmodels (``P_inf = I``).

How it is computed: see :mod:`.contrast` (the smoother as one banded
LAPACK solve in second divided differences) and :mod:`.covariance`
(filter gains and the two-filter smoothed covariance read off the same
factorisation). Every step is O(n) with no per-point Python loop.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.linalg import solve_discrete_are

from . import covariance as kcov
from .contrast import (LOG_2PI, check_q_form, diffuse_loglik, factor, log_det, solve,
                              smoothed_knots, unit_process_noise, whiten)
from .rows import AxisClass, axis_classes, validate

__all__ = ["RtsResult", "rts_smooth", "loglik", "innovations", "filter_gains", "steady_state_gain",
           "Problem"]


@dataclass(frozen=True)
class RtsResult:
    """Smoother output; arrays are (n, k), or (n,) when ``z`` was one-dimensional.

    Attributes
    ----------
    position : smoothed positions, metres.
    velocity : smoothed velocities, m/s.
    position_std : posterior standard deviation of the position, metres (``None``
        unless asked for).
    loglik : innovation log-likelihood of the measurements.
    """

    position: np.ndarray
    velocity: np.ndarray
    position_std: np.ndarray | None
    loglik: float


class Problem:
    """Measurements prepared once, for many evaluations with different ``q`` (and ``r`` scale).

    Parameters are those of :func:`rts_smooth`. ``loglik(q, r_scale)`` is one
    banded factorisation per axis class.
    """

    def __init__(self, t_s, z, r, *, q_form: str = "continuous", starts=None):
        check_q_form(q_form)
        self.t, self.z, self.r, _, self.seq, self.was_1d = validate(t_s, z, r, 1.0, starts)
        self.q_form = q_form
        self.classes = [AxisClass.build(axes, self.t, self.z, self.r, self.seq, q_form)
                        for axes in axis_classes(self.z, self.r)]
        if q_form == "discrete" and np.isnan(self.z).any():
            raise ValueError("the discrete white-noise acceleration model is defined on the sampling "
                             "grid and does not support missing measurements; use q_form='continuous'")

    @property
    def n_contrasts(self) -> int:
        """Effective number of measurements summed over axes (for concentrating ``r``)."""
        return sum(len(c.axes) * (int(c.knots.centre.sum()) + c.n_merged) for c in self.classes)

    def loglik(self, q: float, r_scale: float = 1.0) -> float:
        """Log-likelihood with process noise ``q`` and every measurement variance times ``r_scale``."""
        total = 0.0
        for cls in self.classes:
            chol = factor(cls.system.band(q, r_scale))
            w = whiten(chol, cls.contrasts)
            quad = np.einsum("ij,ij->i", w, w)
            total += float(diffuse_loglik(cls.system, chol, quad).sum()
                           + cls.within_loglik(r_scale).sum())
        return total

    def concentrated(self, q_over_r: float) -> tuple[float, float]:
        """Maximise over the ``r`` scale for a fixed ratio ``q / r_scale``; returns ``(loglik, r_scale)``.

        With an exact diffuse start the likelihood is exactly scale-equivariant:
        ``M(s q, s r) = s M(q, r)`` on the contrast rows, so one factorisation gives the
        log-likelihood for every scale ``s`` and the best one in closed form,
        ``s = (quadratic forms) / (contrasts + merged rows)``, summed over axes.
        """
        parts = []
        quad_total = 0.0
        for cls in self.classes:
            chol = factor(cls.system.band(q_over_r))
            w = whiten(chol, cls.contrasts)
            quad = np.einsum("ij,ij->i", w, w)
            parts.append((cls, log_det(chol), quad))
            quad_total += float(quad.sum() + cls.within_sq.sum())
        dof = self.n_contrasts
        scale = quad_total / dof if dof > 0 and quad_total > 0 else 1.0
        total = 0.0
        for cls, logdet, quad in parts:
            n_c = int(cls.knots.centre.sum())
            constant = (len(cls.knots.t) * LOG_2PI + logdet + n_c * np.log(scale)
                        + 2.0 * cls.system.log_steps())
            total += float(-0.5 * (constant + quad / scale).sum() + cls.within_loglik(scale).sum())
        return total, scale

    def smooth(self, q: float, *, want_std: bool = True) -> RtsResult:
        n, k = self.z.shape
        pos = np.empty((k, n))
        vel = np.empty((k, n))
        std = np.empty((k, n)) if want_std else None
        for cls in self.classes:
            if not len(cls.knots.t):  # no measurement at all on these axes
                pos[cls.axes] = vel[cls.axes] = np.nan
                if want_std:
                    std[cls.axes] = np.nan
        total = 0.0
        for cls in self.classes:
            total += self._smooth_class(cls, q, want_std, pos, vel, std)
        if self.was_1d:
            return RtsResult(pos[0], vel[0], None if std is None else std[0], total)
        return RtsResult(pos.T, vel.T, None if std is None else std.T, total)

    def _smooth_class(self, cls: AxisClass, q, want_std, pos, vel, std) -> float:
        kn, axes = cls.knots, cls.axes
        chol = factor(cls.system.band(q))
        y = solve(chol, cls.contrasts)
        quad = np.einsum("ij,ij->i", cls.contrasts, y)
        ll = float(diffuse_loglik(cls.system, chol, quad).sum() + cls.within_loglik().sum())
        kpos, kvel = smoothed_knots(cls.system, q, cls.zbar, y)
        lo = hi = after = before = other = None
        if cls.identity:
            pos[axes], vel[axes] = kpos, kvel
        elif len(kn.t):
            left, right = cls.neighbours(self.seq)
            # one gather per output: every row reads a knot (its own, or a neighbour)
            near = np.where(left >= 0, left, np.maximum(right, 0))
            pos_c, vel_c = kpos[:, near], kvel[:, near]
            observed = np.zeros(len(self.t), dtype=bool)
            observed[cls.rows] = True
            other = np.flatnonzero(~observed & ((left >= 0) | (right >= 0)))
            lo, hi = left[other], right[other]
            after = np.where(lo >= 0, self.t[other] - kn.t[np.maximum(lo, 0)], 0.0)
            before = np.where(hi >= 0, kn.t[np.maximum(hi, 0)] - self.t[other], 0.0)
            pos_c[:, other], vel_c[:, other] = _between_means(kn, q, self.q_form, kpos, kvel,
                                                              lo, hi, after, before)
            nothing = np.flatnonzero((left < 0) & (right < 0))
            pos_c[:, nothing] = vel_c[:, nothing] = np.nan
            pos[axes], vel[axes] = pos_c, vel_c
        if want_std and len(kn.t):
            kstd, ostd = self._std(cls, q, chol, lo, hi, after, before)
            if cls.identity:
                std[axes] = kstd
            else:
                std_c = kstd[near]
                std_c[other] = ostd
                std_c[nothing] = np.nan
                std[axes] = std_c
        return ll

    def _std(self, cls: AxisClass, q, chol, lo, hi, after, before):
        kn, r = cls.knots, cls.system.r
        rev_chol = factor(kcov.reverse_band(cls.system.band(q)))
        fwd = kcov.filter_pass(kn, r, q, self.q_form, chol)
        bwd = kcov.filter_pass(kcov.reversed_knots(kn), r[::-1].copy(), q, self.q_form, rev_chol)
        with np.errstate(divide="ignore", invalid="ignore"):
            kvar = kcov.smoothed_covariance(fwd, bwd)[0]
        # a sequence with a single observed time: the position is known there only
        lone = kn.size == 1
        kvar[lone] = r[lone]
        if lo is None:
            return np.sqrt(kvar), None
        with np.errstate(divide="ignore", invalid="ignore"):
            ovar = kcov.covariance_at(kn, r, q, self.q_form, fwd, bwd, lo, hi, after, before)[0]
        near = np.where(lo >= 0, lo, hi)
        lone_rows = lone[near]
        ovar[lone_rows] = np.where((after[lone_rows] == 0) & (before[lone_rows] == 0),
                                   r[near[lone_rows]], np.inf)
        return np.sqrt(kvar), np.sqrt(ovar)

    def innovations(self, q: float) -> tuple[np.ndarray, np.ndarray]:
        n, k = self.z.shape
        nu = np.full((k, n), np.nan)
        s_out = np.full((k, n), np.nan)
        for cls in self.classes:
            kn = cls.knots
            chol = factor(cls.system.band(q))
            w = whiten(chol, cls.contrasts)
            fwd = kcov.filter_pass(kn, cls.system.r, q, self.q_form, chol)
            with np.errstate(invalid="ignore"):
                # the contrast centred at knot i-1 carries the innovation of knot i
                knot_nu = np.where(kn.local >= 2, _shift_right(w) * np.sqrt(fwd.s), 0.0)
            _sequential_rows(cls, fwd.s, knot_nu, self.z, self.r, nu, s_out)
        if self.was_1d:
            return nu[0], s_out[0]
        return nu.T, s_out.T


def _shift_right(x: np.ndarray) -> np.ndarray:
    out = np.zeros_like(x)
    out[..., 1:] = x[..., :-1]
    return out


def _between_means(kn, q, q_form, kpos, kvel, lo, hi, after, before):
    """Posterior means (k, rows) between or beyond knots: IWP bridge / straight extrapolation."""
    k = kpos.shape[0]
    opos = np.full((k, len(lo)), np.nan)
    ovel = np.full((k, len(lo)), np.nan)
    both = (lo >= 0) & (hi >= 0)
    only_left, only_right = (lo >= 0) & ~both, (hi >= 0) & ~both
    for mask, knot, dt in ((only_left, lo, after), (only_right, hi, -before)):
        i = knot[mask]
        step = np.where(kn.size[i] == 1, 0.0, dt[mask])
        opos[:, mask] = kpos[:, i] + step * kvel[:, i]
        ovel[:, mask] = kvel[:, i]
    a, b, tau = lo[both], hi[both], after[both]
    h = kn.h[a]
    rho = h - tau
    tpp, tpv, tvv = (q * e for e in unit_process_noise(tau, q_form))
    hpp, hpv, hvv = (q * e for e in unit_process_noise(h, q_form))
    ia, ib, id_ = kcov.sym_inverse(hpp, hpv, hvv)
    # G = Q(tau) F(h - tau)^T Q(h)^-1; mean = F(tau) x_a + G (x_b - F(h) x_a)
    m00, m01, m10, m11 = tpp + rho * tpv, tpv, tpv + rho * tvv, tvv
    g00, g01 = m00 * ia + m01 * ib, m00 * ib + m01 * id_
    g10, g11 = m10 * ia + m11 * ib, m10 * ib + m11 * id_
    pa, va, pb, vb = kpos[:, a], kvel[:, a], kpos[:, b], kvel[:, b]
    dp = pb - pa - h * va
    dv = vb - va
    opos[:, both] = pa + tau * va + g00 * dp + g01 * dv
    ovel[:, both] = va + g10 * dp + g11 * dv
    return opos, ovel


def _sequential_rows(cls: AxisClass, s_knot, nu_knot, z, r, nu, s_out) -> None:
    """Per-row innovations (into axis-major ``nu``, ``s_out``): rows merged into one knot are
    updated one after another, exactly as a filter that sees them in turn."""
    axes, rows = cls.axes, cls.rows
    if cls.n_merged == 0:
        target = np.ix_(axes, rows)
        nu[target] = nu_knot
        s_out[target] = s_knot
        return
    finite = np.isfinite(s_knot)
    # prediction for the knot's first row; a diffuse knot predicts nothing (infinite variance)
    mean = np.where(finite, cls.zbar - nu_knot, 0.0)
    var = np.where(finite, s_knot - cls.system.r, np.inf)
    first = np.ones(len(rows), dtype=bool)
    first[1:] = cls.knot_of_obs[1:] != cls.knot_of_obs[:-1]
    rank = np.arange(len(rows)) - np.flatnonzero(first)[cls.knot_of_obs]
    for j in range(int(rank.max(initial=-1)) + 1):
        sel = np.flatnonzero(rank == j)
        knot, row = cls.knot_of_obs[sel], rows[sel]
        zr, rr = z[np.ix_(row, axes)].T, r[row, axes[0]]
        p = var[knot]
        diffuse = ~np.isfinite(p)
        s = p + rr
        innovation = np.where(diffuse, 0.0, zr - mean[:, knot])
        nu[np.ix_(axes, row)] = innovation
        s_out[np.ix_(axes, row)] = s
        gain = np.where(diffuse, 1.0, p / np.where(diffuse, 1.0, s))
        mean[:, knot] = np.where(diffuse, zr, mean[:, knot] + gain * innovation)
        var[knot] = np.where(diffuse, rr, p * rr / np.where(diffuse, 1.0, s))


def _check_q(q) -> float:
    q = float(q)
    if not (np.isfinite(q) and q > 0):
        raise ValueError(f"q must be finite and > 0, got {q!r}")
    return q


def rts_smooth(t_s, z, r, q, *, want_std: bool = True, q_form: str = "continuous",
               starts=None) -> RtsResult:
    """Smooth measurements with the constant-velocity RTS smoother.

    Parameters
    ----------
    t_s : (n,) times in seconds, non-decreasing within each sequence.
    z : (n, k) or (n,) measured positions in metres; NaN = missing.
    r : scalar, (n,) or (n, k) measurement variances, m^2.
    q : process noise (see module notes for units).
    want_std : also compute the posterior standard deviation of the positions.
    q_form : ``"continuous"`` or ``"discrete"``.
    starts : optional row indices where independent sequences start (first 0).

    Returns
    -------
    RtsResult. Missing rows get the predicted (interpolated) state. An axis with no
    observation in a sequence is NaN there; with a single observed time it is
    constant, velocity 0, and its standard deviation is infinite away from that time.
    """
    return Problem(t_s, z, r, q_form=q_form, starts=starts).smooth(_check_q(q), want_std=want_std)


def loglik(t_s, z, r, q, *, q_form: str = "continuous", starts=None) -> float:
    """Innovation log-likelihood (one banded factorisation per axis class)."""
    return Problem(t_s, z, r, q_form=q_form, starts=starts).loglik(_check_q(q))


def innovations(t_s, z, r, q, *, q_form: str = "continuous", starts=None
                ) -> tuple[np.ndarray, np.ndarray]:
    """Forward-filter innovations ``nu`` and their variances ``s``, shaped like ``z``.

    NaN where ``z`` is missing. While the prediction is still diffuse (the first
    two distinct times of a sequence) ``s`` is ``inf`` and ``nu`` is 0, so the
    normalised innovation squared ``nu**2 / s`` is 0 there.
    """
    return Problem(t_s, z, r, q_form=q_form, starts=starts).innovations(_check_q(q))


def filter_gains(t_s, r, q, *, q_form: str = "continuous") -> tuple[np.ndarray, np.ndarray]:
    """Kalman gains ``(alpha, beta)`` of the forward filter at every row (one sequence, no gaps).

    ``alpha`` is the position gain and ``beta = dt * (velocity gain)`` with ``dt`` the
    step before the row, as in Kalata (1984). NaN for the first two rows (diffuse).
    """
    t = np.asarray(t_s, dtype=np.float64)
    problem = Problem(t, np.zeros(len(t)), r, q_form=q_form)
    cls = problem.classes[0]
    kn = cls.knots
    q = _check_q(q)
    fwd = kcov.filter_pass(kn, cls.system.r, q, q_form, factor(cls.system.band(q)))
    pp, pv, _ = fwd.pred
    alpha_k = pp / fwd.s
    beta_k = np.full(len(kn.t), np.nan)
    beta_k[1:] = pv[1:] / fwd.s[1:] * kn.h[:-1]
    return cls.to_rows(alpha_k), cls.to_rows(beta_k)


def steady_state_gain(dt: float, r: float, q: float, q_form: str = "discrete") -> tuple[float, float]:
    """Steady-state ``(alpha, beta)`` for a uniform step ``dt`` from the filter Riccati equation.

    Solved with :func:`scipy.linalg.solve_discrete_are` on the dual (filter) problem;
    ``K = P- H^T / (H P- H^T + r) = [alpha, beta / dt]``.
    """
    f = np.array([[1.0, dt], [0.0, 1.0]])
    qpp, qpv, qvv = (float(q) * float(e[0]) for e in unit_process_noise(np.array([float(dt)]), q_form))
    qm = np.array([[qpp, qpv], [qpv, qvv]])
    h = np.array([[1.0], [0.0]])
    p = solve_discrete_are(f.T, h, qm, np.array([[float(r)]]))
    s = p[0, 0] + r
    return float(p[0, 0] / s), float(p[1, 0] / s * dt)
