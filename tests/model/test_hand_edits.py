"""The hand-edit builders, without Qt: each builds the right reversible edit or says why it cannot.

tests/test_qt_boundary.py imports editor.model.hand_edits with Qt blocked; these tests check what the
builders build. Distances are checked with pyproj's geodesics (Karney's algorithm), a reference library.
"""
import numpy as np
import pytest
from pyproj import Geod

from editor.geo.projection import LocalProjection
from editor.model import Document, PointTable, Track
from editor.model.hand_edits import (HandEditError, backward_time_count, delete_points, insert_point_after,
                                     merge_segments, move_point, set_elevation, sort_by_time, split_segment,
                                     trim_after, trim_before)

GEOD = Geod(ellps="WGS84")


def track_of(n=10, starts=(0, 6)) -> Track:
    lat = 46.0 + np.arange(n) * 1e-4
    lon = 7.0 + np.arange(n) * 2e-4
    time = np.datetime64("2026-05-01T08:00:00", "ns") + (np.arange(n) * 10**9).astype("timedelta64[ns]")
    points = PointTable.from_columns(lat, lon, ele=400.0 + np.arange(n), time=time)
    return Track(points=points, segment_starts=np.array(starts), segment_extra=[None] * len(starts))


def applied(track: Track, edit) -> Track:
    doc = Document(tracks=[track.copy()])
    edit.apply(doc)
    return doc.tracks[0]


def test_delete_and_trims_remove_the_right_rows():
    track = track_of()
    assert len(applied(track, delete_points(track, 0, [3, 3, 4, 99])).points) == 8  # duplicates, out of range
    assert applied(track, trim_before(track, 0, [4, 7])).points.lat[0] == track.points.lat[4]
    assert applied(track, trim_after(track, 0, [2, 5])).points.lat[-1] == track.points.lat[5]
    with pytest.raises(HandEditError, match="Select"):
        delete_points(track, 0, [])
    with pytest.raises(HandEditError, match="before"):
        trim_before(track, 0, [0, 3])
    with pytest.raises(HandEditError, match="after"):
        trim_after(track, 0, [9])


def test_split_and_join_segments():
    track = track_of()
    split = applied(track, split_segment(track, 0, [3]))
    assert split.segment_starts.tolist() == [0, 3, 6]
    with pytest.raises(HandEditError, match="already starts"):
        split_segment(track, 0, [6])
    assert applied(track, merge_segments(track, 0, [2])).segment_starts.tolist() == [0]
    with pytest.raises(HandEditError, match="last segment"):
        merge_segments(track, 0, [8])


def test_inserted_point_lies_halfway_with_mean_elevation_and_time():
    track = track_of()
    projection = LocalProjection(46.0, 7.0)
    out = applied(track, insert_point_after(track, 0, [2], projection))
    p = out.points
    assert len(p) == 11 and p.ele[3] == pytest.approx(402.5)
    assert p.time[3] == track.points.time[2] + np.timedelta64(500_000_000, "ns")
    # halfway along the geodesic to within a millimetre on a 20 m step (pyproj, WGS84)
    _, _, d1 = GEOD.inv(p.lon[2], p.lat[2], p.lon[3], p.lat[3])
    _, _, d2 = GEOD.inv(p.lon[3], p.lat[3], p.lon[4], p.lat[4])
    assert d1 == pytest.approx(d2, abs=1e-3)
    with pytest.raises(HandEditError, match="ends its segment"):
        insert_point_after(track, 0, [5], projection)


def test_move_point_and_set_elevation():
    track = track_of()
    projection = LocalProjection(46.0, 7.0)
    x, y = projection.to_xy(track.points.lat[4:5], track.points.lon[4:5])
    moved = applied(track, move_point(track, 0, 4, float(x[0]) + 30.0, float(y[0]), projection))
    _, _, distance = GEOD.inv(track.points.lon[4], track.points.lat[4], moved.points.lon[4], moved.points.lat[4])
    assert distance == pytest.approx(30.0, rel=1e-3)  # a transverse Mercator metre is a metre near the centre
    assert applied(track, set_elevation(0, 1, 1234.5)).points.ele[1] == 1234.5


def test_sort_by_time_orders_each_segment_and_keeps_untimed_rows():
    track = track_of()
    order = np.array([1, 0, 2, 4, 3, 5, 6, 7, 9, 8])
    shuffled = Track(points=track.points.take(order), segment_starts=track.segment_starts.copy(),
                     segment_extra=[None, None])
    assert backward_time_count(shuffled) == 3
    assert applied(shuffled, sort_by_time(shuffled, 0)).points.equals(track.points)
    with pytest.raises(HandEditError, match="already in time order"):
        sort_by_time(track, 0)
