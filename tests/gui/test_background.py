"""The map background in the window: tiles from a local server (127.0.0.1 only), cache, offline, archives.

The reference tiles (tests/tile_support.py) carry red meridians and blue parallels at known degrees;
a track lies on those lines, so in the grabbed view each line must pass under the track's points.
"""
from __future__ import annotations

import socket

import numpy as np
import pytest
from PySide6 import QtCore, QtGui, QtWidgets
from tile_support import (
    TileServer,
    png_bytes,
    reference_tile,
    write_mbtiles,
    write_pmtiles,
)

from editor.app.web_map_dialog import WebMapChoice
from editor.model import Document, PointTable, Track
from editor.tiles.templates import custom_template


@pytest.fixture
def server():
    srv = TileServer()
    yield srv
    srv.stop()


def cross_track(lat0: float, lon0: float) -> Document:
    """Points on the meridian lon0 and on the parallel lat0 (both multiples of the line spacing)."""
    n = 161
    lat = np.r_[np.full(n, lat0), lat0 + np.linspace(-0.004, 0.004, n)]
    lon = np.r_[lon0 + np.linspace(-0.006, 0.006, n), np.full(n, lon0)]
    track = Track(points=PointTable.from_columns(lat, lon), segment_starts=np.array([0, n]), name="On the lines",
                  segment_extra=[None, None])
    return Document(tracks=[track], waypoints=PointTable.from_columns([], []))


def show_web(window, url: str, attribution: str = "Reference lines (test server)") -> None:
    window.background_controller.use_web_map(WebMapChoice(custom_template(url, attribution), ""))
    window.background_controller.set_opacity(1.0)


def hide_track(window) -> None:
    view = window.map_view
    for item in (view.track_item, view.points_item, view.selection_item, view.hover_item, view.start_item,
                 view.end_item, view.scale_bar):
        item.hide()


def settle_tiles(qtbot, window) -> None:
    layer = window.map_view.background
    qtbot.waitUntil(lambda: bool(layer._shown) and layer.is_settled(), timeout=15000)
    qtbot.wait(50)


def grab_rgb(window) -> np.ndarray:
    image = window.map_view.viewport().grab().toImage().convertToFormat(QtGui.QImage.Format.Format_RGB888)
    h, w = image.height(), image.width()
    return np.frombuffer(image.constBits(), np.uint8).reshape(h, image.bytesPerLine())[:, :w * 3] \
        .reshape(h, w, 3).astype(np.int32)


def screen_xy(window, x_m: float, y_m: float) -> tuple[float, float]:
    """Viewport coordinates (pixel edges at integers) of planar metres."""
    scene = window.map_view.view_box.mapViewToScene(QtCore.QPointF(x_m, y_m))
    p = window.map_view.viewportTransform().map(scene)
    return p.x(), p.y()


def line_offsets(window, rgb: np.ndarray, rows: np.ndarray, meridian: bool) -> list[float]:
    """For each track row, the distance in pixels from the point to the centroid of the line colour
    across it (red for meridians, searched along x; blue for parallels, along y). Red minus green and
    blue minus green measure each line's ink, also where the two cross (magenta)."""
    geometry = window.display.geometry
    out = []
    h, w, _ = rgb.shape
    for row in rows:
        px, py = screen_xy(window, geometry.x_m[row], geometry.y_m[row])
        if not (8 <= px < w - 8 and 8 <= py < h - 40):  # keep clear of the edges and the credit line
            continue
        i, j = int(py), int(px)
        if meridian:
            strip = rgb[i, j - 5:j + 6]
            weight = np.clip(strip[:, 0] - strip[:, 1], 0, None).astype(float)
            centres = np.arange(j - 5, j + 6) + 0.5
            out.append(float((weight * centres).sum() / weight.sum()) - px if weight.sum() > 0 else np.inf)
        else:
            strip = rgb[i - 5:i + 6, j]
            weight = np.clip(strip[:, 2] - strip[:, 1], 0, None).astype(float)
            centres = np.arange(i - 5, i + 6) + 0.5
            out.append(float((weight * centres).sum() / weight.sum()) - py if weight.sum() > 0 else np.inf)
    return out


@pytest.mark.parametrize("lat0, lon0, metres_per_px", [
    (47.005, 9.01, 6.0), (47.005, 9.01, 1.3), (47.005, 9.01, 0.22),  # three zoom levels (tile zooms 14, 17, 19)
    (60.005, 9.01, 1.0),                                              # and at 60° N
])
def test_reference_lines_sit_under_the_track_points(qtbot, window, server, lat0, lon0, metres_per_px):
    window.display.set_document(cross_track(lat0, lon0))
    show_web(window, server.url)
    hide_track(window)
    view = window.map_view
    width, height = view.viewport().width(), view.viewport().height()
    view.view_box.setRange(QtCore.QRectF(-width / 2 * metres_per_px, -height / 2 * metres_per_px,
                                         width * metres_per_px, height * metres_per_px), padding=0)
    qtbot.wait(20)
    settle_tiles(qtbot, window)
    assert view.view_box.viewPixelSize()[0] == pytest.approx(metres_per_px, rel=0.05)
    rgb = grab_rgb(window)
    n = len(window.display.geometry) // 2
    along_parallel = line_offsets(window, rgb, np.arange(0, n), meridian=False)
    along_meridian = line_offsets(window, rgb, np.arange(n, 2 * n), meridian=True)
    assert len(along_parallel) >= 5 and len(along_meridian) >= 5
    # The requirement: line pixels within 1 px of where the track's points are drawn.
    assert max(map(abs, along_parallel)) <= 1.0, along_parallel
    assert max(map(abs, along_meridian)) <= 1.0, along_meridian


def test_tiles_come_from_the_cache_when_the_server_is_gone(qtbot, dialogs, settings, server, window):
    from editor.app.window import MainWindow

    window.display.set_document(cross_track(47.005, 9.01))
    show_web(window, server.url)
    settle_tiles(qtbot, window)
    first = window.map_view.background
    assert first.shown_loaded() == len(first._shown) > 0
    # The network manager was made, and works, on the loader's own thread, not on the UI thread.
    ui_thread = QtWidgets.QApplication.instance().thread()
    worker = first.loader.worker
    assert worker.thread() is not ui_thread and worker._nam.thread() is worker.thread()
    assert server.user_agents == {f"Trackwright/{__import__('editor').__version__} (GPS track editor; map background)"}
    view_range = window.map_view.view_box.viewRect()
    window.close()
    server.stop()
    second = MainWindow(settings)  # same settings: the remembered web map, the same disk cache
    qtbot.addWidget(second)
    second.resize(1300, 850)
    second.show()
    second.display.set_document(cross_track(47.005, 9.01))
    assert second.background_controller.kind_shown() == "web"
    second.map_view.view_box.setRange(view_range, padding=0)
    settle_tiles(qtbot, second)
    layer = second.map_view.background
    assert layer.shown_loaded() == len(layer._shown)
    assert not second.background_controller.status_label.isVisible()
    second.undo_stack.setClean()
    second.close()
    server.httpd = server.httpd  # already stopped; the fixture's stop is harmless
    assert dialogs.asked == []


def closed_port_url() -> str:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    return f"http://127.0.0.1:{port}/{{z}}/{{x}}/{{y}}.png"


def test_offline_from_the_start_is_one_quiet_line_and_editing_goes_on(qtbot, window, dialogs):
    window.display.set_document(cross_track(47.005, 9.01))
    show_web(window, closed_port_url())
    label = window.background_controller.status_label
    qtbot.waitUntil(lambda: "offline" in label.text(), timeout=15000)
    assert label.isVisible() and "\n" not in label.text()
    assert dialogs.asked == []
    layer = window.map_view.background
    assert layer.shown_loaded() == 0
    window.state.set_selection([3, 4])
    window.editing.delete_selection()
    assert window.undo_stack.count() == 1 and len(window.session.doc.tracks[0].points) == 320
    window.undo_stack.undo()
    assert len(window.session.doc.tracks[0].points) == 322


def test_archives_give_the_same_image_as_the_server(qtbot, window, server, tmp_path):
    window.display.set_document(cross_track(47.005, 9.01))
    show_web(window, server.url, attribution="Reference lines (generated)")
    hide_track(window)
    view = window.map_view
    view.view_box.setRange(QtCore.QRectF(-700, -450, 1400, 900), padding=0)
    qtbot.wait(20)
    settle_tiles(qtbot, window)
    from_server = grab_rgb(window)
    keys = [(z, x % 2 ** z, y) for z, x, y in view.background._shown]
    tiles = {k: png_bytes(reference_tile(*k)) for k in keys}
    for writer, name in ((write_mbtiles, "ref.mbtiles"), (write_pmtiles, "ref.pmtiles")):
        writer(tmp_path / name, tiles)
        assert window.background_controller.use_archive(tmp_path / name)
        assert window.background_controller.kind_shown() == "archive"
        settle_tiles(qtbot, window)
        assert view.attribution_label.text() == "Reference lines (generated)"
        from_archive = grab_rgb(window)
        assert np.abs(from_archive - from_server).max() <= 1, name


def test_attribution_is_drawn_for_every_source(qtbot, window, server, tmp_path):
    from editor.views.background.layer import BackgroundLayer

    class FlatRelief(BackgroundLayer):  # stands in for the terrain helper's layer
        def attribution(self) -> str:
            return "Relief: test terrain"

        def paint(self, painter, *args):
            painter.fillRect(self.boundingRect(), QtGui.QColor(200, 220, 200))

    window.display.set_document(cross_track(47.005, 9.01))
    controller = window.background_controller
    write_mbtiles(tmp_path / "a.mbtiles", {(0, 0, 0): png_bytes(reference_tile(0, 0, 0))}, attribution="© Archive A")
    write_pmtiles(tmp_path / "b.pmtiles", {(0, 0, 0): png_bytes(reference_tile(0, 0, 0))}, attribution="© Archive B")
    assert not controller.actions["relief"].isEnabled()
    controller.set_relief_source(FlatRelief)
    assert controller.actions["relief"].isEnabled()
    for use, expected in ((lambda: show_web(window, server.url, "© Test server"), "© Test server"),
                          (lambda: controller.use_archive(tmp_path / "a.mbtiles"), "© Archive A"),
                          (lambda: controller.use_archive(tmp_path / "b.pmtiles"), "© Archive B"),
                          (lambda: controller.choose("relief"), "Relief: test terrain")):
        use()
        qtbot.wait(30)
        label = window.map_view.attribution_label
        assert label.text() == expected and label.isVisible()
        # Drawn: dark text pixels inside the label's box in the grabbed view.
        box = label.mapRectToScene(label.boundingRect())
        rect = window.map_view.mapFromScene(box).boundingRect()
        rgb = grab_rgb(window)[rect.top() + 1:rect.bottom(), rect.left() + 1:rect.right()]
        assert rgb.size and (rgb.sum(axis=2) < 300).sum() > 20
    controller.choose("none")
    assert window.map_view.background is None and not window.map_view.attribution_label.isVisible()


def test_a_failing_server_is_left_alone_while_backing_off(qtbot, window, dialogs):
    failing = TileServer(failing=True)
    try:
        window.display.set_document(cross_track(47.005, 9.01))
        show_web(window, failing.url)
        label = window.background_controller.status_label
        qtbot.waitUntil(lambda: "offline" in label.text(), timeout=15000)
        assert "2 s" in label.text()
        qtbot.wait(300)
        asked = len(failing.requests)
        assert asked <= 2  # the requests in flight when the first failure came back
        qtbot.wait(1000)  # inside the first back-off (2 s): nothing more is asked
        assert len(failing.requests) == asked
        qtbot.waitUntil(lambda: len(failing.requests) > asked, timeout=10000)  # one probe after it
        qtbot.waitUntil(lambda: "4 s" in label.text(), timeout=10000)  # failed again: twice the wait
        assert len(failing.requests) == asked + 1
        assert dialogs.asked == []
    finally:
        failing.stop()


def test_none_is_the_default_and_fetches_nothing(qtbot, window, server):
    controller = window.background_controller
    assert controller.kind_shown() == "none" and window.map_view.background is None
    window.display.set_document(cross_track(47.005, 9.01))
    qtbot.wait(50)
    assert server.requests == []
    menu_texts = [a.text() for a in controller.menu.actions()]
    assert menu_texts[:4] == ["&None", "Shaded &relief", "&Web map…", "Tile &archive…"]
    assert controller.menu.menuAction() in next(a.menu() for a in window.menuBar().actions()
                                                if a.text() == "&View").actions()


def test_background_takes_no_mouse_events(qtbot, window, server):
    from gui_support import drag, widget_pos

    window.display.set_document(cross_track(47.005, 9.01))
    show_web(window, server.url)
    view = window.map_view
    row = 161 + 100  # on the meridian segment, away from the crossing
    x, y = window.display.geometry.x_m[row], window.display.geometry.y_m[row]
    view.view_box.setRange(QtCore.QRectF(x - 120, y - 80, 240, 160), padding=0)
    qtbot.wait(30)
    settle_tiles(qtbot, window)
    assert view.points_visible()
    window.actions_["move_points"].trigger()  # points move only in Move points mode (issue 9)
    start = widget_pos(view, x, y)
    drag(view.viewport(), [start, start + QtCore.QPoint(15, 5), start + QtCore.QPoint(30, 10)])
    qtbot.waitUntil(lambda: window.undo_stack.count() == 1, timeout=3000)
    assert window.session.doc.tracks[0].points.lon[row] > 9.01


def test_web_map_dialog_tells_once_and_checks_keys_and_addresses(qtbot, settings):
    from editor.app.background_settings import BackgroundSettings
    from editor.app.web_map_dialog import PRIVACY_NOTE, WebMapDialog
    from editor.tiles.catalogue import catalogue

    stored = BackgroundSettings(settings)
    dialog = WebMapDialog(stored)
    qtbot.addWidget(dialog)
    note = dialog.findChild(QtWidgets.QLabel, "privacyNote")
    assert note is not None and note.text() == PRIVACY_NOTE and PRIVACY_NOTE.count(".") == 1
    keyed = next(e for e in catalogue() if e.key_field)
    dialog.provider_box.setCurrentIndex(dialog.provider_box.findData(keyed.name))
    assert dialog.key_edit.isEnabled()
    dialog._accept()
    assert "key" in dialog.error_label.text() and dialog.result() == 0
    dialog.key_edit.setText("my-key")
    assert "my-key" in dialog.choice().template.tile_url(1, 0, 0)
    dialog.use_custom.setChecked(True)
    dialog.url_edit.setText("ftp://tiles.test/{z}/{x}/{y}.png")
    dialog._accept()
    assert "https://" in dialog.error_label.text()
    dialog.url_edit.setText("https://tiles.test/{z}/{x}/{y}.png")
    assert dialog.choice().provider == "" and dialog.choice().template.url == "https://tiles.test/{z}/{x}/{y}.png"
    stored.told_about_privacy = True
    later = WebMapDialog(stored)
    qtbot.addWidget(later)
    assert later.findChild(QtWidgets.QLabel, "privacyNote") is None


def test_disk_cache_defaults_to_500_mb_and_follows_the_setting(qtbot, window, server, monkeypatch):
    window.display.set_document(cross_track(47.005, 9.01))
    show_web(window, server.url)
    settle_tiles(qtbot, window)
    worker = window.map_view.background.loader.worker
    assert worker._nam.cache().maximumCacheSize() == 500_000_000
    assert worker.cache_dir == window.background_controller.stored.cache_dir
    assert str(worker.cache_dir).startswith(str(window.settings.store.fileName()).rsplit("/", 1)[0])  # tmp, not ~
    monkeypatch.setattr(QtWidgets.QInputDialog, "getInt", staticmethod(lambda *a, **k: (200, True)))
    window.background_controller.ask_cache_size()
    settle_tiles(qtbot, window)
    assert window.background_controller.stored.cache_mb == 200
    assert window.map_view.background.loader.worker._nam.cache().maximumCacheSize() == 200_000_000


def test_memory_cache_keeps_the_newest_tiles_within_its_bound(qtbot):
    from editor.views.background.tile_layer import TileLayer

    class Loader(QtCore.QObject):  # the loader's signals, without a thread
        tile_loaded = QtCore.Signal(object, QtGui.QImage)
        tile_absent = QtCore.Signal(object)
        status_changed = QtCore.Signal(str)

        def want(self, keys):
            pass

        def shutdown(self):
            pass

    tile = QtGui.QImage(256, 256, QtGui.QImage.Format.Format_ARGB32_Premultiplied)
    layer = TileLayer(Loader(), "test", memory_bytes=3 * tile.sizeInBytes())
    for x in range(5):
        layer._tile_loaded((10, x, 0), tile)
    assert list(layer._images) == [(10, 2, 0), (10, 3, 0), (10, 4, 0)]
    assert layer._image_bytes == 3 * tile.sizeInBytes()


def test_stale_saved_tiles_still_show_when_the_server_is_gone(qtbot, dialogs, settings):
    from editor.app.window import MainWindow

    stale = TileServer(max_age_s=1)  # saved tiles go out of date after a second: the cache must ask first
    first = MainWindow(settings)
    qtbot.addWidget(first)
    first.resize(1300, 850)
    first.show()
    first.display.set_document(cross_track(47.005, 9.01))
    show_web(first, stale.url)
    settle_tiles(qtbot, first)
    assert first.map_view.background.shown_loaded() > 0
    view_range = first.map_view.view_box.viewRect()
    first.close()
    stale.stop()
    qtbot.wait(2100)  # HTTP dates have whole seconds: let the saved tiles expire for sure
    second = MainWindow(settings)
    qtbot.addWidget(second)
    second.resize(1300, 850)
    second.show()
    second.display.set_document(cross_track(47.005, 9.01))
    second.map_view.view_box.setRange(view_range, padding=0)
    label = second.background_controller.status_label
    qtbot.waitUntil(lambda: "offline" in label.text(), timeout=15000)
    settle_tiles(qtbot, second)
    layer = second.map_view.background
    assert layer.shown_loaded() == len(layer._shown) > 0  # all from the saved copies
    assert dialogs.asked == []
    second.close()
