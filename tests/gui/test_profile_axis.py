"""The profile's distance axis (issue 9, item 12's axis bug and item 19's short-track axis).

After switching units or the time offset the axis must show the view's real range at once (it
showed 0.1-0.9 until a wheel zoom); a track shorter than a kilometre reads in metres, with no
scale factor in the label.
"""
from __future__ import annotations

import numpy as np
import pytest

from editor.model import Document, PointTable, Track
from gui_support import settle, synthetic_ride

#: 1 international mile = 1609.344 m, 1 foot = 0.3048 m (1959 international yard and pound agreement).
MILE_M, FOOT_M = 1609.344, 0.3048


def _axis_matches_view(prof) -> None:
    axis = prof.plotItem.getAxis("bottom")
    view_range = prof.view_box.viewRange()[0]
    assert axis.range == pytest.approx(view_range, rel=1e-9, abs=1e-9)
    # The ticks the axis draws lie inside the data's span, not in 0..1.
    ticks = [v for _spacing, values in axis.tickValues(*view_range, axis.width() or 600) for v in values]
    assert ticks and max(ticks) > 1.5


def test_units_switch_and_time_offset_keep_the_distance_axis_right(window, qtbot):
    window.display.set_document(synthetic_ride(3000))
    prof = window.profile_view
    settle(qtbot)
    _axis_matches_view(prof)
    km = prof.geometry.distance_m[-1] / 1000.0
    window.actions_["imperial"].trigger()                      # View ▸ Units ▸ Imperial
    settle(qtbot)
    _axis_matches_view(prof)
    assert prof._xy[0][-1] == pytest.approx(km * 1000.0 / MILE_M)
    assert prof.view_box.viewRange()[0][1] > 0.9 * km * 1000.0 / MILE_M
    window.actions_["offset"].trigger()                        # View ▸ Times ▸ offset (recorder: +2 h)
    settle(qtbot)
    _axis_matches_view(prof)
    window.actions_["metric"].trigger()
    settle(qtbot)
    _axis_matches_view(prof)
    assert prof.plotItem.getAxis("bottom").labelText == "Distance (km)"
    # Against time, an offset change moves the clock axis with the data at once.
    window.actions_["time_axis"].trigger()
    settle(qtbot)
    _axis_matches_view(prof)
    window.actions_["utc"].trigger()
    settle(qtbot)
    _axis_matches_view(prof)
    t = prof.geometry.time_s
    assert prof.view_box.viewRange()[0][0] < t[0] < t[-1] < prof.view_box.viewRange()[0][1]


def _short_track(length_m: float = 100.0, n: int = 101) -> Document:
    # Due north along a meridian: 1° of latitude at 47° N is about 111.2 km (common practice), so
    # the track is about length_m long; the test compares with the views' own ellipsoidal distance.
    lat = 47.0 + np.linspace(0.0, length_m / 111_200.0, n)
    lon = np.full(n, 9.0)
    ele = np.linspace(500.0, 504.0, n)
    time = np.datetime64("2024-04-01T10:00:00", "ns") + (np.arange(n) * 1e9).astype("timedelta64[ns]")
    points = PointTable.from_columns(lat, lon, ele=ele, time=time)
    return Document(tracks=[Track(points=points, segment_starts=np.array([0]), segment_extra=[None])])


def test_a_100_m_track_reads_in_metres_without_a_scale_factor(window, qtbot):
    window.display.set_document(_short_track())
    prof = window.profile_view
    settle(qtbot)
    axis = prof.plotItem.getAxis("bottom")
    assert axis.labelText == "Distance (m)"
    assert "x0.001" not in axis.labelString() and "(x" not in axis.labelString()
    assert prof._xy[0][-1] == pytest.approx(prof.geometry.distance_m[-1])
    assert 95.0 < prof._xy[0][-1] < 105.0
    _axis_matches_view(prof)
    window.actions_["imperial"].trigger()
    settle(qtbot)
    assert axis is prof.plotItem.getAxis("bottom") and axis.labelText == "Distance (ft)"
    assert prof._xy[0][-1] == pytest.approx(prof.geometry.distance_m[-1] / FOOT_M)
    _axis_matches_view(prof)
    # A longer track goes back to kilometres.
    window.actions_["metric"].trigger()
    window.display.set_document(synthetic_ride(1500))
    settle(qtbot)
    assert prof.plotItem.getAxis("bottom").labelText == "Distance (km)"
    assert "(x" not in prof.plotItem.getAxis("bottom").labelString()
