"""Smoothing a track with the constant-velocity Kalman/RTS smoother (see :mod:`.kalman`).

Smoothed tracks are estimates, not surveyed data, and are not for navigation.

Horizontal positions are projected with :class:`editor.geo.LocalProjection`
(transverse Mercator centred on the track), smoothed as two axes sharing
``q_h`` and ``r_h``, and projected back; elevation is a third, independent axis
with its own ``q_v`` and ``r_v``. Each segment is a separate recording and is
smoothed on its own. Rows without an elevation keep none (filling gaps is not
this tool's job).

Measurement variance per point
------------------------------
``r_i = (sigma * clip(dop_i / dop_ref, 0.5, 20))**2`` with ``hdop`` for the horizontal
axes and ``vdop`` for elevation, ``dop_ref`` the median DOP of the track and a
factor of 1 where the point has no DOP. Why: position error is DOP times the user
range error (the relation the GPS SPS Performance Standard uses), but files do
not state that range error and receivers report DOP on different scales. Taking
the track's median as reference keeps ``sigma`` the error of a typical point and
lets DOP only say which points are better or worse. The clip guards against DOP
values of 0 or 99 that some loggers write for "unknown".

Missing timestamps
------------------
The model needs a time per point. A segment without usable times (none, times
that go backwards, or times that do not advance on most steps, such as a
recording whose timestamps are all equal) is indexed by distance instead: its "time" is the
cumulative planar distance along the raw points divided by
:data:`NOMINAL_SPEED_MPS`, so ``q`` acts per metre instead of per second and no
speeds are reported for it (``info["segments_indexed_by_distance"]``). Single
missing times inside a segment are interpolated along that distance between
their neighbours.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from .. import CAUTION
from ..geo.projection import LocalProjection
from ..model.document import Track
from .cleaning_base import times_advance
from .kalman import Problem
from .proposal import Proposal, make_proposal
from .scalar_search import most_likely
from .stats import StatsParams

#: Range of log10 q (m^2/s^3) that the automatic (maximum-likelihood) estimate searches, per axis,
#: from the loosest to the smoothest model. At the default sigmas the smoother's time scale
#: (r/q)^(1/4) runs from about 1 s to 70 s horizontally and from about 3 s to 5 min vertically.
#: The gap filler and the catch-up test search the same range.
LOG10_Q_RANGE = {"horizontal": (2.0, -6.0), "vertical": (0.0, -8.0)}
#: The strength scale, the one mapping used by the smoothing panel and ``clean --smooth N``:
#: strength 0 keeps the recording exactly (the limit q -> infinity, done by not smoothing the axis),
#: strength 100 is the smoothest end of :data:`LOG10_Q_RANGE` (the smoothest model the estimate
#: may pick), and strengths in between are log-linear in q from ``STRENGTH_LOG10_Q[axis][0]``.
#: That start, 1e6 m^2/s^3, moves a fix recorded every second by under a millimetre (median, on the
#: demo ride, 5 m and 10 m scatter), so the scale has no jump just above 0.
STRENGTH_LOG10_Q = {"horizontal": (6.0, LOG10_Q_RANGE["horizontal"][1]),
                    "vertical": (6.0, LOG10_Q_RANGE["vertical"][1])}
#: Lowest and highest strength.
STRENGTH_MIN, STRENGTH_MAX = 0.0, 100.0
#: Speed assumed to turn distance into time for segments without timestamps, m/s.
NOMINAL_SPEED_MPS = 1.0
#: Search tolerance of the automatic estimate, in log10 q.
LOG10_Q_TOLERANCE = 0.002


@dataclass(frozen=True)
class SmoothParams:
    """Smoothing controls.

    Attributes
    ----------
    horizontal_strength, vertical_strength : 0..100, or ``None`` for automatic
        (maximum likelihood). 0 keeps the recording exactly, 100 is the smoothest model the
        automatic estimate may pick. See :data:`STRENGTH_LOG10_Q` and :func:`strength_to_q`.
    horizontal_sigma_m : 5.0 m, standard deviation of one horizontal coordinate.
        The GPS SPS Performance Standard (2001) gives <= 13 m horizontal error at
        95 % (global average): 13 / 2.45 = 5.3 m per axis for a circular normal
        error. Open-sky phones do better (GPS.gov: 4.9 m at 95 %, about 2 m per axis),
        receivers under trees or in cities worse (10-30 m, common practice).
    vertical_sigma_m : 10.0 m. The same standard gives <= 22 m vertical at 95 %:
        22 / 1.96 = 11.2 m; GNSS elevation is several times noisier than horizontal
        position (common practice). Barometric loggers are near 1 m (BMP280
        datasheet: +-0.12 hPa = +-1 m): use ``estimate_noise`` for them.
    estimate_noise : also estimate the measurement variances by maximum likelihood.
    smooth_horizontal, smooth_elevation : which parts to smooth.
    """

    horizontal_strength: float | None = None
    vertical_strength: float | None = None
    horizontal_sigma_m: float = 5.0
    vertical_sigma_m: float = 10.0
    estimate_noise: bool = False
    # position before elevation, as the strengths above (the panel shows fields in this order)
    smooth_horizontal: bool = True
    smooth_elevation: bool = True


def strength_to_q(strength: float, axis: str) -> float:
    """Process noise q (m^2/s^3) for a strength 0..100: log-linear, decreasing (more smoothing).

    ``log10 q = hi + (lo - hi) * strength / 100`` with ``(hi, lo)`` from :data:`STRENGTH_LOG10_Q`
    (1e6..1e-6 horizontally, 1e6..1e-8 vertically); strength 0 gives ``inf`` (no smoothing: the
    recording as it is). Raises ``ValueError`` outside :data:`STRENGTH_MIN`..:data:`STRENGTH_MAX`.
    """
    strength = float(strength)
    if not STRENGTH_MIN <= strength <= STRENGTH_MAX:
        raise ValueError(f"smoothing strength must be between {STRENGTH_MIN:g} and {STRENGTH_MAX:g}, "
                         f"not {strength:g}")
    if strength == STRENGTH_MIN:
        return float("inf")
    hi, lo = STRENGTH_LOG10_Q[axis]
    return float(10.0 ** (hi + (lo - hi) * strength / 100.0))


def q_to_strength(q: float, axis: str) -> float:
    """Inverse of :func:`strength_to_q` (``inf`` gives 0; may fall outside 0..100 for q outside the scale)."""
    if np.isinf(q) and q > 0:
        return STRENGTH_MIN
    hi, lo = STRENGTH_LOG10_Q[axis]
    return float((np.log10(q) - hi) / (lo - hi) * 100.0)


def keeps_recording(strength: float | None) -> bool:
    """True for the strength that proposes no change (0): the axis is left as recorded."""
    return strength is not None and float(strength) == STRENGTH_MIN


@dataclass(frozen=True)
class StrengthEstimate:
    """Result of :func:`estimate_strength`; NaN for an axis that was not estimated.

    ``q_*`` in m^2/s^3, ``r_*`` the measurement variance (m^2) of a point with
    reference DOP, ``loglik_*`` the innovation log-likelihood at the optimum,
    ``evaluations`` the number of likelihood passes.
    """

    q_h: float
    q_v: float
    r_h: float
    r_v: float
    horizontal_strength: float
    vertical_strength: float
    loglik_h: float
    loglik_v: float
    evaluations: int


class EstimateCancelled(Exception):
    """Raised by :func:`estimate_strength` when its ``cancelled()`` hook returns True."""


@dataclass
class _TrackArrays:
    """The rows to process, in metres and seconds."""

    rows: np.ndarray          # processed rows of the track (whole segments)
    starts: np.ndarray        # segment starts within ``rows``
    x: np.ndarray
    y: np.ndarray
    ele: np.ndarray
    t: np.ndarray
    r_h: np.ndarray           # per-row variance factor (dop ratio squared)
    r_v: np.ndarray
    by_distance: list         # segments indexed by distance
    timed: np.ndarray         # bool per processed row: its segment has real times
    projection: LocalProjection


def _dop_factor(dop: np.ndarray, track_dop: np.ndarray) -> np.ndarray:
    """Variance factor ``clip(dop / median, 0.5, 20)**2`` (1 where the DOP is missing or 0)."""
    usable = track_dop[np.isfinite(track_dop) & (track_dop > 0)]
    if not len(usable):
        return np.ones(len(dop))
    ok = np.isfinite(dop) & (dop > 0)
    ratio = np.where(ok, dop / np.median(usable), 1.0)
    return np.clip(ratio, 0.5, 20.0) ** 2


def _segment_times(t: np.ndarray, x: np.ndarray, y: np.ndarray) -> np.ndarray | None:
    """Times for one segment, missing ones filled along the distance; None if unusable."""
    known = np.isfinite(t)
    if known.all():
        # times that do not advance (all equal, say) would put every point at one instant and
        # collapse the segment onto one spot: index it by distance instead
        return t if len(t) < 2 or times_advance(t) else None
    if known.sum() < 2:
        return None
    dist = np.concatenate(([0.0], np.cumsum(np.hypot(np.diff(x), np.diff(y)))))
    tk, dk = t[known], dist[known]
    if np.any(np.diff(tk) < 0) or tk[-1] <= tk[0] or dk[-1] <= dk[0]:
        return None
    speed = (dk[-1] - dk[0]) / (tk[-1] - tk[0])
    out = np.interp(dist, dk, tk)
    before, after = dist < dk[0], dist > dk[-1]
    out[before] = tk[0] - (dk[0] - dist[before]) / speed
    out[after] = tk[-1] + (dist[after] - dk[-1]) / speed
    out[known] = t[known]
    return out if not np.any(np.diff(out) < 0) else None


def _track_arrays(track: Track, rows, plane=None) -> _TrackArrays:
    """The rows to smooth; ``plane`` (the whole track's ``PlanarTrack``) saves projecting again."""
    p = track.points
    bounds = [(a, b) for a, b in track.segment_bounds() if b > a]
    if rows is not None:
        chosen = np.asarray(rows, dtype=np.int64)
        bounds = [(a, b) for a, b in bounds if np.any((chosen >= a) & (chosen < b))]
    seg_rows = [np.arange(a, b) for a, b in bounds]
    all_rows = np.concatenate(seg_rows) if seg_rows else np.zeros(0, dtype=np.int64)
    whole = len(all_rows) == len(p)
    take = (lambda col: col) if whole else (lambda col: col[all_rows])
    if plane is not None:
        if len(plane.x) != len(p):
            raise ValueError(f"the plane has {len(plane.x)} rows but the track has {len(p)} points")
        projection, x, y = plane.projection, take(plane.x), take(plane.y)
    else:
        lat, lon = take(p.lat), take(p.lon)
        projection = LocalProjection.centred_on(lat, lon)
        x, y = projection.to_xy(lat, lon)
    t_all = take(p.time_s())
    starts = np.cumsum([0] + [len(r) for r in seg_rows[:-1]]).astype(np.int64)
    t = np.empty(len(all_rows))
    timed = np.ones(len(all_rows), dtype=bool)
    by_distance = []
    for k, (s0, r) in enumerate(zip(starts, seg_rows)):
        sl = slice(s0, s0 + len(r))
        seg_t = _segment_times(t_all[sl], x[sl], y[sl])
        if seg_t is None:
            by_distance.append(int(track.segment_of(r[0])))
            steps = np.hypot(np.diff(x[sl]), np.diff(y[sl]))
            seg_t = np.concatenate(([0.0], np.cumsum(steps))) / NOMINAL_SPEED_MPS
            timed[sl] = False
        t[sl] = seg_t
    return _TrackArrays(rows=all_rows, starts=starts, x=x, y=y, ele=take(p.ele), t=t,
                        r_h=_dop_factor(take(p.hdop), p.hdop), r_v=_dop_factor(take(p.vdop), p.vdop),
                        by_distance=by_distance, timed=timed, projection=projection)


def _problems(arrays: _TrackArrays, params: SmoothParams, rows=None, memo: dict | None = None):
    """Horizontal and vertical likelihood problems (None where not requested or no data).

    ``memo``: a dict kept for one ``arrays`` (see :func:`smooth`); a problem is built once per
    axis and noise setting and reused from there.
    """
    keep = None
    if rows is not None:
        keep = np.isin(arrays.rows, np.asarray(rows, dtype=np.int64))
    out = {}
    for axis, enabled, sigma in (
            ("horizontal", params.smooth_horizontal and not keeps_recording(params.horizontal_strength),
             params.horizontal_sigma_m),
            ("vertical", params.smooth_elevation and not keeps_recording(params.vertical_strength),
             params.vertical_sigma_m)):
        if not enabled:
            out[axis] = None
            continue
        key = ("problem", axis, sigma, None if rows is None else keep.tobytes())
        if memo is not None and key in memo:
            out[axis] = memo[key]
            continue
        if axis == "horizontal":
            z, factor = np.column_stack([arrays.x, arrays.y]), arrays.r_h
        else:
            z, factor = arrays.ele[:, None], arrays.r_v
        if keep is not None:
            z = np.where(keep[:, None], z, np.nan)
        out[axis] = Problem(arrays.t, z, sigma ** 2 * factor, starts=arrays.starts) if np.isfinite(z).any() else None
        if memo is not None:
            memo[key] = out[axis]
    return out


def _fit_axis(problem: Problem, axis: str, fixed_q: float | None, estimate_noise: bool,
              tick: Callable[[], None]):
    """Maximum-likelihood q (and r scale); returns ``(q, r_scale, loglik)``."""
    def counted(evaluate: Callable[[float], float]) -> Callable[[float], float]:
        def wrapped(value: float) -> float:
            tick()
            return evaluate(value)
        return wrapped

    if fixed_q is not None and not estimate_noise:
        return fixed_q, 1.0, problem.loglik(fixed_q)
    if fixed_q is not None:
        scale, ll = most_likely(counted(lambda s: problem.loglik(fixed_q, s)), (4.0, -4.0), LOG10_Q_TOLERANCE)
        return fixed_q, scale, ll
    if not estimate_noise:
        q, ll = most_likely(counted(problem.loglik), LOG10_Q_RANGE[axis], LOG10_Q_TOLERANCE)
        return q, 1.0, ll
    ratio, _ = most_likely(counted(lambda r: problem.concentrated(r)[0]), LOG10_Q_RANGE[axis], LOG10_Q_TOLERANCE)
    ll, scale = problem.concentrated(ratio)
    return ratio * scale, scale, ll


def _estimate(arrays: _TrackArrays, params: SmoothParams, rows, progress, cancelled,
              problems=None) -> StrengthEstimate:
    problems = problems if problems is not None else _problems(arrays, params, rows)
    # a bounded Brent search over 8 decades to 0.002 typically takes 10-13 passes
    expected = 12 * sum(p is not None for p in problems.values()) or 1
    count = [0]

    def tick() -> None:
        if cancelled is not None and cancelled():
            raise EstimateCancelled("strength estimate cancelled")
        count[0] += 1
        if progress is not None:
            progress(min(0.99, count[0] / expected))

    values = {}
    for axis, strength, sigma in (("horizontal", params.horizontal_strength, params.horizontal_sigma_m),
                                  ("vertical", params.vertical_strength, params.vertical_sigma_m)):
        problem = problems[axis]
        if problem is None:
            values[axis] = (np.nan, np.nan, np.nan)
            continue
        fixed = None if strength is None else strength_to_q(strength, axis)
        q, scale, ll = _fit_axis(problem, axis, fixed, params.estimate_noise, tick)
        values[axis] = (q, sigma ** 2 * scale, ll)
    if progress is not None:
        progress(1.0)
    (q_h, r_h, ll_h), (q_v, r_v, ll_v) = values["horizontal"], values["vertical"]
    return StrengthEstimate(
        q_h=q_h, q_v=q_v, r_h=r_h, r_v=r_v,
        horizontal_strength=_reported(params.horizontal_strength, q_h, "horizontal"),
        vertical_strength=_reported(params.vertical_strength, q_v, "vertical"),
        loglik_h=ll_h, loglik_v=ll_v, evaluations=count[0])


def _reported(strength: float | None, q: float, axis: str) -> float:
    """The strength to report for an axis: 0 as asked, else the one of the q used (NaN if none)."""
    if keeps_recording(strength):
        return STRENGTH_MIN
    return q_to_strength(q, axis) if np.isfinite(q) else np.nan


def _fixed(params: SmoothParams, problems) -> StrengthEstimate:
    """The values used when both strengths are set (no likelihood search)."""
    q = {axis: strength_to_q(strength, axis) if problems[axis] is not None else np.nan
         for axis, strength in (("horizontal", params.horizontal_strength),
                                ("vertical", params.vertical_strength))}
    return StrengthEstimate(
        q_h=q["horizontal"], q_v=q["vertical"], r_h=params.horizontal_sigma_m ** 2,
        r_v=params.vertical_sigma_m ** 2,
        horizontal_strength=(params.horizontal_strength if problems["horizontal"] is not None
                             or keeps_recording(params.horizontal_strength) else np.nan),
        vertical_strength=(params.vertical_strength if problems["vertical"] is not None
                           or keeps_recording(params.vertical_strength) else np.nan),
        loglik_h=np.nan, loglik_v=np.nan, evaluations=0)


def estimate_strength(track: Track, rows=None, *, params: SmoothParams = SmoothParams(),
                      progress: Callable[[float], None] | None = None,
                      cancelled: Callable[[], bool] | None = None) -> StrengthEstimate:
    """Maximum-likelihood smoothing strength (and, with ``estimate_noise``, noise) of a track.

    Each automatic axis maximises the innovation log-likelihood over ``log10 q`` in the
    strength range with a bounded scalar search (Brent); an axis whose strength is set in
    ``params`` keeps it. ``rows``: only the measurements of these rows are used (the others
    count as missing). ``progress(fraction)`` is called after every likelihood pass;
    ``cancelled()`` is polled before each and raises :class:`EstimateCancelled` when True.
    """
    arrays = _track_arrays(track, rows)
    return _estimate(arrays, params, rows, progress, cancelled)


def smooth(track: Track, params: SmoothParams = SmoothParams(), *, rows=None, track_index: int = 0,
           stats_params: StatsParams = StatsParams(), plane=None, before=None,
           want_std: bool | str = True, memo: dict | None = None) -> Proposal:
    """Propose the smoothed track.

    ``rows``: sorted row indices of the user's selection; only they change, while whole
    segments around them are used as context (and, for an automatic strength, the
    selection's own measurements for the estimate). ``info`` holds the q, r and
    strength values used, the log-likelihoods, per-row ``speed_mps`` from the smoothed
    velocity and ``max_speed_smoothed_mps``; ``sigma_h_m`` (per horizontal axis) and
    ``sigma_v_m`` are the posterior standard deviations of the changed rows (``None`` with
    ``want_std=False``, which saves their computation when nobody shows them; ``"horizontal"`` or
    ``"vertical"`` computes that axis group's only, e.g. for the profile's band).

    ``plane``: the track already projected (:func:`editor.processing.cleaning_base.planar`, any
    projection), used instead of projecting it again; ``before``: the track's totals, if known.

    ``memo``: a dict the caller keeps for one state of ``track`` (and one ``plane``) and passes to
    every call on it, e.g. while a slider is moved. The prepared arrays and problems are kept
    there, and the last smoothed result of each axis group with its settings, so a change of the
    elevation strength alone does not smooth positions again (nor the other way round). The
    proposal is the same with or without it: the same functions run on the same inputs.
    """
    n = len(track.points)
    chosen = None if rows is None else np.unique(np.asarray(rows, dtype=np.int64))
    selection = None if chosen is None else chosen.tobytes()
    if memo is not None:
        if "arrays" not in memo or memo["arrays_for"] != selection:
            memo.clear()  # everything in it was made for other rows
            memo["arrays_for"] = selection
            memo["arrays"] = _track_arrays(track, chosen, plane)
        arrays = memo["arrays"]
    else:
        arrays = _track_arrays(track, chosen, plane)
    problems = _problems(arrays, params, memo=memo)
    automatic = any(problems[axis] is not None and strength is None for axis, strength in (
        ("horizontal", params.horizontal_strength), ("vertical", params.vertical_strength)))
    if automatic or params.estimate_noise:
        estimate = _estimate(arrays, params, chosen, None, None,
                             problems=problems if chosen is None else None)
    else:
        estimate = _fixed(params, problems)
    write = arrays.rows if chosen is None else chosen[np.isin(chosen, arrays.rows)]
    at = np.searchsorted(arrays.rows, write)
    points = track.points.copy()
    sigma_h = sigma_v = None
    speed = np.full(n, np.nan)
    results = {}
    for axis, q, r in (("horizontal", estimate.q_h, estimate.r_h), ("vertical", estimate.q_v, estimate.r_v)):
        problem = problems[axis]
        if problem is None:
            continue
        sigma = params.horizontal_sigma_m if axis == "horizontal" else params.vertical_sigma_m
        with_std = want_std is True or want_std == axis
        key = (sigma, q, r, with_std)
        kept = None if memo is None else memo.get(("result", axis))
        if kept is not None and kept[0] == key:
            results[axis] = kept[1]
            continue
        if r != sigma ** 2:  # estimated noise: rebuild with the scaled variances
            problem = Problem(problem.t, problem.z, problem.r * (r / sigma ** 2), starts=arrays.starts)
        results[axis] = problem.smooth(q, want_std=with_std)
        if memo is not None:  # only the last result per axis group: a drag must not pile them up
            memo[("result", axis)] = (key, results[axis])

    if "horizontal" in results:
        res = results["horizontal"]
        x_hat, y_hat = res.position[at, 0], res.position[at, 1]
        # keyed by the result they come from: two previews may share the memo at the same time
        kept = None if memo is None else memo.get(("latlon", "horizontal"))
        if kept is not None and kept[0] is res:
            lat, lon = kept[1], kept[2]
        else:
            lat, lon = arrays.projection.to_latlon(x_hat, y_hat)
            if memo is not None:
                memo[("latlon", "horizontal")] = (res, lat, lon)
        # rows the smoother left exactly in place keep their original coordinates bit for bit
        same = (x_hat == arrays.x[at]) & (y_hat == arrays.y[at])
        points.lat[write] = np.where(same, points.lat[write], lat)
        points.lon[write] = np.where(same, points.lon[write], lon)
        if res.position_std is not None:
            sigma_h = np.full(n, np.nan)
            sigma_h[write] = np.sqrt(0.5 * (res.position_std[at, 0] ** 2 + res.position_std[at, 1] ** 2))
        timed = arrays.timed[at]
        speed[write] = np.where(timed, np.hypot(res.velocity[at, 0], res.velocity[at, 1]), np.nan)
    if "vertical" in results:
        res = results["vertical"]
        ele_hat = res.position[at, 0]
        had = np.isfinite(points.ele[write])
        points.ele[write] = np.where(had, ele_hat, points.ele[write])
        if res.position_std is not None:
            sigma_v = np.full(n, np.nan)
            sigma_v[write] = np.where(had, res.position_std[at, 0], np.nan)

    finite_speed = speed[np.isfinite(speed)]
    info = {
        "q_h": estimate.q_h, "q_v": estimate.q_v, "r_h": estimate.r_h, "r_v": estimate.r_v,
        "horizontal_strength": estimate.horizontal_strength,
        "vertical_strength": estimate.vertical_strength,
        "loglik_h": results["horizontal"].loglik if "horizontal" in results else np.nan,
        "loglik_v": results["vertical"].loglik if "vertical" in results else np.nan,
        "estimated_horizontal": params.horizontal_strength is None and "horizontal" in results,
        "estimated_vertical": params.vertical_strength is None and "vertical" in results,
        "estimated_noise": params.estimate_noise,
        "evaluations": estimate.evaluations,
        "speed_mps": speed,
        "max_speed_smoothed_mps": float(finite_speed.max()) if len(finite_speed) else float("nan"),
        "segments_indexed_by_distance": arrays.by_distance,
        "caution": CAUTION,
    }
    return make_proposal("smooth", "Smooth track", track_index, track, points, track.segment_starts,
                         np.arange(n), stats_params, before=before, sigma_h_m=sigma_h, sigma_v_m=sigma_v, info=info)
