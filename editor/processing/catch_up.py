"""Catch-up after signal loss: the first fixes after a gap that converge on the track from far away.

After a tunnel or a pocket a receiver often reports its first fixes tens or
hundreds of metres off (and too high or too low), converging on the true
position over some seconds. Each such fix agrees with its neighbours, so the
innovation gate passes most of them, and the convergence is slow enough that
the speeds look possible. What gives them away is the clean track that
follows: extrapolated backwards, it says where the traveller must have been.

Method, for every signal-loss gap
---------------------------------
A gap is a step longer than ``GAP_FACTOR`` median intervals and at least
``min_gap_s`` long (the gap tool's definition). The *window* is the first
``window_s`` seconds of fixes after it, the *context* the ``context_s``
seconds that follow (never across the next gap or the segment's end).

1. Backward prediction. The constant-velocity smoother (:func:`editor.processing.kalman.rts_smooth`)
   runs over window and context with the window's measurements set to missing,
   which gives at every window fix exactly the prediction from the data that
   follow, with its variance ``P`` (per axis).
2. Test. A fix fails when its normalised deviation ``|z - x_hat|^2 / (P + r)``
   exceeds the chi-square quantile at ``confidence``: 2 degrees of freedom for
   the horizontal position, 1 for the elevation, tested separately; either
   failure fails the fix, so an elevation-only catch-up is found too.
3. Scan. From the gap forward, the catch-up is every fix up to the last
   failure before the first run of ``passes`` consecutive passing fixes (at the
   default 0.999 gate five clean fixes pass in a row with probability 0.995,
   while a converging catch-up rarely gives five passes before it ends). If the
   window holds no such run the catch-up may last longer: the test is repeated
   with twice the window; without a run then either, the gap is counted as
   unresolved and nothing is flagged. A found run is then grown: the prediction
   is made again from the fixes after the run and its ``passes`` following fixes,
   so that it reaches back only a few seconds and is tight, and the run is
   extended to the last fix that still fails, until it stops growing (at most
   ``MAX_REFINEMENTS`` rounds).
4. Manoeuvre or catch-up. Right after a gap a real sharp turn looks alike:
   the fixes before the turn lie off the backward extrapolation of the track
   after it. A flagged run is kept as a real manoeuvre
   (``info["catch_up_kept_runs"]``) when it is (a) itself a plausible piece of
   track under the same model (the forward-filter NIS of the run alone below the
   chi-square quantile with its degrees of freedom) and (b) travelled at the
   speed the backward prediction gives there (the run's least-squares speed
   against the predicted speed, within the 1-degree-of-freedom quantile of the
   variance: the least-squares estimate's plus ``q`` times how far back the
   prediction reaches); for elevation the signed vertical speed. A turn keeps
   the speed and changes only the direction; a receiver converging on the track
   adds its convergence to the apparent speed and decelerates, which fails (a)
   or (b). Test (a) needs three fixes; a lone
   flagged fix is judged by (b) on the step to the fix after it.

Why the window is short: the prediction's variance grows with the cube of how
far back it reaches (``q t^3 / 3`` for white-noise acceleration), so a long
window makes a weak test for the fixes nearest the gap. The default 30 s is five
time constants of a receiver that converges with a time constant of 6 s
(common practice: receivers settle within tens of seconds after reacquiring),
and the fallback to 60 s covers slower ones.

Process noise: ``q`` is fitted by maximum likelihood to the context on both
sides of the gaps (``context_s`` before each gap and each gap's context after
its window), jointly for the track, in the smoothing tool's range
(:data:`editor.processing.smoothing.LOG10_Q_RANGE`). The windows are left out so
a catch-up cannot loosen the model that judges it. The measurement variances are
the spike test's ``sigma_h^2`` and ``sigma_v^2``.

Not done: the mirror test before a gap (a receiver drifting off while losing
the signal). On the bundled tunnel recording the fixes before the gap are no
farther off than the rest of the track, so nothing asks for it yet.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .cleaning_base import chi2_quantile
from .gaps import find_gaps
from .kalman import Problem
from .scalar_search import most_likely
from .smoothing import LOG10_Q_RANGE

#: A step longer than this many median intervals (and ``min_gap_s``) is a signal-loss gap.
GAP_FACTOR = 5.0
#: Fewest usable fixes in the context after a window for its prediction to be trusted.
MIN_CONTEXT_FIXES = 10
#: Most rounds of growing a run with the prediction from just after it (module notes, step 3).
MAX_REFINEMENTS = 20
#: Tolerance of the maximum-likelihood search, in log10 q.
LOG10_Q_TOLERANCE = 0.02


@dataclass(frozen=True)
class CatchUpSettings:
    """What :func:`catch_up_rows` needs (taken from :class:`editor.processing.spikes.SpikeParams`)."""

    window_s: float = 30.0
    context_s: float = 120.0
    passes: int = 5
    min_gap_s: float = 10.0
    confidence: float = 0.999


@dataclass
class _Gap:
    first: int            # position (in the arrays) of the first fix after the gap
    limit: int            # positions >= limit are beyond the next gap or the segment
    before: np.ndarray    # positions of the context before the gap


def _gaps(t: np.ndarray, starts: np.ndarray, settings: CatchUpSettings) -> list[_Gap]:
    """Signal-loss gaps of every segment (positions in the arrays)."""
    out: list[_Gap] = []
    ends = np.append(starts[1:], len(t))
    for a, b in zip(starts.tolist(), ends.tolist()):
        found, _ = find_gaps(t[a:b], GAP_FACTOR, settings.min_gap_s)
        firsts = (a + found + 1).tolist()
        for j, first in enumerate(firsts):
            limit = firsts[j + 1] if j + 1 < len(firsts) else b
            # the context before a gap starts after the previous gap's longest window (its catch-up)
            floor = (int(np.searchsorted(t, t[firsts[j - 1]] + 2.0 * settings.window_s)) if j > 0 else a)
            lo = max(floor, int(np.searchsorted(t, t[first - 1] - settings.context_s)))
            out.append(_Gap(first, limit, np.arange(lo, first)))
    return out


def _fit_q(t, z, r, starts, axis) -> float:
    """Maximum-likelihood q (m^2/s^3) of the context sequences."""
    problem = Problem(t, z, r, starts=starts)
    return most_likely(problem.loglik, LOG10_Q_RANGE[axis], tolerance=LOG10_Q_TOLERANCE)[0]


def _blocks(pieces: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """Concatenated positions and the start of each piece within them."""
    sizes = [len(p) for p in pieces]
    starts = np.concatenate(([0], np.cumsum(sizes)[:-1])).astype(np.int64)
    return np.concatenate(pieces).astype(np.int64), starts


def _deviations(t, raw, known, r, q, windows, contexts):
    """Normalised deviation of every window fix from the backward prediction (NaN where unmeasured),
    and the predicted velocity (m/s, one column per axis) at the window fixes.

    ``raw``: the columns as recorded (the window fixes are judged on these); ``known``: the same
    columns with unusable fixes set to NaN (the context that predicts).
    """
    rows, starts = _blocks([np.concatenate((w, c)) for w, c in zip(windows, contexts)])
    z = np.column_stack([col[rows] for col in raw])
    given = np.column_stack([col[rows] for col in known])
    for s, w in zip(starts.tolist(), windows):
        given[s:s + len(w)] = np.nan
    result = Problem(t[rows], given, r, starts=starts).smooth(q, want_std=True)
    pos = result.position.reshape(z.shape)
    var = result.position_std.reshape(z.shape) ** 2 + r
    with np.errstate(invalid="ignore"):
        dev = ((z - pos) ** 2 / var).sum(axis=1)
    dev[~np.isfinite(z).all(axis=1)] = np.nan
    vel = result.velocity.reshape(z.shape)
    return ([dev[s:s + len(w)] for s, w in zip(starts.tolist(), windows)],
            [vel[s:s + len(w)] for s, w in zip(starts.tolist(), windows)])


def _catch_up_length(fail: np.ndarray, known: np.ndarray, passes: int) -> int | None:
    """Number of leading window fixes that are catch-up, or None when no run of ``passes`` passes exists.

    ``fail``: the fix failed a test; ``known``: it was tested at all (fixes without a usable
    measurement neither fail nor pass and do not break a run).
    """
    tested = np.flatnonzero(known)
    ok = ~fail[tested]
    if len(ok) < passes:
        return None
    window_sums = np.convolve(ok.astype(np.int64), np.ones(passes, dtype=np.int64), mode="valid")
    runs = np.flatnonzero(window_sums == passes)
    if not len(runs):
        return None
    run_start = int(runs[0])
    failed_before = np.flatnonzero(~ok[:run_start])
    return 0 if not len(failed_before) else int(tested[failed_before[-1]]) + 1


def _self_consistent(t, columns, r, q, runs: list[np.ndarray], confidence: float) -> np.ndarray:
    """Per run: is it, on its own, a plausible piece of track (forward-filter NIS below the quantile)?"""
    rows, starts = _blocks(runs)
    z = np.column_stack([col[rows] for col in columns])
    nu, s = Problem(t[rows], z, r, starts=starts).innovations(q)
    nu, s = nu.reshape(z.shape), s.reshape(z.shape)
    counted = np.isfinite(s) & np.isfinite(nu)
    with np.errstate(invalid="ignore", divide="ignore"):
        nis = np.where(counted, nu * nu / np.where(counted, s, 1.0), 0.0)
    ends = np.append(starts[1:], len(rows))
    out = np.ones(len(runs), dtype=bool)
    for j, (a, b) in enumerate(zip(starts.tolist(), ends.tolist())):
        dof = int(counted[a:b].sum())
        if dof:
            out[j] = float(nis[a:b].sum()) <= chi2_quantile(confidence, dof)
    return out


def _line_velocity(t: np.ndarray, columns) -> tuple[np.ndarray, float, float]:
    """Least-squares velocity (per column, m/s) of fixes, its variance factor ``1 / sum (t - mean)^2``
    (times ``r`` gives the variance) and the mean time."""
    ok = np.isfinite(np.column_stack(columns)).all(axis=1)
    tt = t[ok]
    centre = float(tt.mean()) if len(tt) else float("nan")
    spread = float(((tt - centre) ** 2).sum())
    if len(tt) < 2 or spread <= 0:
        return np.full(len(columns), np.nan), float("inf"), centre
    vel = np.array([float(((tt - centre) * col[ok]).sum()) / spread for col in columns])
    return vel, 1.0 / spread, centre


def _speed_continues(t, columns, r, q, run, predicted, origin_t, confidence, magnitude: bool) -> bool:
    """Does the run move as fast as the track after it says the traveller moved there?

    ``predicted``: the backward-predicted velocity at the run's fixes (rows, axes), from the
    prediction that starts at ``origin_t`` (s); its variance is taken as ``q`` times how far back
    it reaches (white-noise acceleration). ``magnitude``: compare speeds (a turn keeps the speed
    and changes the direction); otherwise the signed velocity (elevation). One degree of freedom.
    """
    v_run, f_run, centre = _line_velocity(t[run], [col[run] for col in columns])
    v_pred = predicted[int(np.argmin(np.abs(t[run] - centre)))]
    if not (np.isfinite(v_run).all() and np.isfinite(v_pred).all()):
        return True  # nothing to compare with
    diff = float(np.hypot(*v_run) - np.hypot(*v_pred)) if magnitude else float(v_run[0] - v_pred[0])
    var = r * f_run + q * abs(origin_t - centre)
    return diff * diff <= chi2_quantile(confidence, 1) * var


def _manoeuvres(t, groups: list, runs, confidence) -> np.ndarray:
    """Per run: a real manoeuvre (kept) rather than a catch-up? See the module notes, step 4.

    ``groups``: ``(columns, r, q, magnitude, predicted)`` per axis group (horizontal, and elevation
    if tested), ``predicted`` a list over runs of ``(velocities at the run's fixes, origin time)``.
    """
    out = np.ones(len(runs), dtype=bool)
    for columns, r, q, magnitude, predicted in groups:
        out &= _self_consistent(t, columns, r, q, runs, confidence)
        for j, (run, (velocity, origin_t)) in enumerate(zip(runs, predicted)):
            if out[j]:
                out[j] = _speed_continues(t, columns, r, q, run, velocity, origin_t, confidence, magnitude)
    return out


def catch_up_rows(t: np.ndarray, x: np.ndarray, y: np.ndarray, ele: np.ndarray, starts: np.ndarray,
                  usable: np.ndarray, sigma_h: float, sigma_v: float,
                  settings: CatchUpSettings = CatchUpSettings()) -> tuple[np.ndarray, dict]:
    """Fixes of a catch-up after each signal-loss gap (see the module notes).

    Parameters
    ----------
    t : seconds (UTC epoch), non-decreasing within each segment; x, y : metres in a local plane;
        ele : metres, NaN where absent.
    starts : positions where segments begin (first 0).
    usable : fixes that may predict and fit the model (e.g. not already gated out as spikes); the
        window fixes themselves are judged as recorded.
    sigma_h, sigma_v : measurement scatter per horizontal axis and of elevation (metres);
        ``sigma_v`` NaN skips the elevation test.
    settings : window, context, pass count, gap length and confidence.

    Returns
    -------
    flag : bool per fix, the catch-up fixes.
    info : ``catch_up_gaps`` (gaps checked), ``catch_up_unresolved``, ``catch_up_kept_runs``,
        ``catch_up_q_h`` / ``catch_up_q_v`` (m^2/s^3), ``catch_up_extra_s`` (the longest time
        by which removing a catch-up lengthens its gap) and ``catch_up_unresolved_at`` (the positions
        of the last fix before each unresolved gap, for the report).
    """
    n = len(t)
    flag = np.zeros(n, dtype=bool)
    info = {"catch_up_gaps": 0, "catch_up_unresolved": 0, "catch_up_kept_runs": 0,
            "catch_up_q_h": float("nan"), "catch_up_q_v": float("nan"), "catch_up_extra_s": 0.0}
    gaps = _gaps(t, np.asarray(starts, dtype=np.int64), settings) if n else []
    if not gaps:
        return flag, info
    info["catch_up_gaps"] = len(gaps)
    xm, ym = np.where(usable, x, np.nan), np.where(usable, y, np.nan)
    em = np.where(usable, ele, np.nan)

    def context_after(g: _Gap, window_s: float) -> tuple[np.ndarray, np.ndarray]:
        t0 = t[g.first]
        w_end = g.first + int(np.searchsorted(t[g.first:g.limit], t0 + window_s, side="left"))
        c_end = g.first + int(np.searchsorted(t[g.first:g.limit], t0 + window_s + settings.context_s, side="left"))
        return np.arange(g.first, w_end), np.arange(w_end, c_end)

    first = [context_after(g, settings.window_s) for g in gaps]
    fit_pieces = [p for g, (_, c) in zip(gaps, first) for p in (g.before, c) if len(p)]
    if not fit_pieces:
        info["catch_up_unresolved"] = len(gaps)
        info["catch_up_unresolved_at"] = [g.first - 1 for g in gaps]
        return flag, info
    fit_rows, fit_starts = _blocks(fit_pieces)
    q_h = _fit_q(t[fit_rows], np.column_stack((xm[fit_rows], ym[fit_rows])), sigma_h ** 2, fit_starts, "horizontal")
    info["catch_up_q_h"] = q_h
    vertical = np.isfinite(sigma_v) and np.isfinite(em[fit_rows]).sum() >= 3
    q_v = float("nan")
    if vertical:
        q_v = _fit_q(t[fit_rows], em[fit_rows], sigma_v ** 2, fit_starts, "vertical")
        info["catch_up_q_v"] = q_v
    gate_h = chi2_quantile(settings.confidence, 2)
    gate_v = chi2_quantile(settings.confidence, 1)

    def scan(todo: list[int], parts: list[tuple[np.ndarray, np.ndarray]]):
        """Per gap: ``(fail, tested)`` over its window, and the prediction's velocities and origin."""
        keep = [k for k, (w, c) in enumerate(parts) if np.isfinite(xm[c]).sum() >= MIN_CONTEXT_FIXES and len(w)]
        todo = [todo[k] for k in keep]
        windows, contexts = [parts[k][0] for k in keep], [parts[k][1] for k in keep]
        if not todo:
            return {}
        dev_h, vel_h = _deviations(t, (x, y), (xm, ym), sigma_h ** 2, q_h, windows, contexts)
        dev_v, vel_v = (_deviations(t, (ele,), (em,), sigma_v ** 2, q_v, windows, contexts) if vertical
                        else ([np.full(len(w), np.nan) for w in windows], [None] * len(windows)))
        out = {}
        for j, c, dh, dv, vh, vv in zip(todo, contexts, dev_h, dev_v, vel_h, vel_v):
            with np.errstate(invalid="ignore"):
                fail = (dh > gate_h) | (dv > gate_v)
            out[j] = (fail, np.isfinite(dh) | np.isfinite(dv), (vh, vv, float(t[c[0]])))
        return out

    lengths: dict[int, int | None] = {}
    prediction: dict[int, tuple] = {}  # per gap: predicted velocities in the window, and the context's start
    pending = list(range(len(gaps)))
    for factor in (1.0, 2.0):
        parts = [first[j] if factor == 1.0 else context_after(gaps[j], factor * settings.window_s) for j in pending]
        for j, (fail, tested, pred) in scan(pending, parts).items():
            lengths[j] = _catch_up_length(fail, tested, settings.passes)
            prediction[j] = pred
        pending = [j for j in pending if lengths.get(j) is None]
    info["catch_up_unresolved"] = sum(lengths.get(j) is None for j in range(len(gaps)))
    info["catch_up_unresolved_at"] = [gaps[j].first - 1 for j in range(len(gaps)) if lengths.get(j) is None]

    def after_run(js: list[int]) -> list[tuple[np.ndarray, np.ndarray]]:
        """Window: the run and the ``passes`` fixes after it; context: ``context_s`` after that."""
        out = []
        for j in js:
            g = gaps[j]
            end = min(g.first + lengths[j] + settings.passes, g.limit)
            stop = g.first + int(np.searchsorted(t[g.first:g.limit], t[min(end, g.limit - 1)] + settings.context_s,
                                                 side="left"))
            out.append((np.arange(g.first, end), np.arange(end, stop)) if end < g.limit
                       else (np.zeros(0, np.int64), np.zeros(0, np.int64)))
        return out

    # grow each run with the prediction from just after it, which reaches back only a few seconds
    growing = [j for j, k in lengths.items() if k]
    for _ in range(MAX_REFINEMENTS):
        if not growing:
            break
        grown = []
        for j, (fail, tested, _) in scan(growing, after_run(growing)).items():
            failed = np.flatnonzero(fail & tested)
            if len(failed) and int(failed[-1]) + 1 > lengths[j]:
                lengths[j] = int(failed[-1]) + 1
                grown.append(j)
        growing = grown
    final = [j for j, k in lengths.items() if k]
    prediction.update({j: pred for j, (_, _, pred) in scan(final, after_run(final)).items()})

    runs = [(j, np.arange(gaps[j].first, gaps[j].first + k)) for j, k in lengths.items() if k]
    if not runs:
        return flag, info
    # a lone flagged fix shows no motion of its own: its speed is judged with the fix after it
    judged = [(j, run if len(run) > 1 else np.arange(run[0], min(run[0] + 2, gaps[j].limit))) for j, run in runs]
    plausible = set()
    if judged:
        origin = [prediction[j][2] for j, _ in judged]
        groups = [((x, y), sigma_h ** 2, q_h, True,
                   [(prediction[j][0][:len(run)], o) for (j, run), o in zip(judged, origin)])]
        if vertical:
            groups.append(((ele,), sigma_v ** 2, q_v, False,
                           [(prediction[j][1][:len(run)], o) for (j, run), o in zip(judged, origin)]))
        kept = _manoeuvres(t, groups, [run for _, run in judged], settings.confidence)
        plausible = {j for (j, _), ok in zip(judged, kept) if ok}
    info["catch_up_kept_runs"] = len(plausible)
    for j, run in runs:
        if j in plausible:
            continue
        flag[run] = True
        after = run[-1] + 1
        end_t = t[after] if after < gaps[j].limit else t[run[-1]]
        info["catch_up_extra_s"] = max(info["catch_up_extra_s"], float(end_t - t[gaps[j].first]))
    return flag, info


__all__ = ["CatchUpSettings", "catch_up_rows", "GAP_FACTOR"]
