"""Fast previews (issue 13) without losing anything: slider changes are coalesced (the newest value
is computed next, never a queue), an elevation-only change reuses the positions, and a zoomed-in
preview still draws every changed point.

References: the smoothing tool called directly on the document's track (its correctness is
tests/processing/test_smoothing.py's job); shapely for the area of the uncertainty band's outline.
"""
from __future__ import annotations

import threading

import numpy as np
import shapely

from editor.app.workers import PreviewRunner, WorkerPool
from editor.views.geometry import band_outline
from gui_support import settle, synthetic_ride


def test_requests_made_while_busy_collapse_into_the_newest(qtbot):
    pool = WorkerPool()
    runner = PreviewRunner(pool)
    gate = threading.Event()
    ran, shown = [], []
    runner.result_ready.connect(shown.append)

    def work(value, wait=False):
        def run():
            if wait:
                gate.wait(10)
            ran.append(value)
            return value
        return run

    runner.request(work(1, wait=True), key=1)
    qtbot.waitUntil(lambda: runner.busy, timeout=2000)
    for value in (2, 3, 4, 5):                      # a drag while the first value is computed
        runner.request(work(value), key=value)
    runner.request(work(1), key=1)                  # back to the value being computed: nothing new
    runner.request(work(6), key=6)
    gate.set()
    qtbot.waitUntil(lambda: shown[-1:] == [6], timeout=5000)
    assert ran == [1, 6]                            # 2..5 were never computed
    assert shown == [1, 6]                          # a drag shows the intermediate picture
    runner.request(work(6), key=6)                  # the value shown: computed once only
    settle(qtbot, 60)
    assert ran == [1, 6]
    pool.shutdown()


def test_a_released_slider_drops_the_older_result_still_running(qtbot):
    pool = WorkerPool()
    runner = PreviewRunner(pool)
    gate = threading.Event()
    shown = []
    runner.result_ready.connect(shown.append)
    runner.request(lambda: gate.wait(10) and "old", key="old")
    qtbot.waitUntil(lambda: runner.busy, timeout=2000)
    runner.request(lambda: "released", immediately=True, key="released")
    gate.set()
    qtbot.waitUntil(lambda: shown == ["released"], timeout=5000)
    settle(qtbot, 60)
    assert shown == ["released"]
    pool.shutdown()


def _preview(window, qtbot, panel, **values):
    previous = window.state.preview
    params = panel.tool.params(**values)
    window.previews.request_preview(panel.tool, params, False, immediately=True)
    qtbot.waitUntil(lambda: window.state.preview is not None and window.state.preview is not previous
                    and window.state.preview.params == params, timeout=20000)
    settle(qtbot, 60)
    return window.state.preview


def test_an_elevation_only_change_equals_a_full_computation_and_keeps_the_map(window, qtbot):
    window.display.set_document(synthetic_ride(3000, seed=3))
    panel = window.tool_dock.panel("smooth")
    window.tool_dock.show_panel(panel)
    first = _preview(window, qtbot, panel, horizontal_strength=45.0, vertical_strength=30.0)
    second = _preview(window, qtbot, panel, horizontal_strength=45.0, vertical_strength=80.0)
    track = window.session.track()
    for proposal in (first, second):
        fresh = panel.tool.function(track, proposal.params, want_std="vertical")
        for column in ("lat", "lon", "ele"):
            assert np.array_equal(getattr(proposal.points, column), getattr(fresh.points, column), equal_nan=True)
        assert np.array_equal(proposal.sigma_v_m, fresh.sigma_v_m, equal_nan=True)
        assert proposal.after == fresh.after
    # the positions did not change, so the map's coordinates of the proposal were not computed again
    assert window.map_view.proposal_xy(second) is window.map_view._prepared[1]
    assert not np.array_equal(first.points.ele, second.points.ele)


def _drawn_pairs(item) -> set:
    x, y = item.getData()
    ok = np.isfinite(x) & np.isfinite(y)
    return set(zip(x[ok].tolist(), y[ok].tolist()))


def test_a_zoomed_in_preview_draws_every_changed_point(window, qtbot):
    window.display.set_document(synthetic_ride(20_000, seed=8))
    panel = window.tool_dock.panel("smooth")
    window.tool_dock.show_panel(panel)
    proposal = _preview(window, qtbot, panel, horizontal_strength=60.0, vertical_strength=60.0)
    rows = np.arange(9000, 9120)
    assert proposal.changed[rows].all()
    for view in (window.map_view, window.profile_view):
        view.fit_rows(rows)
        settle(qtbot, 60)
        px, py = view._proposal_xy
        r = view.view_box.viewRect()
        inside = np.flatnonzero((px >= r.left()) & (px <= r.right()) & (py >= r.top()) & (py <= r.bottom())
                                & view._highlight.proposed)
        assert len(inside) >= len(rows)
        drawn = _drawn_pairs(view.proposal_item)
        missing = [int(i) for i in inside if (float(px[i]), float(py[i])) not in drawn]
        assert not missing, f"{type(view).__name__} leaves out proposed rows {missing[:5]}"


def test_the_band_outline_encloses_the_area_between_its_edges():
    x = np.linspace(0.0, 10.0, 201)
    centre = np.sin(x)
    half = 0.5 + 0.2 * np.cos(3 * x)
    upper, lower = centre + half, centre - half
    upper[80:90] = np.nan                       # two runs
    ox, oy = band_outline(x, upper, lower)
    breaks = np.flatnonzero(np.isnan(ox))
    pieces = np.split(np.arange(len(ox)), breaks)
    polygons = [shapely.Polygon(np.column_stack([ox[p[np.isfinite(ox[p])]], oy[p[np.isfinite(oy[p])]]]))
                for p in pieces if np.isfinite(ox[p]).sum() >= 3]
    assert len(polygons) == 2
    for polygon, run in zip(polygons, (slice(0, 80), slice(90, 201))):
        # shapely's polygon area against the trapezoid rule of the band's width over the run
        assert polygon.is_valid
        assert np.isclose(polygon.area, np.trapezoid(upper[run] - lower[run], x[run]), rtol=1e-12)


def test_with_two_threads_a_released_value_does_not_wait_for_the_older_run(qtbot):
    pool = WorkerPool(2)
    runner = PreviewRunner(pool)
    gate = threading.Event()
    shown = []
    runner.result_ready.connect(shown.append)
    runner.request(lambda: gate.wait(10) and "old", key="old")
    qtbot.waitUntil(lambda: runner.busy, timeout=2000)
    runner.request(lambda: "released", immediately=True, key="released")
    qtbot.waitUntil(lambda: shown == ["released"], timeout=5000)   # while the old run still waits
    assert not gate.is_set()
    gate.set()
    assert pool.wait(10)
    settle(qtbot, 60)
    assert shown == ["released"]                                   # the older result never shows
    pool.shutdown()


def test_simplify_ranks_by_bend_size_ahead_and_every_bend_size_equals_a_fresh_run(window, qtbot):
    window.display.set_document(synthetic_ride(6000, seed=5))
    panel = window.tool_dock.panel("simplify")
    window.tool_dock.show_panel(panel)
    _preview(window, qtbot, panel, method="rdp", tolerance_m=5.0)  # Simplify open: ranking starts behind it
    cache = window.session.preview_cache()
    ahead = cache[("ranked", "simplify")]
    qtbot.waitUntil(ahead.done, timeout=20000)
    _key, ranking = cache[("memo", "simplify")]["vw"]
    assert ranking.finished
    track = window.session.track()
    for area in (50.0, 400.0, 10.0):
        shown = _preview(window, qtbot, panel, method="vw", area_m2=area)
        fresh = panel.tool.function(track, shown.params)  # the tool alone, no memo
        assert np.array_equal(shown.removed, fresh.removed) and shown.after == fresh.after
        assert len(shown.removed)
    assert cache[("memo", "simplify")]["vw"][1] is ranking  # read, never made again
