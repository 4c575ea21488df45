"""Kalman filter covariances and posterior covariances, read off the contrast factorisation.

The Cholesky factor ``M = U^T U`` of the contrast covariance (see
:mod:`.contrast`) *is* the forward Kalman filter in disguise. With
``nu`` the filter's innovations, ``s`` their variances and ``K = [Kp, Kv]`` its
gains, the contrast centred at knot ``i`` is exactly the moving average

    c = nu[i+1] / h[i] + A nu[i] + B nu[i-1],
    A = (Kp[i] - 1) / h[i] + Kv[i] - 1 / h[i-1],   B = (1 - Kp[i-1]) / h[i-1],

(``h[i]`` the step after knot ``i``) and the innovations are independent, so by
uniqueness of the Cholesky factor ``U[j, j] = sqrt(s[i+1]) / h[i]``,
``U[j-1, j] = A sqrt(s[i])`` and ``U[j-2, j] = B sqrt(s[i-1])``. From these
``s``, ``Kp = 1 - r / s`` and ``Kv`` follow for every knot at once, hence the
predicted covariance ``P-`` (its velocity variance from the next step's
``P-[p, v]``). The same read-out on the time-reversed problem (the factor of the
reversed band) gives the backward filter, and the two-filter formula
(Fraser & Potter 1969, cited from memory)
``Sigma = (Y_forward_filtered + Y_backward_predicted)^-1`` gives the smoothed
covariance of every knot without a per-point loop. (The read-out is checked
against statsmodels' filter and smoother in the tests.)

Diffuse start: after the first knot of a sequence only the position is known;
after the second, both. Those two knots, and the last two of each sequence
(where the read-out runs out of contrasts), use closed forms or one explicit
prediction step, vectorised over sequences.

2x2 symmetric matrices are kept as triples of arrays ``(pp, pv, vv)``.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .contrast import Knots, shift_next, shift_prev, unit_process_noise


def sym_inverse(a, b, d):
    det = a * d - b * b
    return d / det, -b / det, a / det


def predict(pp, pv, vv, h, qpp, qpv, qvv):
    """``F P F^T + Q`` for steps ``h`` (seconds, >= 0)."""
    return (pp + 2.0 * h * pv + h * h * vv + qpp, pv + h * vv + qpv, vv + qvv)


def update(pp, pv, vv, r):
    """Measurement update of a predicted covariance with a position measurement of variance ``r``."""
    s = pp + r
    return pp * r / s, pv * r / s, vv - pv * pv / s


def reverse_band(band: np.ndarray) -> np.ndarray:
    """Band storage of ``P M P`` with ``P`` the order-reversing permutation (upper storage)."""
    out = np.zeros_like(band, order="F")
    u = band.shape[0] - 1
    for row in range(band.shape[0]):
        offset = u - row
        out[row, offset:] = band[row, offset:][::-1]
    return out


def reversed_knots(knots: Knots) -> Knots:
    return Knots.build(-knots.t[::-1], (knots.seq.max(initial=0) - knots.seq)[::-1])


@dataclass
class FilterPass:
    """Forward filter quantities at every knot of a system.

    ``s`` is ``inf`` where the prediction is still diffuse (first two knots of a
    sequence). ``pred`` (covariance) is NaN there; ``pred_info`` is exact everywhere
    (zero, then rank one). ``filt`` (covariance) is NaN at the first knot.
    """

    s: np.ndarray
    pred: tuple
    pred_info: tuple
    filt: tuple
    filt_info: tuple


def filter_pass(knots: Knots, r: np.ndarray, q: float, q_form: str, chol: np.ndarray) -> FilterPass:
    """Read the forward Kalman filter off the factor ``chol`` of ``M(q)`` (see module notes)."""
    local, size, h = knots.local, knots.size, knots.h
    qpp, qpv, qvv = (q * e for e in unit_process_noise(h, q_form))
    h_prev = shift_prev(h)
    with np.errstate(divide="ignore", invalid="ignore"):
        # s at knot i comes from the contrast centred at i-1
        s = np.where(local >= 2, (h_prev * shift_prev(chol[2])) ** 2, np.inf)
        kv = chol[1] / np.sqrt(s) + r / (s * h) + 1.0 / h_prev
        ppp = s - r
        ppv = kv * s
        fpp = ppp * r / s
        fpv = kv * r
        # filtered velocity variance from the next knot's predicted position-velocity covariance
        fvv = (shift_next(ppv) - qpv - fpv) / h
        pvv = fvv + s * kv * kv
        # second knot of a sequence: exact filter after two measurements
        q_back = shift_prev(qpp - 2.0 * h * qpv + h * h * qvv)
        r_prev = shift_prev(r, 1.0)
        second = local == 1
        fpp = np.where(second, r, fpp)
        fpv = np.where(second, r / h_prev, fpv)
        fvv = np.where(second, (r_prev + r + q_back) / (h_prev * h_prev), fvv)
    nan = np.nan
    inner = (local >= 2) & (local <= size - 3)
    ppp, ppv, pvv = (np.where(inner, x, nan) for x in (ppp, ppv, pvv))
    keep = inner | second
    fpp, fpv, fvv = (np.where(keep, x, nan) for x in (fpp, fpv, fvv))
    # the last two knots of a sequence: explicit prediction steps (a few per sequence)
    for end in (2, 1):
        i = np.flatnonzero((local == size - end) & (local >= 2))
        p = i - 1
        pred = predict(fpp[p], fpv[p], fvv[p], h[p], qpp[p], qpv[p], qvv[p])
        ppp[i], ppv[i], pvv[i] = pred
        fpp[i], fpv[i], fvv[i] = update(*pred, r[i])
    later = local >= 2
    with np.errstate(divide="ignore", invalid="ignore"):
        ya, yb, yd = sym_inverse(ppp, ppv, pvv)
        g = 1.0 / (r_prev + q_back)
    ya = np.where(later, ya, np.where(second, g, 0.0))
    yb = np.where(later, yb, np.where(second, -h_prev * g, 0.0))
    yd = np.where(later, yd, np.where(second, h_prev * h_prev * g, 0.0))
    filt_info = (ya + 1.0 / r, yb, yd)
    return FilterPass(s=s, pred=(ppp, ppv, pvv), pred_info=(ya, yb, yd),
                      filt=(fpp, fpv, fvv), filt_info=filt_info)


def flip(triple, index=None):
    """Reversed-time quantities to original time: velocity changes sign."""
    a, b, d = triple
    if index is None:
        return a[::-1], -b[::-1], d[::-1]
    return a[::-1][index], -b[::-1][index], d[::-1][index]


def smoothed_covariance(forward: FilterPass, backward: FilterPass):
    """Two-filter smoothed covariance at every knot: ``(Y_f + Y_b-)^-1``."""
    a, b, d = forward.filt_info
    ba, bb, bd = flip(backward.pred_info)
    return sym_inverse(a + ba, b + bb, d + bd)


def covariance_at(knots: Knots, r: np.ndarray, q: float, q_form: str, forward: FilterPass,
                  backward: FilterPass, left: np.ndarray, right: np.ndarray,
                  after_left: np.ndarray, before_right: np.ndarray):
    """Posterior covariance at times that are not knots.

    ``left`` / ``right``: knot just before / after each time (-1: none in its
    sequence); ``after_left`` / ``before_right``: distances to them (seconds, >= 0).
    Two-filter formula at the intermediate time: the forward filter at ``left``
    predicted forward, plus the backward filter at ``right`` predicted backward.
    At least two knots must be involved in total (else the result is not finite).
    """
    total = [np.zeros(len(left)) for _ in range(3)]
    for knot, dt, filt, last, direction in (
            (left, after_left, forward.filt, knots.local == 0, 1.0),
            (right, before_right, flip(backward.filt), knots.local == knots.size - 1, -1.0)):
        use = np.flatnonzero(knot >= 0)
        k = knot[use]
        info = _info_from(last[k], tuple(x[k] for x in filt), r[k], dt[use], q, q_form, direction)
        for acc, part in zip(total, info):
            acc[use] += part
    return sym_inverse(*total)


def _info_from(single, filt, r, dt, q, q_form, direction):
    """Information about the state ``dt`` after (``direction = 1``) or before (``-1``) a filtered knot.

    ``single``: that filter has seen only this knot, so it knows the position alone
    and the information is rank one, ``c c^T / (r + Var)`` with ``c = [1, -direction dt]``
    (the noise variance is the same either way: the model is time-reversible).
    Otherwise the filtered covariance is predicted by ``dt``; a backward filter is
    predicted in reversed time, where the velocity changes sign.
    """
    qpp, qpv, qvv = (q * e for e in unit_process_noise(dt, q_form))
    out_a, out_b, out_d = (np.zeros(len(dt)) for _ in range(3))
    one = np.flatnonzero(single)
    c = -direction * dt[one]
    var = qpp[one] - 2.0 * dt[one] * qpv[one] + dt[one] ** 2 * qvv[one]
    g = 1.0 / (r[one] + var)
    out_a[one], out_b[one], out_d[one] = g, c * g, c * c * g
    many = np.flatnonzero(~single)
    pp, pv, vv = (x[many] for x in filt)
    pred = predict(pp, direction * pv, vv, dt[many], qpp[many], qpv[many], qvv[many])
    pa, pb, pd = sym_inverse(pred[0], direction * pred[1], pred[2])
    out_a[many], out_b[many], out_d[many] = pa, pb, pd
    return out_a, out_b, out_d
