"""From rows (points, possibly missing or simultaneous) to knots and back, for the Kalman smoother.

Rows arrive in time order inside independent sequences (track segments). Per
axis class (axes that share the missing pattern and the measurement variances)
the observed rows are grouped into knots: rows of one sequence with the same
timestamp are one state observed several times, so their information adds
(``1/r = sum 1/r_k``, ``z = r sum z_k / r_k``) and the likelihood gains the
exact within-group term. Unobserved rows are placed between the knots around
them.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .contrast import LOG_2PI, ContrastSystem, Knots


def validate(t_s, z, r, q, starts):
    """Check and normalise inputs; returns ``(t, z2d, r2d, q, seq_of_row, was_1d)``."""
    t = np.asarray(t_s, dtype=np.float64)
    if t.ndim != 1:
        raise ValueError(f"t_s must be one-dimensional, got shape {t.shape}")
    n = len(t)
    z_arr = np.asarray(z, dtype=np.float64)
    was_1d = z_arr.ndim == 1
    z2 = None
    if z_arr.ndim in (1, 2) and len(z_arr) == n:
        z2 = z_arr[:, None] if z_arr.ndim == 1 else z_arr
    if z2 is None:
        raise ValueError(f"z must have shape (n,) or (n, k) with n = {n}, got {z_arr.shape}")
    if np.isinf(z2).any():
        raise ValueError("z contains infinite values; use NaN for missing measurements")
    if not np.isfinite(t).all():
        raise ValueError(f"t_s has a non-finite time at index {int(np.flatnonzero(~np.isfinite(t))[0])}")
    seq = np.zeros(n, dtype=np.int64)
    if starts is not None and n:
        st = np.asarray(starts, dtype=np.int64)
        if len(st) == 0 or st[0] != 0 or np.any(np.diff(st) < 0) or st[-1] > n:
            raise ValueError(f"starts must begin at 0 and be non-decreasing within {n} rows")
        seq = np.searchsorted(st, np.arange(n), side="right") - 1
    back = np.flatnonzero((np.diff(t) < 0) & (seq[1:] == seq[:-1]))
    if len(back):
        i = int(back[0])
        raise ValueError(f"t_s must be non-decreasing: row {i + 1} is {t[i] - t[i + 1]:.6g} s "
                         f"before row {i}")
    r_arr = np.asarray(r, dtype=np.float64)
    r2 = np.broadcast_to(r_arr[:, None] if r_arr.ndim == 1 else r_arr, z2.shape)
    if r_arr.ndim == 0:
        if not (np.isfinite(r_arr) and r_arr > 0):
            raise ValueError(f"measurement variance r must be finite and > 0, got {float(r_arr)!r}")
    else:
        bad = np.isfinite(z2) & ~(np.isfinite(r2) & (r2 > 0))
        if bad.any():
            i = int(np.argwhere(bad)[0][0])
            raise ValueError(f"measurement variance r must be finite and > 0; row {i} has {r2[bad][0]!r}")
    q = float(q)
    if not (np.isfinite(q) and q > 0):
        raise ValueError(f"q must be finite and > 0, got {q!r}")
    return t, z2, r2, q, seq, was_1d


def axis_classes(z2: np.ndarray, r2: np.ndarray) -> list[list[int]]:
    """Group axes with the same missing pattern and variances (they share one factorisation)."""
    classes: list[list[int]] = []
    observed = np.isfinite(z2)
    for a in range(z2.shape[1]):
        for group in classes:
            b = group[0]
            if np.array_equal(observed[:, a], observed[:, b]) and np.array_equal(r2[:, a], r2[:, b]):
                group.append(a)
                break
        else:
            classes.append([a])
    return classes


@dataclass
class AxisClass:
    """Knots, contrasts and row mapping of one axis class; per-axis arrays are (k, m)."""

    axes: list
    rows: np.ndarray            # observed rows
    knot_of_obs: np.ndarray     # knot of each observed row
    identity: bool              # every row is observed and its own knot
    knots: Knots
    system: ContrastSystem
    zbar: np.ndarray            # (k, m) merged measurements
    contrasts: np.ndarray       # (k, m)
    within_const: float         # merged-knot likelihood terms that do not depend on the data
    within_sq: np.ndarray       # (k,) sum of squared within-knot deviations / r
    n_merged: int               # rows merged into another knot

    @classmethod
    def build(cls, axes, t, z2, r2, seq, q_form) -> "AxisClass":
        n = len(t)
        observed = np.isfinite(z2[:, axes[0]])
        all_rows = bool(observed.all())
        rows = np.arange(n) if all_rows else np.flatnonzero(observed)
        z_t = z2.T[axes]
        one_seq = n == 0 or seq[0] == seq[-1]
        t_o = t if all_rows else t[observed]
        s_o = None if one_seq else (seq if all_rows else seq[observed])
        r_col = r2[:, axes[0]]
        if r_col.strides[0] == 0:                  # one variance for every row
            r_o = np.full(len(rows), r_col[0] if n else 1.0)
        else:
            r_o = np.ascontiguousarray(r_col if all_rows else r_col[observed])
        z_o = z_t if all_rows else z_t[:, observed]
        new = np.ones(len(rows), dtype=bool)
        new[1:] = t_o[1:] != t_o[:-1]
        if not one_seq:
            new[1:] |= s_o[1:] != s_o[:-1]
        n_merged = int(len(rows) - new.sum())
        within_const, within_sq = 0.0, np.zeros(len(axes))
        if n_merged == 0:
            knot_of_obs = np.arange(len(rows))
            rbar, zbar, t_k = r_o, z_o, t_o
            s_k = None if one_seq else s_o
        else:
            first = np.flatnonzero(new)
            knot_of_obs = np.cumsum(new) - 1
            rbar, zbar = r_o[first], z_o[:, first]
            # only knots observed more than once need merging
            merged_knot = np.zeros(len(first), dtype=bool)
            merged_knot[knot_of_obs[~new]] = True
            member = merged_knot[knot_of_obs]
            k_of = knot_of_obs[member]
            starts = np.flatnonzero(np.diff(k_of, prepend=-1))
            inv = 1.0 / r_o[member]
            zm = z_o[:, member]
            r_merged = 1.0 / np.add.reduceat(inv, starts)
            z_merged = np.add.reduceat(zm * inv, starts, axis=1) * r_merged
            knots_m = k_of[starts]
            rbar[knots_m], zbar[:, knots_m] = r_merged, z_merged
            dev = zm - np.repeat(z_merged, np.diff(np.append(starts, len(k_of))), axis=1)
            within_sq = (dev * dev * inv).sum(axis=1)
            within_const = float(0.5 * np.log(inv).sum() + 0.5 * np.log(r_merged).sum()
                                 - 0.5 * LOG_2PI * (len(k_of) - len(starts)))
            t_k = t_o[first]
            s_k = None if one_seq else s_o[first]
        if s_k is None:
            s_k = np.zeros(len(t_k), dtype=np.int64)
        knots = Knots.build(np.ascontiguousarray(t_k), np.ascontiguousarray(s_k))
        system = ContrastSystem.build(knots, np.ascontiguousarray(rbar), q_form)
        zbar = np.ascontiguousarray(zbar)
        return cls(axes=list(axes), rows=rows, knot_of_obs=knot_of_obs,
                   identity=all_rows and n_merged == 0, knots=knots, system=system,
                   zbar=zbar, contrasts=system.contrasts(zbar), within_const=within_const,
                   within_sq=within_sq, n_merged=n_merged)

    def within_loglik(self, r_scale: float = 1.0) -> np.ndarray:
        """Per-axis log-likelihood of the spread of merged measurements around their knot."""
        return (self.within_const - 0.5 * self.n_merged * np.log(r_scale)
                - 0.5 * self.within_sq / r_scale)

    def to_rows(self, knot_values: np.ndarray) -> np.ndarray:
        """Knot values (..., m) at the observed rows (..., n_obs)."""
        return knot_values if self.identity else knot_values[..., self.knot_of_obs]

    def neighbours(self, seq: np.ndarray):
        """For every row: knot before/at it and knot after it in its sequence (-1: none)."""
        n = len(seq)
        m = len(self.knots.t)
        observed = np.zeros(n, dtype=bool)
        observed[self.rows] = True
        count = np.cumsum(observed)
        left = np.full(n, -1, dtype=np.int64)
        has = count > 0
        left[has] = self.knot_of_obs[count[has] - 1]
        right = left + 1
        left_ok = left >= 0
        left_ok[left_ok] = self.knots.seq[left[left_ok]] == seq[left_ok]
        right_ok = right < m
        right_ok[right_ok] = self.knots.seq[right[right_ok]] == seq[right_ok]
        return np.where(left_ok, left, -1), np.where(right_ok, right, -1)
