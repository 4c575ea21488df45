"""Edit values for the hand-editing actions, built from a track and the current selection.

Qt-free: every function returns a reversible edit from :mod:`editor.model.edits`
(or raises :class:`HandEditError` with a sentence for the status bar), and the
window wraps it in an :class:`~editor.commands.EditCommand`. Rows are row
indices of the track's point table.
"""
from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from ..geo.projection import LocalProjection
from .document import Track
from .edits import DeletePoints, InsertPoints, MergeSegments, ReplaceTrackPoints, SetValues, SplitSegment
from .points import PointTable


class HandEditError(ValueError):
    """The action does not apply to the current selection; the message says why."""


def _checked_rows(track: Track, rows: ArrayLike) -> np.ndarray:
    rows = np.unique(np.asarray(rows, dtype=np.int64))
    rows = rows[(rows >= 0) & (rows < len(track.points))]
    if not len(rows):
        raise HandEditError("Select one or more points first.")
    return rows


def move_point(track: Track, track_index: int, row: int, x_m: float, y_m: float,
               projection: LocalProjection) -> SetValues:
    """Move ``row`` to planar ``(x_m, y_m)`` of ``projection`` (latitude and longitude change)."""
    lat, lon = projection.to_latlon(np.array([x_m]), np.array([y_m]))
    return SetValues(track_index, np.array([row], dtype=np.int64), {"lat": lat, "lon": lon})


def set_elevation(track_index: int, row: int, ele_m: float) -> SetValues:
    """Give ``row`` the elevation ``ele_m`` (metres)."""
    return SetValues(track_index, np.array([row], dtype=np.int64), {"ele": np.array([ele_m])})


def delete_points(track: Track, track_index: int, rows: ArrayLike) -> DeletePoints:
    """Delete the selected rows."""
    return DeletePoints(track_index, _checked_rows(track, rows))


def trim_before(track: Track, track_index: int, rows: ArrayLike) -> DeletePoints:
    """Delete every point of the track before the first selected one."""
    first = int(_checked_rows(track, rows)[0])
    if first == 0:
        raise HandEditError("Nothing lies before the selection.")
    return DeletePoints(track_index, np.arange(first, dtype=np.int64))


def trim_after(track: Track, track_index: int, rows: ArrayLike) -> DeletePoints:
    """Delete every point of the track after the last selected one."""
    last = int(_checked_rows(track, rows)[-1])
    if last == len(track.points) - 1:
        raise HandEditError("Nothing lies after the selection.")
    return DeletePoints(track_index, np.arange(last + 1, len(track.points), dtype=np.int64))


def split_segment(track: Track, track_index: int, rows: ArrayLike) -> SplitSegment:
    """Start a new segment at the first selected point."""
    row = int(_checked_rows(track, rows)[0])
    seg = int(track.segment_of(row))
    if row == int(track.segment_starts[seg]):
        raise HandEditError("The point already starts a segment; select a point inside a segment.")
    return SplitSegment(track_index, row)


def merge_segments(track: Track, track_index: int, rows: ArrayLike) -> MergeSegments:
    """Join the segment of the first selected point with the next segment.

    When the selection spans a boundary, the first boundary inside it is removed.
    """
    rows = _checked_rows(track, rows)
    first, last = int(track.segment_of(rows[0])), int(track.segment_of(rows[-1]))
    if first == track.segment_count - 1 and first == last:
        raise HandEditError("The selected point is in the last segment; there is no next one to join.")
    return MergeSegments(track_index, first)


def insert_point_after(track: Track, track_index: int, rows: ArrayLike, projection: LocalProjection) -> InsertPoints:
    """Insert a point halfway between the last selected point and the next point of its segment.

    The new point lies at the planar midpoint (in ``projection``), with the mean
    elevation and the mean time of its neighbours (absent where they are absent).
    """
    row = int(_checked_rows(track, rows)[-1])
    seg = int(track.segment_of(row))
    stop = track.segment_bounds()[seg][1]
    if row + 1 >= stop:
        raise HandEditError("The point ends its segment; select a point that has a next point.")
    p = track.points
    x, y = projection.to_xy(p.lat[row:row + 2], p.lon[row:row + 2])
    lat, lon = projection.to_latlon(np.array([x.mean()]), np.array([y.mean()]))
    ele = np.array([p.ele[row:row + 2].mean()])
    t = p.time[row:row + 2]
    time = t[:1] + (t[1] - t[0]) / 2 if not np.isnat(t).any() else np.array([np.datetime64("NaT", "ns")])
    new = PointTable.from_columns(lat, lon, ele=ele, time=time)
    return InsertPoints(track_index, np.array([row + 1], dtype=np.int64), new)


def backward_time_count(track: Track) -> int:
    """How many timed points have a time earlier than the timed point before them (per segment)."""
    t = track.points.time.view("int64")
    timed = ~np.isnat(track.points.time)
    count = 0
    for start, stop in track.segment_bounds():
        seg = t[start:stop][timed[start:stop]]
        count += int(np.count_nonzero(np.diff(seg) < 0))
    return count


def sort_by_time(track: Track, track_index: int) -> ReplaceTrackPoints:
    """Put each segment's timed points in time order (a stable sort; untimed points keep their rows).

    Points never move between segments. Every column and payload moves with its point.
    """
    if not backward_time_count(track):
        raise HandEditError("The points are already in time order.")
    order = np.arange(len(track.points))
    t = track.points.time.view("int64")
    timed = ~np.isnat(track.points.time)
    for start, stop in track.segment_bounds():
        rows = np.arange(start, stop)[timed[start:stop]]
        order[rows] = rows[np.argsort(t[rows], kind="stable")]
    return ReplaceTrackPoints(track_index, track.points.take(order), track.segment_starts.copy(),
                              list(track.segment_extra))
