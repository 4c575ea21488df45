"""Arrays the views draw, derived from one track; Qt-free.

A :class:`TrackGeometry` holds the planar coordinates (metres in the
document's :class:`~editor.geo.LocalProjection`), the cumulative distance along
the track (metres, from :func:`editor.geo.step_lengths`; nothing is counted
between segments, as in :mod:`editor.processing.stats`), elevations and times.

:func:`lod_indices` is the level-of-detail step both views use: it keeps only
the points that fall in the visible rectangle (plus their neighbours, so lines
leave the screen correctly) and drops consecutive points that land in the same
screen pixel, so a 100,000-point track is drawn with at most a few thousand
vertices at any zoom.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..geo.distance import step_lengths
from ..geo.projection import LocalProjection
from ..model.document import Document, Track

#: Marker in an index array for "break the line here".
BREAK = -1
#: Screen distance (pixels along the drawn path) between the vertices kept on the map.
PATH_STEP_PX = 1.5


@dataclass
class TrackGeometry:
    """Drawing arrays of one track, one entry per point row.

    Attributes
    ----------
    x_m, y_m : planar position, metres east / north of the projection origin.
    distance_m : cumulative distance along the track from its first point, metres.
    ele_m : elevation, metres (NaN where absent).
    time_s : seconds since the Unix epoch, UTC (NaN where absent).
    segment_starts : row of each segment's first point.
    lat, lon : copies of the coordinates the planar ones came from (degrees).
    """

    x_m: np.ndarray
    y_m: np.ndarray
    distance_m: np.ndarray
    ele_m: np.ndarray
    time_s: np.ndarray
    segment_starts: np.ndarray
    lat: np.ndarray
    lon: np.ndarray

    @classmethod
    def from_track(cls, track: Track, projection: LocalProjection,
                   previous: "TrackGeometry | None" = None) -> "TrackGeometry":
        """Arrays of ``track``; with ``previous`` (same projection) only moved points are reprojected."""
        p = track.points
        if previous is not None and len(previous) == len(p) and len(p):
            moved = ~((previous.lat == p.lat) & (previous.lon == p.lon))
            x, y = previous.x_m.copy(), previous.y_m.copy()
            if moved.any():
                x[moved], y[moved] = projection.to_xy(p.lat[moved], p.lon[moved])
        else:
            x, y = projection.to_xy(p.lat, p.lon)
        steps = step_lengths(p.lat, p.lon)
        steps = np.where(np.isfinite(steps), steps, 0.0)
        inner = track.segment_starts[(track.segment_starts > 0) & (track.segment_starts < len(p))]
        steps[inner - 1] = 0.0  # no distance between segments
        distance = np.concatenate(([0.0], np.cumsum(steps))) if len(p) else np.zeros(0)
        return cls(x, y, distance, p.ele.copy(), p.time_s(), track.segment_starts.copy(), p.lat.copy(),
                   p.lon.copy())

    @classmethod
    def planar(cls, lat: np.ndarray, lon: np.ndarray, x_m: np.ndarray, y_m: np.ndarray) -> "TrackGeometry":
        """Only known planar coordinates of ``lat``/``lon``: a ``previous`` for :meth:`from_track`."""
        z = np.zeros(0)
        return cls(x_m, y_m, z, z, z, np.zeros(1, dtype=np.int64), lat, lon)

    @classmethod
    def empty(cls) -> "TrackGeometry":
        z = np.zeros(0)
        return cls(z, z, z, z, z, np.zeros(1, dtype=np.int64), z, z)

    def __len__(self) -> int:
        return len(self.x_m)

    @property
    def has_time(self) -> bool:
        return bool(np.isfinite(self.time_s).any())

    def segment_of(self, rows) -> np.ndarray:
        return np.searchsorted(self.segment_starts, np.asarray(rows), side="right") - 1

    def segment_ends(self) -> np.ndarray:
        """Row of each non-empty segment's last point."""
        stops = np.append(self.segment_starts[1:], len(self))
        nonempty = stops > self.segment_starts
        return stops[nonempty] - 1

    def breaks_after(self) -> np.ndarray:
        """Boolean per row: the line must not continue to the next row (segment end)."""
        out = np.zeros(len(self), dtype=bool)
        if len(self):
            out[self.segment_ends()] = True
        return out

    def grade_at(self, row: int, half_window_m: float = 25.0) -> float:
        """Grade (rise over run, fraction) around ``row`` over about ±``half_window_m`` of track."""
        return _slope(self.distance_m, self.ele_m, self.distance_m, row, half_window_m)

    def speed_at(self, row: int, half_window_s: float = 5.0) -> float:
        """Average speed (m/s) around ``row`` over about ±``half_window_s``."""
        rate = _slope(self.time_s, self.distance_m, self.time_s, row, half_window_s)
        return rate

    def rows_in_range(self, axis: np.ndarray, low: float, high: float) -> np.ndarray:
        """Rows whose ``axis`` value (distance or time) lies in ``[low, high]``."""
        with np.errstate(invalid="ignore"):
            return np.flatnonzero((axis >= low) & (axis <= high))


def _slope(x: np.ndarray, y: np.ndarray, key: np.ndarray, row: int, half: float) -> float:
    if not 0 <= row < len(key) or not np.isfinite(key[row]):
        return float("nan")
    lo = int(np.searchsorted(key, key[row] - half, side="left"))
    hi = int(np.searchsorted(key, key[row] + half, side="right")) - 1
    lo, hi = max(min(lo, row), 0), min(max(hi, row), len(key) - 1)
    if hi == lo:
        lo, hi = max(row - 1, 0), min(row + 1, len(key) - 1)
    dx = x[hi] - x[lo]
    if not np.isfinite(dx) or dx <= 0:
        return float("nan")
    return float((y[hi] - y[lo]) / dx)


def document_projection(doc: Document) -> LocalProjection:
    """One projection for the whole document, centred on all its track, route and waypoint points."""
    lats = [t.points.lat for t in doc.tracks] + [r.points.lat for r in doc.routes] + [doc.waypoints.lat]
    lons = [t.points.lon for t in doc.tracks] + [r.points.lon for r in doc.routes] + [doc.waypoints.lon]
    return LocalProjection.centred_on(np.concatenate(lats), np.concatenate(lons))


def lod_indices(x: np.ndarray, y: np.ndarray, rect: tuple[float, float, float, float],
                pixel: tuple[float, float], breaks_after: np.ndarray | None = None,
                columns: bool = False, budget: int = 2000) -> np.ndarray:
    """Rows to draw for the visible ``rect = (x0, y0, x1, y1)`` at ``pixel = (width, height)``.

    Returns an int64 array of rows with :data:`BREAK` where the line must be
    interrupted (a segment end, rows skipped because they are off screen).
    Points off screen are kept when a neighbour is on screen so the line
    reaches the edge. Consecutive points are grouped (by length along the path on screen, by
    pixel column when ``columns`` is set, or in equal runs when there are more
    than ``budget`` groups); each group keeps its first point (a pixel column: only where the
    line starts), its last point where the line ends, and its extremes (a pixel column: in y;
    runs: in x and y), so spikes stay visible at every zoom.
    """
    n = len(x)
    if n == 0:
        return np.zeros(0, dtype=np.int64)
    x0, y0, x1, y1 = rect
    mx, my = (x1 - x0) * 0.05, (y1 - y0) * 0.05
    with np.errstate(invalid="ignore"):
        inside = (x >= x0 - mx) & (x <= x1 + mx) & (y >= y0 - my) & (y <= y1 + my)
    keep = inside.copy()
    keep[1:] |= inside[:-1]
    keep[:-1] |= inside[1:]
    rows = np.flatnonzero(keep)
    if len(rows) < 3:
        return rows.astype(np.int64)
    px, py = max(pixel[0], 1e-12), max(pixel[1], 1e-12)
    xr, yr = x[rows], y[rows]
    jump = np.diff(rows) > 1
    if breaks_after is not None:
        jump |= breaks_after[rows[:-1]]
    with np.errstate(invalid="ignore"):
        if columns:
            cx = np.floor(xr / px)
            new_group = cx[1:] != cx[:-1]
        else:
            # One vertex per PATH_STEP_PX of drawn path: jitter that stays inside a pixel or two
            # collapses, while every excursion (a spike) keeps vertices along its length.
            step_px = np.hypot(np.diff(xr) / px, np.diff(yr) / py)
            along = np.concatenate(([0.0], np.cumsum(np.nan_to_num(step_px, nan=0.0))))
            cell = np.floor(along / PATH_STEP_PX)
            new_group = cell[1:] != cell[:-1]
    new_group |= jump
    # Within one path step the extremes are all within a pixel or two: the first point suffices.
    # In a pixel column only the lowest and the highest point show (x changes by under a pixel):
    # the line runs from one to the other, at most two vertices a column.
    extremes: tuple = (yr,) if columns else ()
    if np.count_nonzero(new_group) > budget:
        step = int(np.ceil(len(rows) / budget))
        new_group = jump.copy()
        new_group[step - 1::step] = True
        extremes, columns = (xr, yr), False
    starts = np.concatenate(([0], np.flatnonzero(new_group) + 1))
    stops = np.append(starts[1:], len(rows))
    group = np.repeat(np.arange(len(starts)), stops - starts)
    chosen = np.zeros(len(rows), dtype=bool)
    begins_line = np.concatenate(([True], jump))
    chosen[starts[begins_line[starts]] if columns else starts] = True
    # A group's last point matters only where the line stops after it; elsewhere the next
    # group's first point is at most a pixel away.
    ends_line = np.append(jump, True)
    chosen[(stops - 1)[ends_line[stops - 1]]] = True
    with np.errstate(invalid="ignore"):
        for values in extremes:
            filled = np.where(np.isfinite(values), values, np.nan)
            lo = np.fmin.reduceat(filled, starts)
            hi = np.fmax.reduceat(filled, starts)
            for extreme in (lo, hi):
                candidates = np.flatnonzero(filled == extreme[group])
                _, first = np.unique(group[candidates], return_index=True)
                chosen[candidates[first]] = True
    positions = np.flatnonzero(chosen)
    kept = rows[positions]
    # Rows on both sides of a jump start or end a group, so they are kept and adjacent here.
    real_gap = jump[positions[:-1]] & (np.diff(positions) == 1)
    if real_gap.any():
        kept = np.insert(kept, np.flatnonzero(real_gap) + 1, BREAK)
    return kept.astype(np.int64)


def take_with_breaks(values: np.ndarray, rows: np.ndarray) -> np.ndarray:
    """``values[rows]`` as float with NaN where ``rows`` is :data:`BREAK`."""
    out = np.asarray(values, dtype=np.float64)[np.maximum(rows, 0)] if len(values) else np.zeros(len(rows))
    out = np.array(out, dtype=np.float64)
    out[rows == BREAK] = np.nan
    return out


def band_outline(x: np.ndarray, upper: np.ndarray, lower: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Outline of the area between ``upper`` and ``lower`` over ``x``, as one polygon per run of
    finite values: the run along ``upper`` and back along ``lower``, runs separated by NaN.

    Drawn as one path (``connect="finite"`` starts a new polygon after each NaN); built with
    array operations, where pyqtgraph's fill-between item walks the curves' paths in Python.
    """
    x, upper, lower = (np.asarray(a, dtype=np.float64) for a in (x, upper, lower))
    ok = np.isfinite(x) & np.isfinite(upper) & np.isfinite(lower)
    rows = np.flatnonzero(ok)
    if len(rows) < 2:
        return np.zeros(0), np.zeros(0)
    starts = np.concatenate(([0], np.flatnonzero(np.diff(rows) > 1) + 1))
    stops = np.append(starts[1:], len(rows))
    runs = len(starts)
    lengths = stops - starts
    # each run r takes 2 * lengths[r] vertices and one NaN after it
    size = 2 * lengths + 1
    offset = np.concatenate(([0], np.cumsum(size)[:-1]))
    total = int(size.sum())
    out_x = np.full(total, np.nan)
    out_y = np.full(total, np.nan)
    run_of = np.repeat(np.arange(runs), lengths)
    k = np.arange(len(rows)) - starts[run_of]          # position inside the run
    forward = offset[run_of] + k
    backward = offset[run_of] + 2 * lengths[run_of] - 1 - k
    out_x[forward], out_y[forward] = x[rows], upper[rows]
    out_x[backward], out_y[backward] = x[rows], lower[rows]
    return out_x, out_y


@dataclass
class ChangeHighlight:
    """Which rows a preview draws as changed, so a proposal shows only what it changes.

    Attributes
    ----------
    original : bool per original row: the row is removed or moved, or a line through it changes
        (drawn faded, the rest of the track is drawn as usual).
    proposed : bool per proposed row: the row is changed or inserted, or a line through it changes,
        plus one neighbour on each side so the changed stretch joins the unchanged track
        (drawn in the proposal colour).
    """

    original: np.ndarray
    proposed: np.ndarray

    @property
    def changed_rows(self) -> int:
        """Original rows drawn as changed."""
        return int(np.count_nonzero(self.original))


def _grow(mask: np.ndarray) -> np.ndarray:
    """``mask`` plus each set row's neighbours (a line needs both ends of a step)."""
    out = mask.copy()
    out[1:] |= mask[:-1]
    out[:-1] |= mask[1:]
    return out


def edge_rows(mask: np.ndarray) -> np.ndarray:
    """Rows of ``mask`` with an unset neighbour: where a highlighted stretch meets the rest."""
    inner = mask.copy()
    inner[1:] &= mask[:-1]
    inner[:-1] &= mask[1:]
    return mask & ~inner


def change_highlight(source_rows: np.ndarray, changed: np.ndarray, removed: np.ndarray,
                     n_original: int) -> ChangeHighlight:
    """Rows to highlight for a proposal given by its ``source_rows`` (−1: inserted), ``changed``
    (per proposed row) and ``removed`` (original rows); see :class:`ChangeHighlight`."""
    src = np.asarray(source_rows, dtype=np.int64)
    touched = np.asarray(changed, dtype=bool) | (src < 0)
    if len(src) > 1:
        # A kept step whose original had points between (removed) or that joins inserted rows is a new line.
        jump = (src[1:] != src[:-1] + 1)
        touched[:-1] |= jump
        touched[1:] |= jump
    original = np.zeros(n_original, dtype=bool)
    removed = np.asarray(removed, dtype=np.int64)
    original[removed[(removed >= 0) & (removed < n_original)]] = True
    known = touched & (src >= 0) & (src < n_original)
    original[src[known]] = True
    return ChangeHighlight(original=_grow(original), proposed=_grow(touched))
