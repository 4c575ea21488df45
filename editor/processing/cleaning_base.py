"""Array helpers shared by the cleaning tools (spikes, gaps, stops, simplification).

Everything here works on whole columns: a track is projected once into the
local transverse Mercator plane (metres), times become float seconds (UTC
epoch), and per-segment work is expressed through segment bounds rather than
per-point Python objects.

A caller that runs several tools in a row (the batch clean) projects the track
once and hands the plane to each tool (their ``plane`` argument); after each
step :func:`replan` reprojects only the rows the step moved or inserted, with
the same projection. Likewise it passes the totals it already knows
(``before``) so that a proposal does not recompute them.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any
from statistics import NormalDist

import numpy as np

from ..geo.projection import LocalProjection
from ..model.document import Track
from ..model.points import PointTable
from .activity import Activity, resolve_activity
from .proposal import Proposal, make_proposal
from .stats import StatsParams, Totals, track_totals

#: 1 / Phi^-1(3/4): turns a median absolute deviation into a Gaussian standard deviation.
MAD_TO_SIGMA = 1.482602218505602


@dataclass(frozen=True)
class PlanarTrack:
    """A track's columns in the local plane.

    Attributes
    ----------
    x, y : metres east / north of the projection origin.
    ele : metres, NaN where absent.
    t_s : seconds since the Unix epoch (UTC), NaN where absent.
    bounds : ``(start, stop)`` row range of each segment.
    projection : the projection used, to map results back to degrees.
    """

    x: np.ndarray
    y: np.ndarray
    ele: np.ndarray
    t_s: np.ndarray
    bounds: list[tuple[int, int]]
    projection: LocalProjection

    def __len__(self) -> int:
        return len(self.x)


def planar(track: Track, projection: LocalProjection | None = None) -> PlanarTrack:
    """Project ``track`` onto a transverse Mercator plane: ``projection``, or one centred on its own points."""
    p = track.points
    if projection is None:
        projection = LocalProjection.centred_on(p.lat, p.lon)
    x, y = projection.to_xy(p.lat, p.lon) if len(p) else (np.zeros(0), np.zeros(0))
    return PlanarTrack(x, y, p.ele.astype(np.float64), p.time_s(), track.segment_bounds(), projection)


def plane_of(track: Track, plane: PlanarTrack | None) -> PlanarTrack:
    """``plane`` if given (checked against ``track``), else :func:`planar` of the track."""
    if plane is None:
        return planar(track)
    if len(plane) != len(track.points):
        raise ValueError(f"the plane has {len(plane)} rows but the track has {len(track.points)} points")
    return plane


def replan(plane: PlanarTrack, track: Track, source_rows: np.ndarray, changed: np.ndarray) -> PlanarTrack:
    """The plane of ``track`` (a tool's result) from ``plane`` (of the track the tool was given).

    Rows that come unchanged from a source row keep its planar coordinates; rows that are
    inserted or changed are projected with the same projection, so the result is exactly
    ``planar(track, plane.projection)``.
    """
    p = track.points
    source_rows = np.asarray(source_rows, dtype=np.int64)
    fresh = (source_rows < 0) | np.asarray(changed, dtype=bool)
    src = np.maximum(source_rows, 0)
    x, y = plane.x[src], plane.y[src]
    if fresh.any():
        x[fresh], y[fresh] = plane.projection.to_xy(p.lat[fresh], p.lon[fresh])
    return PlanarTrack(x, y, p.ele.astype(np.float64), p.time_s(), track.segment_bounds(), plane.projection)


def chi2_quantile(confidence: float, dof: int) -> float:
    """Chi-square quantile ``scipy.stats.chi2.ppf(confidence, dof)``.

    Closed forms for one degree of freedom (the square of the two-sided normal quantile) and
    two (``-2 ln(1 - confidence)``, the exponential law), which is what the gates use; other
    degrees of freedom use ``scipy.special.chdtri`` (the function ``chi2.ppf`` calls), imported
    only then because ``scipy.special`` takes a tenth of a second to import.
    """
    if dof == 1:
        return NormalDist().inv_cdf(0.5 + 0.5 * confidence) ** 2
    if dof == 2:
        return -2.0 * math.log1p(-confidence)
    from scipy.special import chdtri

    return float(chdtri(dof, 1.0 - confidence))


def timed_segments(track: PlanarTrack, min_points: int = 3) -> list[tuple[int, int]]:
    """Segments the time-based tools can work on: enough points, every time present and non-decreasing,
    and time actually advancing: more than half of the steps take time.

    A recording whose timestamps are all equal (or mostly equal) carries no timing: speeds over its
    zero-second steps are infinite, and spike removal once collapsed such a track to one point. Such
    segments are treated as untimed and left to the tools that need no times.
    """
    out = []
    for a, b in track.bounds:
        t = track.t_s[a:b]
        if b - a < min_points or not np.isfinite(t).all():
            continue
        if times_advance(t):
            out.append((a, b))
    return out


def times_advance(t: np.ndarray) -> bool:
    """Do these (present) times never go back and advance on more than half of the steps?"""
    steps = np.diff(t)
    return not (steps < 0).any() and np.count_nonzero(steps > 0) * 2 > len(steps)


#: Window (seconds) of the speeds used to infer an activity: long enough to average out jitter.
INFER_WINDOW_S = 10.0


def activity_for(track: PlanarTrack, name: str | Activity) -> Activity:
    """Resolve ``name`` (a preset, or ``"auto"``: inferred from the 99th percentile of windowed speed)."""
    if isinstance(name, Activity) or name != "auto":
        return resolve_activity(name)
    speeds = [window_speed(track.t_s[a:b], track.x[a:b], track.y[a:b], INFER_WINDOW_S)
              for a, b in timed_segments(track)]
    joined = np.concatenate(speeds) if speeds else np.zeros(0)
    return resolve_activity(name, float(np.percentile(joined, 99)) if len(joined) else None)


def selection_mask(n: int, rows: np.ndarray | None) -> np.ndarray:
    """Boolean mask of the rows a tool may change (all of them when ``rows`` is ``None``)."""
    if rows is None:
        return np.ones(n, dtype=bool)
    mask = np.zeros(n, dtype=bool)
    rows = np.asarray(rows, dtype=np.int64)
    mask[rows[(rows >= 0) & (rows < n)]] = True
    return mask


def true_runs(mask: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``(starts, stops)`` of the runs of ``True`` in a boolean array (stop exclusive)."""
    padded = np.concatenate(([False], np.asarray(mask, dtype=bool), [False]))
    edges = np.flatnonzero(padded[1:] != padded[:-1])
    return edges[0::2], edges[1::2]


def window_means(values: np.ndarray, lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
    """Mean of ``values`` over rows ``lo[i]:hi[i]`` for every ``i`` (cumulative sums, O(n))."""
    csum = np.concatenate(([0.0], np.cumsum(values)))
    count = np.maximum(hi - lo, 1)
    return (csum[hi] - csum[lo]) / count


def window_speed(t_s: np.ndarray, x: np.ndarray, y: np.ndarray, window_s: float) -> np.ndarray:
    """Speed (m/s) at each point from the mean positions of the ``window_s`` seconds before and after it.

    Averaging a window of fixes on each side divides their scatter by the square
    root of the window's point count, so standing still with 3 m of jitter reads
    as a few centimetres per second instead of the metres per second that
    point-to-point speeds show. One segment at a time; times must be increasing.
    """
    n = len(t_s)
    if n < 2:
        return np.zeros(n)
    t_s = t_s - t_s[0]  # small numbers keep the cumulative sums exact to well below a millisecond
    idx = np.arange(n)
    lo = np.searchsorted(t_s, t_s - window_s, side="left")
    hi = np.searchsorted(t_s, t_s + window_s, side="right")
    # before: rows lo..i (inclusive), after: rows i..hi-1 (inclusive); the point itself is in both.
    b_lo, b_hi, a_lo, a_hi = lo, idx + 1, idx, hi
    tb, ta = window_means(t_s, b_lo, b_hi), window_means(t_s, a_lo, a_hi)
    dx = window_means(x, a_lo, a_hi) - window_means(x, b_lo, b_hi)
    dy = window_means(y, a_lo, a_hi) - window_means(y, b_lo, b_hi)
    dt = ta - tb
    with np.errstate(invalid="ignore", divide="ignore"):
        speed = np.hypot(dx, dy) / dt
    return np.where(dt > 0, speed, 0.0)


def noise_sigma(t_s: np.ndarray, *columns: np.ndarray) -> float:
    """Robust estimate (metres) of the white scatter of one or more coordinate columns.

    Each interior point is compared with the straight-line interpolation of its
    two neighbours in time; for white noise of standard deviation sigma that
    residual has variance ``sigma^2 (1 + w^2 + (1 - w)^2)`` (w the time weight).
    The median absolute residual is robust to spikes and to occasional real
    turns. Returns NaN with fewer than three usable points.
    """
    if len(t_s) < 3:
        return float("nan")
    dt0, dt1 = t_s[1:-1] - t_s[:-2], t_s[2:] - t_s[1:-1]
    span = dt0 + dt1
    ok = span > 0
    w = np.where(ok, dt1 / np.where(ok, span, 1.0), 0.5)
    gain = np.sqrt(1.0 + w * w + (1.0 - w) ** 2)
    residuals = []
    for col in columns:
        r = (col[1:-1] - (w * col[:-2] + (1.0 - w) * col[2:])) / gain
        residuals.append(r[ok & np.isfinite(r)])
    r = np.concatenate(residuals)
    if len(r) < 3:
        return float("nan")
    return float(MAD_TO_SIGMA * np.median(np.abs(r - np.median(r))))


def unchanged_proposal(tool: str, label: str, track_index: int, track: Track, stats_params: StatsParams,
                       before: Totals | None = None, **kwargs: Any) -> Proposal:
    """The "nothing to do" proposal: what :func:`make_proposal` would build, with the totals computed once.

    ``before``: the totals of ``track`` with ``stats_params`` when the caller already has them.
    """
    n = len(track.points)
    totals = track_totals(track, stats_params) if before is None else before
    return Proposal(tool=tool, label=label, track=track_index, points=track.points.copy(),
                    segment_starts=track.segment_starts.copy(), source_rows=np.arange(n, dtype=np.int64),
                    changed=np.zeros(n, dtype=bool), removed=np.zeros(0, dtype=np.int64), before=totals,
                    after=totals, **kwargs)


def keep_proposal(tool: str, label: str, track_index: int, track: Track, keep: np.ndarray,
                  stats_params: StatsParams, before: Totals | None = None, **kwargs: Any) -> Proposal:
    """A proposal that only drops rows (``keep`` False); segment boundaries follow the kept rows.

    ``before``: the totals of ``track`` when already known (see :func:`unchanged_proposal`).
    """
    if keep.all():
        return unchanged_proposal(tool, label, track_index, track, stats_params, before, **kwargs)
    removed = np.flatnonzero(~keep)
    starts = track.segment_starts - np.searchsorted(removed, track.segment_starts, side="left")
    source = np.flatnonzero(keep)
    return make_proposal(tool, label, track_index, track, track.points.take(source), starts, source,
                         stats_params, before=before, **kwargs)


def _same(a: np.ndarray, b: np.ndarray) -> bool:
    return bool(np.array_equal(a, b, equal_nan=True)) if a.dtype.kind == "f" else bool(np.array_equal(a, b))


def values_proposal(tool: str, label: str, track_index: int, track: Track, columns: dict[str, np.ndarray],
                    stats_params: StatsParams, before: Totals | None = None, **kwargs: Any) -> Proposal:
    """A proposal that keeps every row and overwrites some columns (``before`` as in :func:`keep_proposal`)."""
    if all(_same(getattr(track.points, key), values) for key, values in columns.items()):
        return unchanged_proposal(tool, label, track_index, track, stats_params, before, **kwargs)
    points: PointTable = track.points.copy()
    for key, values in columns.items():
        getattr(points, key)[:] = values
    return make_proposal(tool, label, track_index, track, points, track.segment_starts,
                         np.arange(len(points)), stats_params, before=before, **kwargs)


__all__ = ["PlanarTrack", "planar", "plane_of", "replan", "chi2_quantile", "activity_for", "timed_segments",
           "times_advance",
           "selection_mask", "true_runs", "window_means", "window_speed", "noise_sigma", "keep_proposal",
           "values_proposal", "unchanged_proposal", "MAD_TO_SIGMA"]
