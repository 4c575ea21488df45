"""Collapse stops: standing still should add no distance and no climb.

A receiver that stands still keeps reporting positions scattered by metres, so
a five-minute pause adds hundreds of metres of zig-zag to the distance. This
tool finds stationary periods and moves all their points onto one position.

How a stop is found
-------------------
Raw point-to-point speed cannot tell standing from walking: 3 m of jitter at
one fix per second reads as 4-5 m/s. Instead each point's speed is measured
between the mean position of the ``window_s`` seconds before it and that of the
``window_s`` seconds after it (:func:`editor.processing.cleaning_base.window_speed`),
which divides the jitter by the square root of the window's point count. A stop
is a run of points whose windowed speed is below the activity's stop speed and
which lasts at least ``min_duration_s``.

The windows blur the edges of a stop by a few seconds, so each stop is then
grown point by point in both directions, by at most one window, until three
points in a row fall outside the stop's own scatter (the 95th percentile of
its core points' distances to its centre): a lone outside point is jitter, a
traveller arriving or leaving stays outside. Real movement within that radius
of the stop (a few metres) is absorbed into it.

What changes
------------
Every point of a stop gets the median position of the stop's core (median of
east and north in the local plane; it resists the odd wild fix). Timestamps are kept, so durations and
moving time stay right. With ``elevation="median"`` (the default) the points
also get the median elevation of the core, so standing still adds no climb
either; ``"keep"`` leaves elevations alone.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..model.document import Track
from .activity import Activity
from .cleaning_base import (PlanarTrack, activity_for, plane_of, selection_mask, timed_segments, true_runs,
                            values_proposal, window_speed)
from .proposal import Proposal
from .stats import StatsParams, Totals

#: Percentile of the core points' distances to the stop's centre that sets the stop's radius.
EDGE_QUANTILE = 95.0
#: Growing a stop's edge ends at this many consecutive points outside its radius.
OUTSIDE_RUN = 3


@dataclass(frozen=True)
class StopParams:
    """Parameters of :func:`collapse_stops`.

    Attributes
    ----------
    activity : preset name (``walk``, ``run``, ``ride``, ``drive``) or ``"auto"`` (inferred from the
        track's speeds); sets the stop speed unless ``speed_threshold_mps`` is given.
    speed_threshold_mps : windowed speed (m/s) below which a point counts as stationary;
        ``None`` uses the activity's stop speed (0.25 m/s walking ... 1 m/s driving).
    min_duration_s : shortest stop (seconds) that is collapsed. Default 30 s: shorter pauses
        (a traffic light, a gate) add little distance and are often slow movement.
    window_s : length (seconds) of the averaging window on each side of a point. Default 20 s
        averages about 20 fixes at the common 1 s logging rate: 3 m of jitter then reads as
        about 0.06 m/s.
    elevation : ``"median"`` (default) gives the stop the median elevation of its core;
        ``"keep"`` leaves elevations as recorded.
    """

    activity: str | Activity = "auto"
    speed_threshold_mps: float | None = None
    min_duration_s: float = 30.0
    window_s: float = 20.0
    elevation: str = "median"


def find_stops(t_s: np.ndarray, x: np.ndarray, y: np.ndarray, threshold_mps: float, min_duration_s: float,
               window_s: float, allowed: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Stationary runs of one segment.

    Parameters
    ----------
    t_s : seconds (increasing); x, y : metres in a local plane.
    threshold_mps, min_duration_s, window_s : see :class:`StopParams`.
    allowed : optional mask of the rows a stop may contain.

    Returns
    -------
    starts, stops : row ranges (stop exclusive) of the stop cores, before edge growing.
    """
    still = window_speed(t_s, x, y, window_s) < threshold_mps
    if allowed is not None:
        still &= allowed
    starts, stops = true_runs(still)
    long_enough = (t_s[stops - 1] - t_s[starts]) >= min_duration_s
    return starts[long_enough], stops[long_enough]


def _inside_run(inside: np.ndarray) -> int:
    """How many leading points belong to the stop: up to the first ``OUTSIDE_RUN`` outside points in a row.

    Lone outside points are jitter of a standing receiver; an approaching or leaving
    traveller is outside for many points in a row.
    """
    outside = ~inside
    run = outside[:len(outside) - OUTSIDE_RUN + 1].copy()
    for k in range(1, OUTSIDE_RUN):
        run &= outside[k:len(outside) - OUTSIDE_RUN + 1 + k]
    end = int(np.argmax(run)) if run.any() else len(inside)
    kept = np.flatnonzero(inside[:end])
    return int(kept[-1]) + 1 if len(kept) else 0


def _grow(t_s: np.ndarray, x: np.ndarray, y: np.ndarray, cx: float, cy: float, radius: float, first: int, last: int,
          lo_limit: int, hi_limit: int, window_s: float, allowed: np.ndarray) -> tuple[int, int]:
    """Extend the row range ``first..last`` by up to one window while neighbours stay within ``radius``."""
    lo = max(lo_limit, int(np.searchsorted(t_s, t_s[first] - window_s, side="left")))
    hi = min(hi_limit, int(np.searchsorted(t_s, t_s[last] + window_s, side="right")))
    inside_before = (np.hypot(x[lo:first] - cx, y[lo:first] - cy) <= radius) & allowed[lo:first]
    inside_after = (np.hypot(x[last + 1:hi] - cx, y[last + 1:hi] - cy) <= radius) & allowed[last + 1:hi]
    return first - _inside_run(inside_before[::-1]), last + _inside_run(inside_after)


def collapse_stops(track: Track, params: StopParams = StopParams(), *, rows: np.ndarray | None = None,
                   track_index: int = 0,
                   stats_params: StatsParams = StatsParams(), plane: PlanarTrack | None = None,
                   before: Totals | None = None) -> Proposal:
    """Propose moving the points of each stationary period onto one position.

    Needs timestamps; segments without complete, ordered times are left alone.
    ``rows`` (sorted row indices) limits the change to the selection; the whole
    track is used as context. ``reasons["stop"]`` lists the collapsed rows;
    ``info`` reports the number of stops, their total duration (s) and the
    distance they no longer add (m). ``plane``: the track already projected
    (:func:`editor.processing.cleaning_base.planar`); ``before``: its totals, if known.
    """
    if params.elevation not in ("median", "keep"):
        raise ValueError(f"elevation must be 'median' or 'keep', not {params.elevation!r}")
    pt = plane_of(track, plane)
    n = len(pt)
    allowed = selection_mask(n, rows)
    activity = activity_for(pt, params.activity)
    threshold = activity.stop_speed_mps if params.speed_threshold_mps is None else params.speed_threshold_mps
    lat, lon, ele = track.points.lat.copy(), track.points.lon.copy(), track.points.ele.copy()
    collapsed = np.zeros(n, dtype=bool)
    stop_count, stopped_s = 0, 0.0
    for a, b in timed_segments(pt):
        t, x, y = pt.t_s[a:b], pt.x[a:b], pt.y[a:b]
        seg_allowed = allowed[a:b]
        starts, stops = find_stops(t, x, y, threshold, params.min_duration_s, params.window_s, seg_allowed)
        limits_lo = np.concatenate(([0], stops[:-1]))
        limits_hi = np.concatenate((starts[1:], [b - a]))
        for s, e, lo_limit, hi_limit in zip(starts, stops, limits_lo, limits_hi):
            cx, cy = np.median(x[s:e]), np.median(y[s:e])
            spread = np.hypot(x[s:e] - cx, y[s:e] - cy)
            radius = float(np.percentile(spread, EDGE_QUANTILE))
            first, last = _grow(t, x, y, cx, cy, radius, s, e - 1, lo_limit, hi_limit, params.window_s, seg_allowed)
            clat, clon = pt.projection.to_latlon(np.array([cx]), np.array([cy]))
            rows_ = slice(a + first, a + last + 1)
            lat[rows_], lon[rows_] = clat[0], clon[0]
            if params.elevation == "median":
                core_ele = track.points.ele[a + s:a + e]
                if np.isfinite(core_ele).any():
                    ele[rows_] = np.where(np.isfinite(ele[rows_]), np.nanmedian(core_ele), np.nan)
            collapsed[rows_] = True
            stop_count += 1
            stopped_s += float(t[last] - t[first])
    proposal = values_proposal("collapse_stops", "Collapse stops", track_index, track,
                               {"lat": lat, "lon": lon, "ele": ele}, stats_params, before,
                               reasons={"stop": np.flatnonzero(collapsed)},
                               info={"activity": activity.name, "stop_speed_mps": threshold})
    proposal.info.update(stops=stop_count, stopped_s=stopped_s,
                         distance_removed_m=proposal.before.distance_m - proposal.after.distance_m)
    return proposal


__all__ = ["StopParams", "collapse_stops", "find_stops"]
