"""Spikes and catch-up jumps: find fixes the traveller cannot have been at, and propose removing them.

Three tests, each on its own kind of fault.

1. Innovation gate (isolated spikes, horizontal and vertical)
-------------------------------------------------------------
The constant-velocity Kalman filter of :mod:`editor.processing.kalman` predicts
each fix from the ones before it; the normalised innovation squared
``NIS = sum(nu^2 / s)`` of a correct fix follows a chi-square law with one degree
of freedom per axis. A fix is gated out when its NIS exceeds the ``confidence``
quantile of the chi-square law (see :func:`gate`): at the default 99.9 % that is
13.82 for the two horizontal axes and 10.83 for elevation, i.e. about one good
fix in a thousand is questioned by chance.

A filter that has just swallowed a spike is pulled towards it, so the fixes
after it look wrong and a second spike right behind the first can look right.
Hence a robust second stage, run only in windows around the questioned fixes:
the questioned fixes are treated as missing, the forward innovations are
recomputed (this catches spikes the first pass masked) and each questioned fix
is tested against the two-sided smoother estimate at its time, with variance
``P_smoothed + r``; only fixes that still fail are kept as spikes. This repeats
until nothing changes (at most ``iterations`` times).

Measurement noise: unless given, the scatter is estimated from the track
itself (median absolute residual of each fix against its neighbours'
interpolation, see :func:`editor.processing.cleaning_base.noise_sigma`) and
never taken below ``min_*_sigma_m``; process noise comes from the activity.

2. Catch-up after signal loss
-----------------------------
The first fixes after a signal-loss gap are tested against the backward
prediction from the clean track that follows the gap; see
:mod:`editor.processing.catch_up`. They are proposed for removal with reason
``"catch-up"``, so that the gap tool refills them along with the gap. Removing
them lengthens the gap; the first fix kept after it is marked with the gap as
recorded (:func:`editor.model.payload.mark_gap_as_recorded`), so that the gap tool's
length limit still applies to the signal loss, not to what this tool removed.

3. Speed and acceleration (runs: gross catch-up, cold starts)
-------------------------------------------------------------
After a tunnel or a cold start a receiver often reports a few fixes far away
that converge on the true position within seconds. Each fix agrees with its
neighbours, so the gate may pass them, but getting there and back needs an
impossible speed. Steps that need more than the activity's maximum speed
(:mod:`editor.processing.activity`), beyond a noise allowance of
``noise_allowance * sigma * sqrt(2)``, and signal-loss gaps (steps longer than
``GAP_FACTOR`` median intervals) cut the track into pieces; pieces lasting
``trust_s`` or more are trusted, and each stretch of untrusted pieces between
them (a "zone") is resolved by keeping the longest chain of its fixes that can
be travelled from the trusted fix before to the trusted fix after. Between two
kept fixes ``dt`` apart the traveller may cover
``min(v_max dt, v_ref dt + a_max dt^2 / 2)`` plus the noise allowance, where
``v_ref`` is the robust (median, windowed) speed on the trusted pieces beside
the zone: the reference the catch-up is judged against. A zone with no such
chain (a real change of vehicle, say), or one at a segment's start or end that
lasts longer than ``OPEN_ZONE_TRUST * trust_s``, is left alone and counted in
``info["unresolved_zones"]``.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..model.payload import gap_as_recorded_s, mark_gap_as_recorded
from ..model.document import Track
from .activity import Activity
from .catch_up import CatchUpSettings, catch_up_rows
from .cleaning_base import (PlanarTrack, activity_for, chi2_quantile, keep_proposal, noise_sigma, plane_of,
                            selection_mask, timed_segments, true_runs, window_speed)
from .kalman import innovations, rts_smooth
from .proposal import PlaceNote, Proposal
from .stats import StatsParams, Totals, distance_along

#: Rows of context on each side of a questioned fix in the robust stage.
CONTEXT_ROWS = 25
#: Seconds of trusted track beside a zone whose speed sets the zone's reference speed.
REFERENCE_S = 30.0
#: Window (seconds) of the speeds used as reference.
REFERENCE_WINDOW_S = 10.0
#: A zone at a segment's start or end (trusted track on one side only) is resolved only if it lasts
#: at most this many times ``trust_s``: a cold start or a stray tail, not a real change of pace.
OPEN_ZONE_TRUST = 3.0
#: A step longer than this many median intervals is a signal-loss gap; it ends a piece in the speed test.
GAP_FACTOR = 5.0


@dataclass(frozen=True)
class SpikeParams:
    """Parameters of :func:`despike`.

    Attributes
    ----------
    activity : preset name or ``"auto"`` (inferred from the track's speeds); sets the speed and
        acceleration limits and the process noise of the gate's model.
    confidence : chi-square confidence of the innovation gate (default 0.999, see module notes).
    horizontal_sigma_m, vertical_sigma_m : measurement scatter (metres per axis); ``None``
        estimates it from the track.
    min_horizontal_sigma_m : floor of the estimate, 2 m: receivers that smooth internally show
        less scatter than their real error, and a too small sigma would question real turns.
    min_vertical_sigma_m : floor of the elevation estimate, 1 m (the usual 1 m resolution).
    check_elevation : also gate elevations (a failed elevation removes the whole point).
    check_speed : run the speed and acceleration test.
    check_catch_up : run the catch-up test after signal-loss gaps (module notes, test 2).
    catch_up_window_s : seconds after a gap in which a catch-up is looked for (default 30 s, and
        twice that when 30 s hold no run of passes; see :mod:`editor.processing.catch_up` for why
        the window is short).
    catch_up_context_s : seconds of track after the window (and before the gap) that predict it
        and fit its process noise (default 120 s).
    catch_up_passes : consecutive passing fixes that end a catch-up (default 5).
    min_gap_s : shortest signal-loss gap, seconds (default 10 s, as the gap tool's).
    iterations : most rounds of the robust stage.
    noise_allowance : the speed test forgives this many sigmas (times sqrt 2) per step.
    trust_s : a piece of plausible steps lasting this long (seconds) is trusted.
    max_zone_points : zones with more points than this are left alone (the chain search is
        quadratic in the zone's size).
    """

    activity: str | Activity = "auto"
    confidence: float = 0.999
    horizontal_sigma_m: float | None = None
    vertical_sigma_m: float | None = None
    min_horizontal_sigma_m: float = 2.0
    min_vertical_sigma_m: float = 1.0
    check_elevation: bool = True
    check_speed: bool = True
    iterations: int = 4
    noise_allowance: float = 3.0
    trust_s: float = 10.0
    max_zone_points: int = 400
    check_catch_up: bool = True
    catch_up_window_s: float = 30.0
    catch_up_context_s: float = 120.0
    catch_up_passes: int = 5
    min_gap_s: float = 10.0


def gate(confidence: float, dof: int) -> float:
    """Chi-square quantile used as the NIS gate: ``scipy.stats.chi2.ppf(confidence, dof)``.

    See :func:`editor.processing.cleaning_base.chi2_quantile` (closed forms for 1 and 2 degrees
    of freedom; importing ``scipy.stats`` alone takes most of a second).
    """
    return chi2_quantile(confidence, dof)


def _dilate(mask: np.ndarray, reach: int) -> np.ndarray:
    """Rows within ``reach`` rows of a True row."""
    n = len(mask)
    c = np.concatenate(([0], np.cumsum(mask)))
    idx = np.arange(n)
    return (c[np.minimum(idx + reach + 1, n)] - c[np.maximum(idx - reach, 0)]) > 0


def _sequence_starts(rows: np.ndarray, segment_starts: np.ndarray) -> np.ndarray:
    """Positions in ``rows`` where an independent sequence begins (a jump in rows or a new segment)."""
    if not len(rows):
        return np.zeros(0, dtype=np.int64)
    new = np.ones(len(rows), dtype=bool)
    new[1:] = (np.diff(rows) != 1) | np.isin(rows[1:], segment_starts)
    return np.flatnonzero(new)


def gate_outliers(t_s: np.ndarray, z: np.ndarray, r: float, q: float, threshold: float,
                  segment_starts: np.ndarray, iterations: int = 4) -> np.ndarray:
    """Rows of ``z`` ((n, k) metres, NaN missing) that fail the innovation gate robustly.

    ``segment_starts``: rows where independent sequences begin (first 0). See the module notes.
    """
    z = z.reshape(len(z), -1)
    nu, s = innovations(t_s, z, r, q, starts=segment_starts)
    with np.errstate(invalid="ignore"):
        nis = np.nansum(nu * nu / s, axis=1)
    flag = nis > threshold
    for _ in range(iterations):
        if not flag.any():
            break
        rows = np.flatnonzero(_dilate(flag, CONTEXT_ROWS))
        starts = _sequence_starts(rows, segment_starts)
        zw = z[rows].copy()
        flagged = flag[rows]
        zw[flagged] = np.nan
        tw = t_s[rows]
        nu, s = innovations(tw, zw, r, q, starts=starts)
        with np.errstate(invalid="ignore"):
            forward = np.nansum(nu * nu / s, axis=1)
        smooth = rts_smooth(tw, zw, r, q, want_std=True, starts=starts)
        assert smooth.position_std is not None  # asked for with want_std
        resid = z[rows] - smooth.position.reshape(zw.shape)
        var = smooth.position_std.reshape(zw.shape) ** 2 + r
        with np.errstate(invalid="ignore"):
            two_sided = np.nansum(resid * resid / var, axis=1)
        new = flag.copy()
        new[rows] = np.where(flagged, two_sided > threshold, forward > threshold)
        if np.array_equal(new, flag):
            break
        flag = new
    return flag


def _zone_chain(t: np.ndarray, x: np.ndarray, y: np.ndarray, nodes: np.ndarray, has_a: bool, has_b: bool,
                v_ref: float, activity: Activity, allowance: float) -> np.ndarray | None:
    """Longest travellable chain through ``nodes`` (rows), from the first if ``has_a``, to the last if ``has_b``.

    Returns the boolean "on the chain" over ``nodes``, or ``None`` when no chain joins the ends.
    """
    m = len(nodes)
    tn, xn, yn = t[nodes], x[nodes], y[nodes]
    best = np.full(m, -np.inf)
    parent = np.full(m, -1)
    if has_a:
        best[0] = 0.0
    else:
        best[:] = 1.0  # any zone point may start the chain
    for j in range(1, m):
        dt = tn[j] - tn[:j]
        reach = np.minimum(activity.max_speed_mps * dt, v_ref * dt + 0.5 * activity.max_accel_mps2 * dt * dt)
        ok = np.hypot(xn[j] - xn[:j], yn[j] - yn[:j]) <= reach + allowance
        ok &= np.isfinite(best[:j])
        if ok.any():
            cand = np.where(ok, best[:j], -np.inf)
            i = int(np.argmax(cand))
            if cand[i] + 1 > best[j]:
                best[j], parent[j] = cand[i] + 1, i
    end = m - 1 if has_b else int(np.argmax(best))
    if not np.isfinite(best[end]):
        return None
    on = np.zeros(m, dtype=bool)
    while end >= 0:
        on[end] = True
        end = parent[end]
    return on


def _reference_speed(t: np.ndarray, x: np.ndarray, y: np.ndarray, lo: int, hi: int, has_a: bool,
                     has_b: bool) -> float:
    """Median windowed speed (m/s) of the trusted track within REFERENCE_S before ``lo`` / after ``hi``."""
    refs = []
    if has_a:
        a = int(np.searchsorted(t, t[lo] - REFERENCE_S - REFERENCE_WINDOW_S))
        refs.append(window_speed(t[a:lo + 1], x[a:lo + 1], y[a:lo + 1], REFERENCE_WINDOW_S))
    if has_b:
        b = int(np.searchsorted(t, t[hi] + REFERENCE_S + REFERENCE_WINDOW_S, side="right"))
        refs.append(window_speed(t[hi:b], x[hi:b], y[hi:b], REFERENCE_WINDOW_S))
    return max(float(np.median(r)) for r in refs)


def speed_outliers(pt: PlanarTrack, activity: Activity, sigma_h: float, params: SpikeParams,
                   usable: np.ndarray) -> tuple[np.ndarray, int]:
    """Rows of implausible runs (see module notes) among ``usable`` rows; also the unresolved zone count."""
    flag = np.zeros(len(pt), dtype=bool)
    unresolved = 0
    allowance = params.noise_allowance * sigma_h * np.sqrt(2.0)
    for a, b in timed_segments(pt):
        rows = a + np.flatnonzero(usable[a:b])
        if len(rows) < 3:
            continue
        t, x, y = pt.t_s[rows], pt.x[rows], pt.y[rows]
        dt, d = np.diff(t), np.hypot(np.diff(x), np.diff(y))
        # a signal-loss gap also ends a piece: the first fixes after it are the usual suspects
        bad = (d > activity.max_speed_mps * dt + allowance) | (dt > GAP_FACTOR * np.median(dt))
        if not bad.any():
            continue
        piece_first = np.concatenate(([0], np.flatnonzero(bad) + 1))
        piece_last = np.concatenate((np.flatnonzero(bad), [len(rows) - 1]))
        trusted = (t[piece_last] - t[piece_first] >= params.trust_s) & (piece_last - piece_first >= 2)
        zone_first, zone_stop = true_runs(~trusted)  # runs of untrusted pieces
        for z0, k in zip(zone_first.tolist(), zone_stop.tolist()):
            has_a, has_b = z0 > 0, k < len(trusted)
            if not (has_a or has_b):
                unresolved += 1
                continue
            lo = piece_last[z0 - 1] if has_a else piece_first[z0]
            hi = piece_first[k] if has_b else piece_last[k - 1]
            long_open = not (has_a and has_b) and t[hi] - t[lo] > OPEN_ZONE_TRUST * params.trust_s
            if hi - lo + 1 > params.max_zone_points or long_open:
                # too big to search, or a long stretch at a segment's end with nothing trusted beyond it
                unresolved += 1
                continue
            v_ref = _reference_speed(t, x, y, lo, hi, has_a, has_b)
            nodes = np.arange(lo, hi + 1)
            on = _zone_chain(t, x, y, nodes, has_a, has_b, v_ref, activity, allowance)
            if on is None:
                unresolved += 1
                continue
            flag[rows[nodes[~on]]] = True
    return flag, unresolved


def despike(track: Track, params: SpikeParams = SpikeParams(), *, rows: np.ndarray | None = None,
            track_index: int = 0,
            stats_params: StatsParams = StatsParams(), plane: PlanarTrack | None = None,
            before: Totals | None = None) -> Proposal:
    """Propose removing spikes (``reasons["spike"]``), catch-up after signal loss (``reasons["catch-up"]``)
    and implausible runs (``reasons["speed"]``).

    Needs timestamps; segments without complete, ordered times are left alone. ``rows``
    limits removals to the selection, the whole track being context. ``plane``: the track
    already projected (:func:`editor.processing.cleaning_base.planar`); ``before``: its totals,
    if known. ``info`` gives the activity, the sigmas and gates used and the counts; for the
    catch-up test see :func:`editor.processing.catch_up.catch_up_rows`.
    """
    pt = plane_of(track, plane)
    n = len(pt)
    allowed = selection_mask(n, rows)
    activity = activity_for(pt, params.activity)
    segments = timed_segments(pt)
    timed = np.zeros(n, dtype=bool)
    for a, b in segments:
        timed[a:b] = True
    rows_t = np.flatnonzero(timed)
    starts = np.searchsorted(rows_t, [a for a, _ in segments])
    t = pt.t_s[rows_t]

    def sigma_of(given: float | None, floor: float, *cols: np.ndarray) -> float:
        if given is not None:
            return float(given)
        ends = np.append(starts[1:], len(t))
        parts = [noise_sigma(t[s:e], *(c[s:e] for c in cols)) for s, e in zip(starts, ends)]
        parts = [p for p in parts if np.isfinite(p)]
        return max(float(np.median(parts)) if parts else floor, floor)

    sigma_h = sigma_of(params.horizontal_sigma_m, params.min_horizontal_sigma_m, pt.x[rows_t], pt.y[rows_t])
    spike = np.zeros(n, dtype=bool)
    gate_h, gate_v, sigma_v = gate(params.confidence, 2), gate(params.confidence, 1), float("nan")
    if len(rows_t) >= 3:
        z = np.column_stack((pt.x[rows_t], pt.y[rows_t]))
        spike[rows_t] = gate_outliers(t, z, sigma_h ** 2, activity.process_noise, gate_h, starts, params.iterations)
        ele = pt.ele[rows_t]
        if params.check_elevation and np.isfinite(ele).sum() >= 3:
            sigma_v = sigma_of(params.vertical_sigma_m, params.min_vertical_sigma_m, ele)
            spike[rows_t] |= gate_outliers(t, ele, sigma_v ** 2, activity.vertical_process_noise, gate_v, starts,
                                           params.iterations)
    catch_up = np.zeros(n, dtype=bool)
    catch_info: dict[str, Any] = {}
    if params.check_catch_up and len(rows_t) >= 3:
        settings = CatchUpSettings(window_s=params.catch_up_window_s, context_s=params.catch_up_context_s,
                                   passes=params.catch_up_passes, min_gap_s=params.min_gap_s,
                                   confidence=params.confidence)
        found, catch_info = catch_up_rows(t, pt.x[rows_t], pt.y[rows_t], pt.ele[rows_t], starts, ~spike[rows_t],
                                          sigma_h, sigma_v, settings)
        catch_up[rows_t] = found
        catch_up &= allowed
    spike &= allowed & ~catch_up  # a catch-up fix the gate also caught is reported as catch-up
    speed = np.zeros(n, dtype=bool)
    unresolved = 0
    if params.check_speed and len(rows_t) >= 3:
        speed, unresolved = speed_outliers(pt, activity, sigma_h, params, timed & ~spike & ~catch_up)
        speed &= allowed
    remove = spike | speed | catch_up
    lengthened = _lengthened_gaps(track, pt, remove, params.min_gap_s)
    unchecked = rows_t[np.asarray(catch_info.pop("catch_up_unresolved_at", []), dtype=np.int64)]
    notes = []
    if len(unchecked):
        along = distance_along(track)
        window = 2 * params.catch_up_window_s
        notes = [PlaceNote(f"gap at {{at}}: the points after it do not settle within {window:.0f} s, "
                           "so a catch-up there was not looked for", along[row]) for row in unchecked.tolist()]
    info = {"activity": activity.name, "sigma_h_m": sigma_h, "sigma_v_m": sigma_v,
            "gate_h": gate_h, "gate_v": gate_v, "confidence": params.confidence,
            "spikes": int(spike.sum()), "speed": int(speed.sum()), "catch_up": int(catch_up.sum()),
            "unresolved_zones": unresolved, "gaps_lengthened": len(lengthened), "notes": notes, **catch_info}
    proposal = keep_proposal("despike", "Remove spikes", track_index, track, ~remove, stats_params,
                             before=before, reasons={"spike": np.flatnonzero(spike), "speed": np.flatnonzero(speed),
                                                     "catch-up": np.flatnonzero(catch_up)}, info=info)
    if lengthened:
        # the first fix kept after each lengthened gap remembers the gap as recorded (editor.model.payload)
        at = np.searchsorted(proposal.source_rows, [row for row, _ in lengthened])
        extra = proposal.points.extra
        for i, (_, seconds) in zip(at.tolist(), lengthened):
            extra[i] = mark_gap_as_recorded(extra[i], seconds)
    return proposal


def _lengthened_gaps(track: Track, pt: PlanarTrack, remove: np.ndarray, min_gap_s: float) -> list[tuple[int, float]]:
    """``(first kept row after, recorded seconds)`` of every signal-loss gap that removing ``remove`` creates
    or lengthens.

    A gap (a step longer than ``GAP_FACTOR`` median intervals and ``min_gap_s``) between two kept
    fixes whose removed fixes in between were recorded with shorter steps: the recorded gap is the
    longest recorded step there (or what an earlier removal's marker says).
    """
    out: list[tuple[int, float]] = []
    if not remove.any():
        return out
    first, stop = true_runs(remove)
    for a, b in timed_segments(pt, min_points=2):
        t = pt.t_s[a:b]
        dt = np.diff(t)
        positive = dt[dt > 0]
        if not len(positive):
            continue
        limit = max(GAP_FACTOR * float(np.median(positive)), min_gap_s)
        inside = (first > a) & (stop < b)  # a removed run with a kept fix on both sides
        for r0, r1 in zip(first[inside].tolist(), stop[inside].tolist()):
            before_row, after_row = r0 - 1, r1
            span = pt.t_s[after_row] - pt.t_s[before_row]
            if not span >= limit:
                continue
            recorded = float(np.max(np.diff(pt.t_s[before_row:after_row + 1])))
            earlier = [gap_as_recorded_s(e) for e in track.points.extra[r0:after_row + 1]]
            recorded = max([recorded] + [e for e in earlier if e is not None])
            if recorded < span:
                out.append((after_row, recorded))
    return out


__all__ = ["SpikeParams", "despike", "gate", "gate_outliers", "speed_outliers"]
