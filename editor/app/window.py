"""The main window: two linked views, tool panels, totals, history, status bar."""
from __future__ import annotations

from pathlib import Path

import numpy as np
from PySide6 import QtCore, QtGui, QtWidgets

from ..model.document import Document, Track
from ..model.state import EditorState
from ..processing.stats import track_totals
from ..views.geometry import TrackGeometry, document_projection
from ..views.map_view import MapView
from ..views.profile_view import ProfileView
from ..views.style import Palette
from ..views.units import offset_label
from ..panels.legend import LegendPanel
from ..panels.totals_panel import TotalsPanel
from ..panels.track_list import TrackList
from .actions import build_actions
from .background_menu import BackgroundController
from .editing import EditOps
from .files import FileOps
from .panes import ViewPane
from .recovery_keeper import RecoveryKeeper
from .settings import AppSettings
from .tool_dock import ToolDock
from .workers import WorkerPool

APP_NAME = "Trackwright"


class MainWindow(FileOps, EditOps, QtWidgets.QMainWindow):
    """One document, one undo stack, one shared :class:`EditorState`.

    Parameters
    ----------
    settings : where units, time offset, recent files and the layout are remembered.
    pool : worker threads for previews (one of its own when ``None``).
    """

    def __init__(self, settings: AppSettings, palette: Palette | None = None,
                 pool: WorkerPool | None = None, parent=None) -> None:
        super().__init__(parent)
        self.settings = settings
        self.palette_ = palette or Palette.load()
        # One thread for previews (a newer request replaces queued ones), one for long jobs.
        self.pool = pool or WorkerPool(1)
        self.long_pool = WorkerPool(1)
        self.doc = Document()
        self.state = EditorState()
        self.undo_stack = QtGui.QUndoStack(self)
        self.closing = False  # set once the window is going away: slots must not touch children
        self.read_only = False
        self.recovery = RecoveryKeeper(self)
        self.projection = document_projection(self.doc)
        self.geometry_ = TrackGeometry.empty()
        self._geometry_key: tuple | None = None
        self.totals = None
        self.source_path: Path | None = None
        self.saved_copy_path: Path | None = None
        self.units = settings.units
        self.utc_offset_h = settings.utc_offset_h
        self.setAcceptDrops(True)
        self.setDockOptions(QtWidgets.QMainWindow.DockOption.AnimatedDocks
                            | QtWidgets.QMainWindow.DockOption.AllowTabbedDocks)

        self.map_view = MapView(self.state, self.palette_)
        self.profile_view = ProfileView(self.state, self.palette_)
        self.map_pane = ViewPane("Map", self.map_view, "shift+drag selects · drag a dot to move it")
        self.profile_pane = ViewPane("Elevation profile", self.profile_view,
                                     "shift+drag selects a stretch · drag a dot to change its elevation")
        self.splitter = QtWidgets.QSplitter()
        self.splitter.setObjectName("viewSplitter")
        self.splitter.addWidget(self.map_pane)
        self.splitter.addWidget(self.profile_pane)
        self.splitter.setChildrenCollapsible(False)
        self.setCentralWidget(self.splitter)

        self.totals_panel = TotalsPanel()
        self.track_list = TrackList()
        self.history = QtWidgets.QUndoView(self.undo_stack)
        self.history.setEmptyLabel("File as opened")
        self.tool_dock = ToolDock(self)

        self.tools_dock = self._dock("Clean-up tools", "toolsDock", self.tool_dock)
        self.totals_dock = self._dock("Totals", "totalsDock", self.totals_panel)
        self.legend_dock = self._dock("Legend", "legendDock", LegendPanel(self.palette_))
        self.history_dock = self._dock("History", "historyDock", self.history)
        self.tracks_dock = self._dock("Tracks and segments", "tracksDock", self.track_list)
        right = QtCore.Qt.DockWidgetArea.RightDockWidgetArea
        self.addDockWidget(right, self.tools_dock)
        self.addDockWidget(right, self.totals_dock)
        self.addDockWidget(right, self.history_dock)
        # The legend shares a tab group with the history, so the tool controls keep their room.
        self.tabifyDockWidget(self.history_dock, self.legend_dock)
        self.tabifyDockWidget(self.history_dock, self.tracks_dock)
        self.legend_dock.raise_()
        self.resizeDocks([self.tools_dock], [390], QtCore.Qt.Orientation.Horizontal)
        self.resizeDocks([self.tools_dock, self.totals_dock, self.history_dock], [560, 230, 170],
                         QtCore.Qt.Orientation.Vertical)

        self.status_points = QtWidgets.QLabel("")
        self.status_units = QtWidgets.QLabel("")
        self.progress = QtWidgets.QProgressBar()
        self.progress.setRange(0, 1000)
        self.progress.setMaximumWidth(180)
        self.cancel_button = QtWidgets.QPushButton("Cancel")
        self.statusBar().addPermanentWidget(self.progress)
        self.statusBar().addPermanentWidget(self.cancel_button)
        self.statusBar().addPermanentWidget(self.status_points)
        self.statusBar().addPermanentWidget(self.status_units)
        self.progress.hide()
        self.cancel_button.hide()

        self._init_editing()
        self.actions_ = build_actions(self)
        self.background_controller = BackgroundController(self)  # View ▸ Background and the map's layer
        self._connect()
        self._apply_display_settings()
        self._restore_layout()
        self._rebuild_timer = QtCore.QTimer(self, singleShot=True, interval=0)
        self._rebuild_timer.timeout.connect(self._rebuild_views)
        self._totals_timer = QtCore.QTimer(self, singleShot=True, interval=0)
        self._totals_timer.timeout.connect(self.update_totals)
        self.update_title()

    # --- assembly ---------------------------------------------------------------------------------
    def _dock(self, title: str, name: str, widget: QtWidgets.QWidget) -> QtWidgets.QDockWidget:
        dock = QtWidgets.QDockWidget(title, self)
        dock.setObjectName(name)
        dock.setWidget(widget)
        dock.setFeatures(QtWidgets.QDockWidget.DockWidgetFeature.DockWidgetMovable
                         | QtWidgets.QDockWidget.DockWidgetFeature.DockWidgetClosable
                         | QtWidgets.QDockWidget.DockWidgetFeature.DockWidgetFloatable)
        return dock

    def _connect(self) -> None:
        self.undo_stack.cleanChanged.connect(self._clean_changed)
        self.state.hover_changed.connect(self._hover_changed)
        self.state.selection_changed.connect(self._selection_changed)
        self.state.preview_changed.connect(self._preview_changed)
        self.profile_view.readout_changed.connect(self.profile_pane.set_readout)
        self.map_view.point_dragged.connect(self.move_point)
        self.profile_view.elevation_dragged.connect(self.set_point_elevation)
        self.track_list.track_chosen.connect(self.show_track)
        self.track_list.segment_chosen.connect(self.show_segment)
        self.splitter.splitterMoved.connect(lambda *_: self._save_layout())

    def _apply_display_settings(self) -> None:
        self.map_view.set_units(self.units)
        self.profile_view.units = self.units
        self.profile_view.set_time_axis(self.settings.profile_against_time, self.utc_offset_h)
        self.totals_panel.set_units(self.units)
        self.splitter.setOrientation(QtCore.Qt.Orientation.Vertical if self.settings.stacked
                                     else QtCore.Qt.Orientation.Horizontal)
        self.status_units.setText(f"{self.units.long_name} · {self.units.short_name} · "
                                  f"{offset_label(self.utc_offset_h)}")

    def _restore_layout(self) -> None:
        geometry = self.settings.value("layout/geometry")
        if geometry is not None:
            self.restoreGeometry(geometry)
        else:
            self.resize(1500, 940)
        window_state = self.settings.value("layout/window_state")
        if window_state is not None:
            self.restoreState(window_state)
        splitter = self.settings.value("layout/splitter")
        if splitter is not None:
            self.splitter.restoreState(splitter)
        else:
            self.splitter.setSizes([620, 320] if self.settings.stacked else [700, 500])

    def _save_layout(self) -> None:
        self.settings.set_value("layout/geometry", self.saveGeometry())
        self.settings.set_value("layout/window_state", self.saveState())
        self.settings.set_value("layout/splitter", self.splitter.saveState())

    # --- the document -----------------------------------------------------------------------------
    def track(self) -> Track | None:
        """The track the views show, or ``None`` when the document has no track."""
        if not self.doc.tracks:
            return None
        return self.doc.tracks[min(self.state.track, len(self.doc.tracks) - 1)]

    def set_document(self, doc: Document, path: str | Path | None = None, read_only: bool = False) -> None:
        """Show ``doc`` (as read from ``path``); the undo history starts empty.

        ``read_only``: the points salvaged from a damaged file; edits are refused until the
        user has saved them as a copy (which then becomes the document's file).
        """
        self.read_only = read_only
        self.discard_preview()
        self.doc.changed.disconnect(self._doc_changed)
        self.undo_stack.clear()
        self.doc = doc
        self.revision += 1
        self.source_path = Path(path) if path else None
        self.saved_copy_path = None
        self.projection = document_projection(doc)
        self.map_view.set_projection(self.projection)
        self.state.set_selection([])
        self.state.set_hover(None)
        first = next((i for i, t in enumerate(doc.tracks) if len(t.points)), 0)
        self.state.set_track(first)
        doc.changed.connect(self._doc_changed)
        self.track_list.set_document(doc, self.state.track)
        self.tracks_dock.setVisible(len(doc.tracks) > 1 or any(t.segment_count > 1 for t in doc.tracks))
        self.map_view.set_waypoints(doc.waypoints.lat, doc.waypoints.lon, doc.waypoints.name)
        self._rebuild_views(fit=True)
        self.update_totals()
        self.undo_stack.setClean()
        self.recovery.document_opened(self.source_path)
        self.update_title()
        for warning in doc.warnings[:1]:
            self.statusBar().showMessage(f"Note: {warning}", 10000)

    def _doc_changed(self, _track_index) -> None:
        # An edit can emit several times (an edit sequence); redraw once afterwards.
        self.revision += 1
        self.preview_runner.cancel()
        self.state.set_preview(None)
        self._rebuild_timer.start()

    def _rebuild_views(self, fit: bool = False) -> None:
        track = self.track()
        same_track = self._geometry_key == (id(self.doc), self.state.track)
        previous = self.geometry_ if same_track and not fit else None
        geometry = (TrackGeometry.from_track(track, self.projection, previous) if track is not None
                    else TrackGeometry.empty())
        self._geometry_key = (id(self.doc), self.state.track)
        length_changed = len(geometry) != len(self.geometry_)
        self.geometry_ = geometry
        if length_changed:
            self.state.set_selection(self.pending_selection if self.pending_selection is not None else [])
            self.state.set_hover(None)
        self.pending_selection = None
        self.map_view.set_geometry(geometry, fit=fit)
        self.profile_view.set_geometry(geometry, fit=fit)
        # Totals of a long track take tens of milliseconds: do them in the next event-loop turn,
        # after the views have painted, so no single UI step grows long.
        self._totals_timer.start()
        if track is not None:
            self.track_list.set_document(self.doc, self.state.track)
        n = len(geometry)
        self.status_points.setText(f"{n:,} points · {len(self.doc.tracks)} track(s)")
        self.tool_dock.document_changed()
        self.update_actions()

    def update_totals(self) -> None:
        """Totals of the shown track from the core's statistics."""
        track = self.track()
        self.totals = track_totals(track) if track is not None else None
        if self.state.preview is None:
            self.totals_panel.set_totals(self.totals)

    def show_track(self, index: int) -> None:
        if index != self.state.track and 0 <= index < len(self.doc.tracks):
            self.discard_preview()
            self.state.set_track(index)
            self._rebuild_views(fit=True)

    def show_segment(self, track_index: int, segment: int) -> None:
        self.show_track(track_index)
        start, stop = self.doc.tracks[track_index].segment_bounds()[segment]
        self.state.select_range(start, stop)
        self.map_view.fit_rows(self.state.selection)

    def _clean_changed(self, _clean: bool) -> None:
        self.update_title()

    def update_actions(self) -> None:
        update_actions_for(self)

    def update_title(self) -> None:
        name = self.source_path.name if self.source_path else "untitled"
        salvaged = " (salvaged, read-only)" if self.read_only else ""
        self.setWindowTitle(f"{name}{salvaged}[*] — {APP_NAME}")
        self.setWindowModified(not self.undo_stack.isClean())

    # --- state reactions --------------------------------------------------------------------------
    def _hover_changed(self, row) -> None:
        track = self.track()
        if row is None or track is None or not 0 <= row < len(track.points):
            self.map_pane.set_readout("")
            return
        lat, lon = track.points.lat[row], track.points.lon[row]
        self.map_pane.set_readout(
            f"point {row + 1:,}   {abs(lat):.5f}° {'N' if lat >= 0 else 'S'}  "
            f"{abs(lon):.5f}° {'E' if lon >= 0 else 'W'}")

    def _selection_changed(self, rows: np.ndarray) -> None:
        self.tool_dock.selection_changed(len(rows) > 0)
        if len(rows):
            self.statusBar().showMessage(f"{len(rows):,} point(s) selected", 4000)
        self.update_actions()

    def _preview_changed(self, proposal) -> None:
        if proposal is None:
            self.totals_panel.set_totals(self.totals)
        else:
            self.totals_panel.set_totals(proposal.before, proposal.after)
        self.tool_dock.preview_changed(proposal)
        self.update_actions()

    # --- display settings -------------------------------------------------------------------------
    def set_units(self, units) -> None:
        self.units = units
        self.settings.units = units
        self.profile_view.set_units(units)
        self._apply_display_settings()

    def set_utc_offset(self, hours: float) -> None:
        self.utc_offset_h = hours
        self.settings.utc_offset_h = hours
        self._apply_display_settings()
        self.state.hover_changed.emit(self.state.hover)

    def set_profile_against_time(self, against_time: bool) -> None:
        self.settings.profile_against_time = against_time
        self.profile_view.set_time_axis(against_time, self.utc_offset_h)

    def set_stacked(self, stacked: bool) -> None:
        self.settings.stacked = stacked
        self.splitter.setOrientation(QtCore.Qt.Orientation.Vertical if stacked else QtCore.Qt.Orientation.Horizontal)
        total = sum(self.splitter.sizes())
        self.splitter.setSizes([int(total * 0.62), int(total * 0.38)] if stacked else [total // 2, total // 2])
        self._save_layout()

    def fit_views(self) -> None:
        self.map_view.fit_all()
        self.profile_view.fit_all()

    def fit_selection(self) -> None:
        if len(self.state.selection):
            self.map_view.fit_rows(self.state.selection)
            self.profile_view.fit_rows(self.state.selection)

    # --- drag and drop, closing -------------------------------------------------------------------
    def dragEnterEvent(self, event: QtGui.QDragEnterEvent) -> None:  # noqa: N802 (Qt override)
        if any(u.isLocalFile() for u in event.mimeData().urls()):
            event.acceptProposedAction()

    def dropEvent(self, event: QtGui.QDropEvent) -> None:  # noqa: N802 (Qt override)
        files = [u.toLocalFile() for u in event.mimeData().urls() if u.isLocalFile()]
        if files:
            event.acceptProposedAction()
            self.open_path(files[0])

    def closeEvent(self, event: QtGui.QCloseEvent) -> None:  # noqa: N802 (Qt override)
        if not self.confirm_discard("closing"):
            event.ignore()
            return
        self._save_layout()
        self.settings.sync()
        self.preview_runner.cancel()
        self.cancel_long_job()
        self.map_view.detach()
        self.profile_view.detach()
        self.pool.shutdown()
        self.long_pool.shutdown()
        self.recovery.discard()
        self.closing = True
        event.accept()


def update_actions_for(window) -> None:
    """Enable the editing actions that apply to the current selection and preview."""
    a = getattr(window, "actions_", None)
    if not a:
        return
    has_track = window.track() is not None and len(window.geometry_) > 0
    has_selection = has_track and len(window.state.selection) > 0
    for name in ("delete", "trim_before", "trim_after", "split", "merge", "insert", "fit_selection"):
        a[name].setEnabled(has_selection)
    for name in ("apply", "discard"):
        a[name].setEnabled(window.state.preview is not None)
    for name in ("save", "geojson", "csv", "select_all"):
        a[name].setEnabled(bool(window.doc.tracks) or bool(window.doc.routes) or len(window.doc.waypoints) > 0)
