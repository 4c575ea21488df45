"""The drawing arrays and level of detail behind both views, and the unit formatting (no window needed)."""
from __future__ import annotations

import numpy as np

from editor.geo import LocalProjection, step_lengths
from editor.model import SetValues
from editor.views.geometry import BREAK, TrackGeometry, lod_indices, take_with_breaks
from editor.units import IMPERIAL, METRIC, format_clock, format_duration
from gui_support import synthetic_ride


def test_incremental_geometry_equals_a_full_rebuild():
    doc = synthetic_ride(3000, segments=3)
    track = doc.tracks[0]
    projection = LocalProjection.centred_on(track.points.lat, track.points.lon)
    before = TrackGeometry.from_track(track, projection)
    SetValues(0, np.array([17, 2500]), {"lat": np.array([47.01, 47.02]), "lon": np.array([9.01, 9.0])}).apply(doc)
    incremental = TrackGeometry.from_track(track, projection, previous=before)
    full = TrackGeometry.from_track(track, projection)
    for name in ("x_m", "y_m", "distance_m", "ele_m"):
        assert np.array_equal(getattr(incremental, name), getattr(full, name)), name
    # pyproj's own transformer is the reference for the planar position of the moved point.
    x, y = projection.to_xy(np.array([47.01]), np.array([9.01]))
    assert incremental.x_m[17] == x[0] and incremental.y_m[17] == y[0]


def test_profile_distance_skips_segment_gaps():
    track = synthetic_ride(900, segments=3).tracks[0]
    g = TrackGeometry.from_track(track, LocalProjection.centred_on(track.points.lat, track.points.lon))
    steps = step_lengths(track.points.lat, track.points.lon)
    assert g.distance_m[300] == g.distance_m[299]          # no distance across a segment boundary
    assert np.isclose(g.distance_m[-1], steps.sum() - steps[299] - steps[599], rtol=1e-12)
    assert list(g.segment_ends()) == [299, 599, 899]


def test_lod_keeps_ends_spikes_and_breaks():
    n = 100_000
    x = np.linspace(0, 1000, n)
    y = np.sin(x / 50)
    y[54_321] = 40.0                                       # one spike
    breaks = np.zeros(n, dtype=bool)
    breaks[49_999] = True                                  # a segment ends here
    rows = lod_indices(x, y, (0, -2, 1000, 45), (1.0, 0.1), breaks, columns=True)
    kept = rows[rows != BREAK]
    assert len(kept) < 5000                                # about a thousand pixel columns
    assert kept[0] == 0 and kept[-1] == n - 1
    assert 54_321 in kept
    position = np.flatnonzero(rows == BREAK)
    assert len(position) == 1 and rows[position[0] - 1] == 49_999 and rows[position[0] + 1] == 50_000
    drawn = take_with_breaks(y, rows)
    assert np.isnan(drawn[position[0]]) and np.nanmax(drawn) == 40.0


def test_lod_on_the_map_clips_to_the_view_and_thins_jitter():
    rng = np.random.default_rng(1)
    x = np.cumsum(rng.normal(0, 1, 50_000))
    y = np.cumsum(rng.normal(0, 1, 50_000))
    rect = (np.percentile(x, 40), np.percentile(y, 40), np.percentile(x, 60), np.percentile(y, 60))
    rows = lod_indices(x, y, rect, (1.0, 1.0))
    kept = rows[rows != BREAK]
    assert 0 < len(kept) < 50_000
    mx, my = (rect[2] - rect[0]) * 0.05, (rect[3] - rect[1]) * 0.05
    inside = (x >= rect[0] - mx) & (x <= rect[2] + mx) & (y >= rect[1] - my) & (y <= rect[3] + my)
    # Every kept row is on screen or the neighbour of one (so lines reach the edge) ...
    near = inside.copy()
    near[1:] |= inside[:-1]
    near[:-1] |= inside[1:]
    assert near[kept].all()
    # ... and a line is broken wherever the track leaves the screen and comes back.
    assert (rows == BREAK).sum() >= 1


def test_units_and_times():
    # International mile = 1609.344 m and foot = 0.3048 m (1959 international yard and pound agreement).
    assert IMPERIAL.long(1609.344) == "1.00 mi"
    assert IMPERIAL.short(304.8) == "1,000 ft"
    assert METRIC.speed(10.0) == "36.0 km/h"
    assert IMPERIAL.speed(0.44704) == "1.0 mph"              # 1 mph = 0.44704 m/s exactly
    assert METRIC.nice_length(1400.0) == (1000.0, "1 km")
    assert METRIC.nice_length(480.0) == (200.0, "200 m")
    assert IMPERIAL.nice_length(2000.0) == (1609.344, "1 mi")
    assert format_duration(3723) == "1:02:03"
    # 2023-06-17T06:42:00Z as a Unix time, shown at UTC and at UTC+05:30.
    t = 1686984120.0
    assert format_clock(t) == "2023-06-17 06:42:00 UTC"
    assert format_clock(t, 5.5) == "2023-06-17 12:12:00 UTC+05:30"


def test_change_highlight_marks_only_the_changed_stretches():
    from editor.views.geometry import change_highlight, edge_rows

    # Ten original rows; the proposal drops row 4 and moves row 7 (rows worked out by hand).
    source = np.array([0, 1, 2, 3, 5, 6, 7, 8, 9])
    changed = np.zeros(9, dtype=bool)
    changed[6] = True                                          # proposed row 6 is original row 7
    h = change_highlight(source, changed, np.array([4]), 10)
    # Original: 3-5 (the step over the dropped row) and 7, each grown by one neighbour.
    assert np.flatnonzero(h.original).tolist() == [2, 3, 4, 5, 6, 7, 8]
    # Proposed: rows 3-4 (the new step 3→5) and 6, each grown by one neighbour.
    assert np.flatnonzero(h.proposed).tolist() == [2, 3, 4, 5, 6, 7]
    assert np.flatnonzero(edge_rows(h.original)).tolist() == [2, 8]
    # Nothing changes: nothing highlighted.
    h = change_highlight(np.arange(10), np.zeros(10, dtype=bool), np.zeros(0, dtype=np.int64), 10)
    assert not h.original.any() and not h.proposed.any()
    # An inserted row (-1) marks the step it sits in.
    h = change_highlight(np.array([0, 1, -1, 2, 3]), np.zeros(5, dtype=bool), np.zeros(0, dtype=np.int64), 4)
    assert np.flatnonzero(h.proposed).tolist() == [0, 1, 2, 3, 4]
    assert np.flatnonzero(h.original).tolist() == [0, 1, 2, 3]
