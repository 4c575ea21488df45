"""Track totals: distance, duration, moving time, speed, ascent and descent.

This module is the one place such numbers come from; the totals panel, the
command line, the tool proposals and the tests all call it.

Thresholds (defaults in :class:`StatsParams`)
--------------------------------------------
``moving_speed_mps = 0.5``
    A step counts as moving when its average speed is above 0.5 m/s (1.8 km/h),
    slower than a slow walk. Common practice; a design choice, not a standard.
``climb_threshold_m = 5.0``
    Ascent and descent use a climb threshold (a hysteresis): a change of direction is
    only accepted once the elevation has moved this far from the last turning
    point. Recorded elevation is quantised to 1 m and wanders by a few metres
    (common practice), so every ±1 m step would otherwise count as climbing; see
    ``check-values.md`` for the expected size of that error. The raw sums with
    no threshold are reported beside the thresholded ones.
``max_speed_min_dt_s = 0.5``
    Steps shorter than this are ignored for the maximum speed, because two
    fixes a few milliseconds apart turn centimetres of jitter into absurd speeds.

Speeds here are step averages from positions; smoothed speeds from the Kalman
smoother are better and are what the smoothing proposal reports.
"""
from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np

from ..geo.distance import step_lengths
from ..model.document import Document, Track


@dataclass(frozen=True)
class StatsParams:
    """Thresholds of the totals; see the module notes for why each default."""

    moving_speed_mps: float = 0.5
    climb_threshold_m: float = 5.0
    max_speed_min_dt_s: float = 0.5


@dataclass(frozen=True)
class Totals:
    """Totals of a point range. Distances in metres, times in seconds, speed in m/s.

    ``duration_s``, ``moving_time_s`` and ``max_speed_mps`` are NaN without timestamps.
    """

    points: int = 0
    segments: int = 0
    distance_m: float = 0.0
    distance_3d_m: float = 0.0
    ascent_m: float = 0.0
    descent_m: float = 0.0
    raw_ascent_m: float = 0.0
    raw_descent_m: float = 0.0
    duration_s: float = float("nan")
    moving_time_s: float = float("nan")
    max_speed_mps: float = float("nan")

    def as_dict(self) -> dict:
        return asdict(self)

    def __add__(self, other: "Totals") -> "Totals":
        def nansum(a: float, b: float) -> float:
            return a if np.isnan(b) else b if np.isnan(a) else a + b

        def nanmax(a: float, b: float) -> float:
            return a if np.isnan(b) else b if np.isnan(a) else max(a, b)

        return Totals(
            points=self.points + other.points, segments=self.segments + other.segments,
            distance_m=self.distance_m + other.distance_m,
            distance_3d_m=self.distance_3d_m + other.distance_3d_m,
            ascent_m=self.ascent_m + other.ascent_m, descent_m=self.descent_m + other.descent_m,
            raw_ascent_m=self.raw_ascent_m + other.raw_ascent_m,
            raw_descent_m=self.raw_descent_m + other.raw_descent_m,
            duration_s=nansum(self.duration_s, other.duration_s),
            moving_time_s=nansum(self.moving_time_s, other.moving_time_s),
            max_speed_mps=nanmax(self.max_speed_mps, other.max_speed_mps))


def climb(elevation: np.ndarray, threshold_m: float) -> tuple[float, float]:
    """Total ascent and descent (metres) with a climb threshold of ``threshold_m`` (a hysteresis).

    NaN elevations are skipped. A rise is only counted once the profile has
    turned down again by more than the threshold, or at the end of the data;
    with ``threshold_m = 0`` this is the plain sum of rises and falls.
    """
    e = np.asarray(elevation, dtype=np.float64)
    e = e[np.isfinite(e)]
    if len(e) < 2:
        return 0.0, 0.0
    d = np.diff(e)
    if threshold_m <= 0:
        return float(d[d > 0].sum()), float(-d[d < 0].sum())
    # Only turning points can change the result: drop flat repeats and monotone interiors
    # so the Python loop below runs over a fraction of the samples.
    keep = np.append(True, d != 0)
    e = e[keep]
    if len(e) < 3:
        rise = float(e[-1] - e[0])
        return (rise, 0.0) if rise > threshold_m else (0.0, -rise) if -rise > threshold_m else (0.0, 0.0)
    s = np.sign(np.diff(e))
    turning = np.concatenate(([True], s[1:] != s[:-1], [True]))
    values = e[turning].tolist()

    ascent = descent = 0.0
    anchor = extreme = low = high = values[0]
    direction = 0
    for v in values[1:]:
        if direction > 0:
            if v > extreme:
                extreme = v
            elif extreme - v > threshold_m:
                ascent += extreme - anchor
                anchor, extreme, direction = extreme, v, -1
        elif direction < 0:
            if v < extreme:
                extreme = v
            elif v - extreme > threshold_m:
                descent += anchor - extreme
                anchor, extreme, direction = extreme, v, 1
        else:
            # No direction yet: measure the first move from the lowest or highest point so far.
            low, high = min(low, v), max(high, v)
            if v - low > threshold_m:
                anchor, extreme, direction = low, v, 1
            elif high - v > threshold_m:
                anchor, extreme, direction = high, v, -1
    if direction > 0:
        ascent += extreme - anchor
    elif direction < 0:
        descent += anchor - extreme
    return ascent, descent


def _range_totals(lat: np.ndarray, lon: np.ndarray, ele: np.ndarray, t: np.ndarray, params: StatsParams,
                  segments: int) -> Totals:
    n = len(lat)
    if n == 0:
        return Totals(segments=segments)
    steps = step_lengths(lat, lon)
    steps = np.where(np.isfinite(steps), steps, 0.0)
    de = np.diff(ele)
    with np.errstate(invalid="ignore"):
        steps_3d = np.where(np.isfinite(de), np.hypot(steps, np.nan_to_num(de)), steps)
    ascent, descent = climb(ele, params.climb_threshold_m)
    raw_ascent, raw_descent = climb(ele, 0.0)
    duration = moving = max_speed = float("nan")
    if np.isfinite(t).sum() >= 1:
        finite_t = t[np.isfinite(t)]
        duration = float(finite_t[-1] - finite_t[0]) if len(finite_t) > 1 else 0.0
        dt = np.diff(t)
        ok = np.isfinite(dt) & (dt > 0)
        with np.errstate(invalid="ignore", divide="ignore"):
            speed = np.where(ok, steps / np.where(ok, dt, 1.0), 0.0)
        moving = float(dt[ok & (speed > params.moving_speed_mps)].sum())
        fast_ok = ok & (dt >= params.max_speed_min_dt_s)
        max_speed = float(speed[fast_ok].max()) if fast_ok.any() else (0.0 if n > 1 else float("nan"))
    return Totals(points=n, segments=segments, distance_m=float(steps.sum()),
                  distance_3d_m=float(steps_3d.sum()), ascent_m=ascent, descent_m=descent,
                  raw_ascent_m=raw_ascent, raw_descent_m=raw_descent, duration_s=duration,
                  moving_time_s=moving, max_speed_mps=max_speed)


def segment_totals(track: Track, params: StatsParams = StatsParams()) -> list[Totals]:
    """Totals of each segment of ``track`` (no distance is counted between segments)."""
    p = track.points
    t = p.time_s()
    return [_range_totals(p.lat[a:b], p.lon[a:b], p.ele[a:b], t[a:b], params, 1)
            for a, b in track.segment_bounds()]


def distance_along(track: Track) -> np.ndarray:
    """Distance (metres) from the track's start to each point, step by step as in the totals.

    Nothing is counted between segments (a segment starts where the previous one ended);
    steps with a missing coordinate count 0.
    """
    p = track.points
    steps = step_lengths(p.lat, p.lon) if len(p) > 1 else np.zeros(0)
    steps = np.where(np.isfinite(steps), steps, 0.0)
    starts = np.asarray(track.segment_starts, dtype=np.int64)
    starts = starts[(starts > 0) & (starts < len(p))]
    steps[starts - 1] = 0.0
    return np.concatenate(([0.0], np.cumsum(steps))) if len(p) else np.zeros(0)


def track_totals(track: Track, params: StatsParams = StatsParams()) -> Totals:
    """Totals of a whole track: the sum over its segments."""
    total = Totals()
    for part in segment_totals(track, params):
        total = total + part
    return total


def document_totals(doc: Document, params: StatsParams = StatsParams()) -> Totals:
    """Totals over every track of the document."""
    total = Totals()
    for track in doc.tracks:
        total = total + track_totals(track, params)
    return total
