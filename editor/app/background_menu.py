"""View ▸ Background: none, shaded relief, a web map or a tile archive, under the track on the map.

The :class:`BackgroundController` owns the menu, remembers the choice, builds the layer and shows
the layer's one status line. Other kinds of background plug in through :meth:`set_relief_source`.
"""
from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from PySide6 import QtCore, QtGui, QtWidgets

from ..tiles.archives import ArchiveError, open_archive
from ..tiles.catalogue import provider_template
from ..tiles.templates import TemplateError, TileTemplate, custom_template
from ..views.background.layer import BackgroundLayer
from ..views.background.loader import ArchiveWorker, TileLoader, WebWorker
from ..views.background.tile_layer import TileLayer
from .background_settings import BackgroundSettings
from .web_map_dialog import WebMapChoice, WebMapDialog

#: Tile archives the file dialog offers.
ARCHIVE_FILTER = "Tile archives (*.mbtiles *.pmtiles);;All files (*)"


def web_layer(template: TileTemplate, stored: BackgroundSettings, device_ratio: float = 1.0) -> TileLayer:
    """A layer of web tiles through the disk cache ``stored`` configures."""
    high_dpi = device_ratio > 1.5 and "{r}" in template.url
    worker = WebWorker(template, stored.cache_dir, stored.cache_mb * 1_000_000, high_dpi)
    layer = TileLayer(TileLoader(worker), template.attribution, template.min_zoom, template.max_zoom)
    layer.tile_scale = 2.0 if high_dpi else 1.0
    return layer


def archive_layer(path: str | Path) -> TileLayer:
    """A layer read from an MBTiles or PMTiles file; raises :class:`ArchiveError` naming the file."""
    archive = open_archive(path)
    info = archive.info
    archive.close()  # the worker opens its own reader on its thread
    return TileLayer(TileLoader(ArchiveWorker(Path(path))), info.attribution, info.min_zoom, info.max_zoom)


class BackgroundController(QtCore.QObject):
    """The Background submenu of ``window``'s View menu and the layer it puts under the map's track."""

    def __init__(self, window) -> None:
        super().__init__(window)
        self.window = window
        self.stored = BackgroundSettings(window.settings)
        self._relief_factory: Callable[[], BackgroundLayer] | None = None
        self.status_label = QtWidgets.QLabel("")
        self.status_label.setObjectName("backgroundStatus")
        self.status_label.hide()
        window.statusBar().addWidget(self.status_label)
        self.menu = self._build_menu()
        window.map_view.set_background_opacity(self.stored.opacity)
        self.apply(self.stored.kind, remembered=True)

    # --- menu -----------------------------------------------------------------------------------------
    def _build_menu(self) -> QtWidgets.QMenu:
        bar = self.window.menuBar()
        view = next((a.menu() for a in bar.actions() if a.menu() and a.text().replace("&", "") == "View"), None)
        menu = (view or bar).addMenu("Back&ground")
        group = QtGui.QActionGroup(self)
        self.actions: dict[str, QtGui.QAction] = {}
        for kind, text, tip in (
                ("none", "&None", "No map under the track (nothing is downloaded)"),
                ("relief", "Shaded &relief", "Hill shading from the loaded terrain (load terrain first)"),
                ("web", "&Web map…", "A map from a tile server, downloaded while you look at it"),
                ("archive", "Tile &archive…", "A map from an MBTiles or PMTiles file on this computer")):
            action = QtGui.QAction(text, self, checkable=True)
            action.setStatusTip(tip)
            action.setToolTip(tip)
            action.triggered.connect(lambda _c=False, k=kind: self.choose(k))
            group.addAction(action)
            menu.addAction(action)
            self.actions[kind] = action
        self.actions["relief"].setEnabled(False)
        menu.addSeparator()
        slider = QtWidgets.QSlider(QtCore.Qt.Orientation.Horizontal)
        slider.setRange(0, 100)
        slider.setValue(round(self.stored.opacity * 100))
        slider.setToolTip("How strongly the background shows (the track stays on top)")
        slider.valueChanged.connect(lambda v: self.set_opacity(v / 100))
        self.opacity_slider = slider
        box = QtWidgets.QWidget()
        row = QtWidgets.QHBoxLayout(box)
        row.setContentsMargins(24, 2, 8, 2)
        row.addWidget(QtWidgets.QLabel("Strength"))
        row.addWidget(slider)
        widget_action = QtWidgets.QWidgetAction(self)
        widget_action.setDefaultWidget(box)
        menu.addAction(widget_action)
        cache = QtGui.QAction("Space for saved map tiles…", self)
        cache.setStatusTip("How much disk the downloaded web map may use")
        cache.triggered.connect(self.ask_cache_size)
        menu.addAction(cache)
        self.actions["cache"] = cache
        return menu

    # --- hooks for other background kinds ---------------------------------------------------------------
    def set_relief_source(self, factory: Callable[[], BackgroundLayer] | None) -> None:
        """Make Shaded relief available: ``factory()`` builds the layer (``None``: no terrain loaded)."""
        self._relief_factory = factory
        self.set_relief_available(factory is not None)

    def set_relief_available(self, available: bool) -> None:
        """Grey out or allow Shaded relief; a remembered relief choice is shown as soon as it can be."""
        self.actions["relief"].setEnabled(available and self._relief_factory is not None)
        if self.stored.kind == "relief":
            self.apply("relief", remembered=True)

    # --- choosing -------------------------------------------------------------------------------------
    def choose(self, kind: str) -> None:
        """The user picked ``kind`` in the menu (asks for the web map or archive first)."""
        if kind == "web":
            dialog = WebMapDialog(self.stored, self.window)
            if dialog.exec() != QtWidgets.QDialog.DialogCode.Accepted:
                self._check_current()
                return
            self.use_web_map(dialog.choice())
        elif kind == "archive":
            path, _ = QtWidgets.QFileDialog.getOpenFileName(self.window, "Open a tile archive",
                                                            str(Path(self.stored.archive).parent)
                                                            if self.stored.archive else "", ARCHIVE_FILTER)
            if not path:
                self._check_current()
                return
            self.use_archive(path)
        else:
            self.stored.kind = kind
            self.apply(kind)

    def use_web_map(self, choice: WebMapChoice) -> None:
        self.stored.provider = choice.provider
        if choice.provider:
            if choice.key:
                self.stored.set_key_for(choice.provider, choice.key)
        else:
            self.stored.custom_url = choice.template.url
            self.stored.custom_attribution = choice.template.attribution
        self.stored.told_about_privacy = True
        self.stored.kind = "web"
        self._show(web_layer(choice.template, self.stored, self.window.map_view.devicePixelRatioF()), "web")

    def use_archive(self, path: str | Path) -> bool:
        try:
            layer = archive_layer(path)
        except ArchiveError as err:
            QtWidgets.QMessageBox.warning(self.window, "Tile archive", str(err))
            self._check_current()
            return False
        self.stored.archive = str(path)
        self.stored.kind = "archive"
        self._show(layer, "archive")
        return True

    def apply(self, kind: str, remembered: bool = False) -> None:
        """Show background ``kind`` from the remembered settings (no questions asked)."""
        layer = None
        try:
            if kind == "web":
                template = (provider_template(self.stored.provider, self.stored.key_for(self.stored.provider) or None)
                            if self.stored.provider else custom_template(self.stored.custom_url,
                                                                         self.stored.custom_attribution))
                layer = web_layer(template, self.stored, self.window.map_view.devicePixelRatioF())
            elif kind == "archive" and self.stored.archive:
                layer = archive_layer(self.stored.archive)
            elif kind == "relief" and self._relief_factory is not None:
                layer = self._relief_factory()
        except (ArchiveError, TemplateError, ValueError, KeyError) as err:
            self._set_status(f"Map background not shown: {err}")
        self._show(layer, kind if layer is not None else "none", keep_status=layer is None)

    def _show(self, layer: BackgroundLayer | None, kind: str, keep_status: bool = False) -> None:
        if not keep_status:
            self._set_status("")
        if layer is not None:
            layer.status_changed.connect(self._set_status)
        self.window.map_view.set_background(layer)
        self.actions[kind].setChecked(True)

    def _check_current(self) -> None:
        layer = self.window.map_view.background
        current = "none" if layer is None else self.stored.kind
        self.actions[current if current in self.actions else "none"].setChecked(True)

    def kind_shown(self) -> str:
        return next(k for k in ("none", "relief", "web", "archive") if self.actions[k].isChecked())

    # --- opacity, cache, status --------------------------------------------------------------------------
    def set_opacity(self, opacity: float) -> None:
        self.stored.opacity = opacity
        self.window.map_view.set_background_opacity(opacity)
        if self.opacity_slider.value() != round(opacity * 100):
            self.opacity_slider.setValue(round(opacity * 100))

    def ask_cache_size(self) -> None:
        size, ok = QtWidgets.QInputDialog.getInt(
            self.window, "Saved map tiles", "Disk space for downloaded map tiles (MB):", self.stored.cache_mb,
            10, 20000, 50)
        if ok:
            self.stored.cache_mb = size
            if self.kind_shown() == "web":
                self.apply("web")

    def _set_status(self, text: str) -> None:
        self.status_label.setText(text)
        self.status_label.setVisible(bool(text))
