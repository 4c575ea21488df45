"""The constant-velocity smoother solved through second divided differences ("contrasts").

Why this form
-------------
Per axis the model is a constant-velocity state ``x = [p, v]`` driven by white
acceleration noise, ``x[i+1] = F(h) x[i] + w[i]``, ``Cov(w[i]) = q Q~(h)``,
observed as ``z[i] = p[i] + e[i]``, ``Var(e[i]) = r[i]``, with an exact diffuse
initial state. Two facts make it cheap:

* The second divided differences ``u = D^T p`` of the positions at the observed
  times ("contrasts", one per interior knot) are independent of the diffuse
  initial state and form a moving average of order one in the noise, so
  ``Cov(u) = q R`` with ``R`` tridiagonal. The data contrasts ``c = D^T z`` are
  then Gaussian with the *pentadiagonal* covariance ``M = q R + D^T diag(r) D``.
  (For the continuous model this is the classic statement that the smoother is
  the natural cubic smoothing spline: Wahba 1978, J. R. Stat. Soc. B 40:364-372;
  Wecker & Ansley 1983, JASA 78:81-89; the band matrices are those of Reinsch
  1967 / Green & Silverman 1994, ch. 2 -- citations recalled from memory; the
  equivalence itself is tested against scipy's ``make_smoothing_spline``.)
* One banded Cholesky factorisation of ``M`` (LAPACK ``dpbtrf``, bandwidth 2,
  one column per knot) gives the smoothed positions
  ``p^ = z - diag(r) D M^-1 c``, the velocities, the exact diffuse log-likelihood
  (log-determinant plus quadratic form), and, read row by row, the Kalman
  filter's innovation variances and gains (see :mod:`.covariance`).

The form stays well conditioned for short steps (``M`` is a sum of positive
semi-definite terms, no ``Q^-1`` appears), and never subtracts large absolute
coordinates: only differences of measurements enter.

Knots are the distinct observed times of one axis class (axes sharing their
missing pattern and measurement variances); measurements at the same time
are merged into one knot first (their information adds). Several independent
sequences (track segments) are handled in one banded system with zero coupling
between them. Every array is aligned on the knots: knot ``i`` carries the
contrast centred on it, and knots without one (the two ends of each sequence)
carry a decoupled identity row, so all shifts are slices, never gathers.
Per-axis arrays are axis-major, shape (k, m).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.linalg import lapack

LOG_2PI = float(np.log(2.0 * np.pi))


def check_q_form(q_form: str) -> None:
    if q_form not in ("continuous", "discrete"):
        raise ValueError(f"q_form must be 'continuous' or 'discrete', not {q_form!r}")


def unit_process_noise(h: np.ndarray, q_form: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Entries ``(Qpp, Qpv, Qvv)`` of the process noise for ``q = 1`` over steps ``h`` (seconds).

    ``"continuous"``: ``Q = q [[h^3/3, h^2/2], [h^2/2, h]]`` (white acceleration of
    spectral density ``q``, m^2/s^3). ``"discrete"``: ``Q = q [[h^4/4, h^3/2], [h^3/2, h^2]]``
    (piecewise-constant white acceleration of variance ``q``, as in Kalata 1984).
    """
    if q_form == "continuous":
        h2 = h * h
        return h2 * h / 3.0, h2 / 2.0, h.copy()
    if q_form == "discrete":
        h2 = h * h
        return h2 * h2 / 4.0, h2 * h / 2.0, h2
    raise ValueError(f"q_form must be 'continuous' or 'discrete', not {q_form!r}")


@dataclass
class Knots:
    """Distinct observed times of one axis class, possibly in several sequences.

    Attributes
    ----------
    t : (m,) knot times, seconds.
    seq : (m,) sequence number of each knot (non-decreasing).
    local : (m,) index of the knot inside its sequence.
    size : (m,) number of knots of the knot's sequence.
    h : (m,) step to the next knot of the same sequence; 0 for the last knot of a sequence.
    centre : (m,) bool, the knot has a neighbour on both sides (it carries a contrast).
    """

    t: np.ndarray
    seq: np.ndarray
    local: np.ndarray
    size: np.ndarray
    h: np.ndarray
    centre: np.ndarray

    @classmethod
    def build(cls, t: np.ndarray, seq: np.ndarray) -> "Knots":
        m = len(t)
        h = np.zeros(m)
        if m == 0 or seq[0] == seq[-1]:           # one sequence: the common case, no gathers
            local = np.arange(m)
            size = np.full(m, m)
            h[:-1] = t[1:] - t[:-1]
        else:
            new_seq = np.ones(m, dtype=bool)
            new_seq[1:] = seq[1:] != seq[:-1]
            first = np.flatnonzero(new_seq)
            counts = np.diff(np.append(first, m))
            local = np.arange(m) - np.repeat(first, counts)
            size = np.repeat(counts, counts)
            h[:-1] = np.where(new_seq[1:], 0.0, t[1:] - t[:-1])
        centre = (local >= 1) & (local <= size - 2)
        return cls(t=t, seq=seq, local=local, size=size, h=h, centre=centre)

    @property
    def has_next(self) -> np.ndarray:
        return self.local < self.size - 1


def shift_prev(x: np.ndarray, fill: float = 0.0) -> np.ndarray:
    """``x[i-1]`` aligned on ``i``."""
    out = np.empty_like(x)
    if out.shape[-1] == 0:
        return out
    out[..., 0] = fill
    out[..., 1:] = x[..., :-1]
    return out


def shift_next(x: np.ndarray, fill: float = 0.0) -> np.ndarray:
    """``x[i+1]`` aligned on ``i``."""
    out = np.empty_like(x)
    if out.shape[-1] == 0:
        return out
    out[..., -1] = fill
    out[..., :-1] = x[..., 1:]
    return out


@dataclass
class ContrastSystem:
    """The banded pieces of ``M(q) = q R + C`` for one axis class, aligned on the knots.

    ``r_band`` is ``R`` for ``q = 1`` and ``c_band`` is ``D^T diag(r) D``, both in LAPACK
    upper band storage (3 rows); ``dummy`` is 1 on knots without a contrast.
    ``d0, d1, d2`` weigh the knots before, at and after each contrast's centre.
    ``var_step`` and ``cov_step`` (per step to the next knot, q = 1) are ``Var(xi)/h^2`` and
    ``Cov(xi/h, zeta - xi/h)`` with ``xi, zeta`` the step's position and velocity noise.
    """

    knots: Knots
    r: np.ndarray
    q_form: str
    d0: np.ndarray
    d1: np.ndarray
    d2: np.ndarray
    var_step: np.ndarray
    cov_step: np.ndarray
    r_band: np.ndarray
    c_band: np.ndarray
    dummy: np.ndarray
    _log_steps: float | None = None

    @classmethod
    def build(cls, knots: Knots, r: np.ndarray, q_form: str) -> "ContrastSystem":
        check_q_form(q_form)
        h = knots.h
        m = len(h)
        centre = knots.centre.astype(np.float64)
        # in-place arithmetic on slices: this runs once per smoothing call on every knot
        inv_h = np.divide(1.0, h, out=np.zeros(m), where=h > 0)
        d2 = inv_h * centre
        d0 = np.zeros(m)
        np.multiply(inv_h[:-1], centre[1:], out=d0[1:])
        d1 = d0 + d2
        np.negative(d1, out=d1)
        # Per step (knot e -> e+1), with xi, zeta the position and velocity noise of the step:
        # Var(zeta - xi/h) = Qvv - 2 Qpv/h + Qpp/h^2, Var(xi/h) = Qpp/h^2 and
        # Cov(xi/h, zeta - xi/h) = Qpv/h - Qpp/h^2; for q = 1 these are
        # (h/3, h/3, h/6) for the continuous form and (h^2/4, h^2/4, h^2/4) for the discrete one.
        # Var(zeta - xi/h) equals Var(xi/h) in both forms.
        if q_form == "continuous":
            var_step, cov_step = h / 3.0, h / 6.0
        else:
            var_step = cov_step = h * h / 4.0
        r_band = np.zeros((3, m))
        np.add(var_step[:-1], var_step[1:], out=r_band[2, 1:])
        r_band[2] *= centre
        np.multiply(cov_step[:-1], centre[:-1], out=r_band[1, 1:])
        r_band[1] *= centre
        c_band = np.zeros((3, m))
        tmp = np.empty(m)
        diag = c_band[2]
        np.multiply(d1, d1, out=diag)
        diag *= r
        np.multiply(d0, d0, out=tmp)
        tmp[1:] *= r[:-1]
        diag += tmp
        np.multiply(d2, d2, out=tmp)
        tmp[:-1] *= r[1:]
        diag += tmp
        off1 = c_band[1, 1:]
        np.multiply(r[:-1], d1[:-1], out=off1)
        off1 *= d0[1:]
        np.multiply(r[1:], d2[:-1], out=tmp[1:])
        tmp[1:] *= d1[1:]
        off1 += tmp[1:]
        off2 = c_band[0, 2:]
        np.multiply(r[1:-1], d2[:-2], out=off2)
        off2 *= d0[2:]
        # LAPACK reads the band column by column: store it that way once, so that every
        # band(q) of a likelihood search is a contiguous multiply-add
        return cls(knots=knots, r=r, q_form=q_form, d0=d0, d1=d1, d2=d2, var_step=var_step,
                   cov_step=cov_step, r_band=np.asfortranarray(r_band),
                   c_band=np.asfortranarray(c_band), dummy=1.0 - centre)

    def contrasts(self, z: np.ndarray) -> np.ndarray:
        """``c = D^T z`` for knot values ``z`` of shape (k, m); 0 on knots without a contrast."""
        out = self.d1 * z
        if out.shape[-1] > 1:
            out[..., 1:] += self.d0[1:] * z[..., :-1]
            out[..., :-1] += self.d2[:-1] * z[..., 1:]
        return out

    def band(self, q: float, r_scale: float = 1.0) -> np.ndarray:
        """Band of ``M = q R + r_scale C`` (identity rows where no contrast), Fortran order."""
        band = np.empty(self.r_band.shape, order="F")
        np.multiply(self.r_band, q, out=band)
        if r_scale == 1.0:
            band += self.c_band
        else:
            band += r_scale * self.c_band
        band[2] += self.dummy
        return band

    def log_steps(self) -> float:
        """``sum(log h)`` over all steps between knots; part of the diffuse likelihood's constant."""
        if self._log_steps is None:
            h = self.knots.h
            self._log_steps = float(np.log(h[h > 0]).sum())
        return self._log_steps


def factor(band: np.ndarray) -> np.ndarray:
    """Upper banded Cholesky factor of ``band`` (LAPACK ``dpbtrf``, overwrites ``band``)."""
    if band.shape[1] == 0:
        return band
    chol, info = lapack.dpbtrf(band, lower=0, overwrite_ab=1)
    if info != 0:
        raise np.linalg.LinAlgError(
            f"the smoothing system is not positive definite (LAPACK dpbtrf info={info}); "
            "check for infinite or zero measurement variances")
    return chol


def solve(chol: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    """``M^-1 rhs`` for axis-major ``rhs`` (k, m)."""
    if chol.shape[1] == 0:
        return rhs.copy()
    out, info = lapack.dpbtrs(chol, rhs.T, lower=0)
    if info != 0:
        raise np.linalg.LinAlgError(f"LAPACK dpbtrs failed (info={info})")
    return out.T


def whiten(chol: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    """``U^-T rhs``: the contrasts' normalised innovations (forward substitution only)."""
    if chol.shape[1] == 0:
        return rhs.copy()
    out, info = lapack.dtbtrs(chol, rhs.T, uplo="U", trans="T", diag="N")
    if info != 0:
        raise np.linalg.LinAlgError(f"LAPACK dtbtrs failed (info={info})")
    return out.T


def log_det(chol: np.ndarray) -> float:
    """``log det M`` from the diagonal of its Cholesky factor (identity rows add nothing)."""
    return 2.0 * float(np.log(chol[2]).sum()) if chol.shape[1] else 0.0


def diffuse_loglik(system: ContrastSystem, chol: np.ndarray, quad: np.ndarray) -> np.ndarray:
    """Exact diffuse log-likelihood per axis given the quadratic forms ``c^T M^-1 c`` (k,).

    ``-1/2 [m log 2 pi + log det M + c^T M^-1 c + 2 sum log h]`` (merged-knot terms
    excluded): the prediction-error decomposition of Durbin & Koopman (2012,
    sec. 7.2.2) with the diffuse part of the initial covariance equal to the
    identity, the convention statsmodels uses. The ``2 sum log h`` term is the
    Jacobian between contrasts and innovations; it depends on neither ``q`` nor ``r``.
    """
    m = len(system.knots.t)
    constant = m * LOG_2PI + log_det(chol) + 2.0 * system.log_steps()
    return -0.5 * (constant + quad)


def smoothed_knots(system: ContrastSystem, q: float, z: np.ndarray, y: np.ndarray
                   ) -> tuple[np.ndarray, np.ndarray]:
    """Smoothed positions and velocities (k, m) at the knots, given ``y = M^-1 c``.

    Positions: ``p^ = z - diag(r) D y``. Velocities from the positions and the
    posterior mean of the within-step noise ``E[xi | z] = Cov(xi, u) y`` (only the
    two contrasts touching a step correlate with it); the last knot of a sequence
    uses ``v = dp/h + E[zeta - xi/h | z]``.
    """
    kn = system.knots
    # pos = z - r * (D y), built in place to spare temporaries on (k, m) arrays
    pos = system.d1 * y
    tmp = system.d2 * y
    pos[..., 1:] += tmp[..., :-1]
    np.multiply(system.d0, y, out=tmp)
    pos[..., :-1] += tmp[..., 1:]
    pos *= -system.r
    pos += z
    h = kn.h
    inv_h = np.divide(1.0, h, out=np.zeros(len(h)), where=h > 0)
    # v_i = (p_{i+1} - p_i)/h - E[xi|z]/h = dp - (a_i y_i + b_i y_{i+1}) with
    # a = Qpp/h^2 and b = Qpv/h - Qpp/h^2 (zero where there is no next knot)
    a = q * system.var_step
    b = q * system.cov_step
    vel = np.zeros_like(pos)
    np.subtract(pos[..., 1:], pos[..., :-1], out=vel[..., :-1])
    vel *= inv_h
    np.multiply(a, y, out=tmp)
    vel -= tmp
    tmp[..., :-1] = y[..., 1:]
    tmp[..., -1:] = 0.0
    tmp *= b
    vel -= tmp
    last = np.flatnonzero(~kn.has_next & (kn.local > 0))
    e = last - 1
    vel[..., last] = (pos[..., last] - pos[..., e]) * inv_h[e] + b[e] * y[..., e]
    return pos, vel
