"""The main window: assembles the linked views, tool panels, totals, history and status bar.

Behaviour lives in controllers that receive the window's :class:`~editor.app.session.Session`
explicitly: ``files`` (open, save, export), ``editing`` (hand edits), ``previews`` (tool
previews, apply, long jobs) and ``display`` (views, totals, title). This module only builds
the widgets, wires them to the controllers, and keeps the layout and display settings.
"""
from __future__ import annotations

from PySide6 import QtCore, QtGui, QtWidgets

from ..panels.legend import LegendPanel
from ..panels.totals_panel import TotalsPanel
from ..panels.track_list import TrackList
from ..views.base import LinkedPlot
from ..views.geometry import document_projection
from ..views.map_view import MapView
from ..views.profile_view import ProfileView
from ..views.relief_layer import ReliefBackground
from ..views.style import Palette
from ..units import offset_label
from . import dialogs
from .actions import build_actions
from .display import DisplayController
from .editing import EditController
from .files import FileController
from .background_menu import BackgroundController
from .clean_up import CleanUpController
from .panes import ViewPane
from .previews import PreviewController
from .recovery_keeper import RecoveryKeeper
from ..panels.scrolling import scrolled
from .session import Session
from .settings import AppSettings
from .tool_dock import ToolDock
from .workers import WorkerPool

#: The linked views, first (top or left) to last: pane title, view class, hint. A third view is one more line.
VIEW_PANES: tuple[tuple[str, type[LinkedPlot], str], ...] = (
    ("Map", MapView, "drag pans · click selects · shift+drag selects a box · F1: gestures"),
    ("Elevation profile", ProfileView, "drag pans · wheel zooms distance, shift+wheel elevation · "
                                       "shift+drag selects a stretch"),
)


#: The window's size on first start, when the screen has room for it.
PREFERRED_SIZE = (1500, 940)


def first_size(available: QtCore.QSize | None) -> tuple[int, int]:
    """The first-start size: the preferred one, shrunk to fit the screen's free area (a 1280×720
    laptop included) with a margin for the window frame."""
    width, height = PREFERRED_SIZE
    if available is None or available.isEmpty():
        return width, height
    return min(width, available.width() - 16), min(height, available.height() - 40)


#: Height the tool controls keep however the docks were left: their everyday settings and buttons.
MINIMUM_TOOLS_HEIGHT = 250


class MainWindow(QtWidgets.QMainWindow):
    """One session (document, shared :class:`EditorState`), one undo stack.

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
        # Two threads for previews (a newer request replaces queued ones; a released slider's value
        # starts while an older run finishes), one for long jobs.
        self.pool = pool or WorkerPool(2)
        self.long_pool = WorkerPool(1)
        self.session = Session()
        self.state = self.session.state  # the views' shared state: one object for the window's life
        self.undo_stack = QtGui.QUndoStack(self)
        self.closing = False  # set once the window is going away: slots must not touch children
        self.recovery = RecoveryKeeper(self)
        self.projection = document_projection(self.session.doc)
        self.actions_: dict[str, QtGui.QAction] = {}
        self.recent_menu: QtWidgets.QMenu | None = None
        self.units = settings.units
        self.utc_offset_h = settings.utc_offset_h
        # the controllers; each gets the session explicitly
        self.previews = PreviewController(self, self.session, self.pool, self.long_pool)
        self.editing = EditController(self, self.session)
        self.files = FileController(self, self.session)
        self.setAcceptDrops(True)
        self.setDockOptions(QtWidgets.QMainWindow.DockOption.AnimatedDocks
                            | QtWidgets.QMainWindow.DockOption.AllowTabbedDocks)

        self.views: list[LinkedPlot] = [view_class(self.state, self.palette_) for _t, view_class, _h in VIEW_PANES]
        self.panes = [ViewPane(title, view, hint) for (title, _c, hint), view in zip(VIEW_PANES, self.views)]
        self.map_view, self.profile_view = self.views[0], self.views[1]
        self.map_pane, self.profile_pane = self.panes[0], self.panes[1]
        self.splitter = QtWidgets.QSplitter()
        self.splitter.setObjectName("viewSplitter")
        for pane in self.panes:
            self.splitter.addWidget(pane)
        self.splitter.setChildrenCollapsible(False)
        self.setCentralWidget(self.splitter)

        self.totals_panel = TotalsPanel()
        self.track_list = TrackList()
        self.history = QtWidgets.QUndoView(self.undo_stack)
        self.history.setEmptyLabel("File as opened")
        self.tool_dock = ToolDock(self)

        self.tools_dock = self._dock("Tool by tool", "toolsDock", self.tool_dock)
        # whatever sizes a saved layout brings, the everyday settings and the buttons stay usable
        self.tools_dock.setMinimumHeight(MINIMUM_TOOLS_HEIGHT)
        # scrolls rather than squeezing its rows together on a short screen
        self.totals_dock = self._dock("Totals", "totalsDock", scrolled(self.totals_panel))
        self.legend_dock = self._dock("Legend", "legendDock", scrolled(LegendPanel(self.palette_)))
        self.history_dock = self._dock("History", "historyDock", self.history)
        self.tracks_dock = self._dock("Tracks and segments", "tracksDock", self.track_list)
        right = QtCore.Qt.DockWidgetArea.RightDockWidgetArea
        self.addDockWidget(right, self.tools_dock)
        self.addDockWidget(right, self.totals_dock)
        self.addDockWidget(right, self.history_dock)
        # The legend shares a tab group with the history, so the tool controls keep their room.
        self.tabifyDockWidget(self.history_dock, self.legend_dock)
        self.tabifyDockWidget(self.history_dock, self.tracks_dock)
        self.history_dock.raise_()
        self.resizeDocks([self.tools_dock], [440], QtCore.Qt.Orientation.Horizontal)
        self.clean_up = CleanUpController(self)  # the "Clean up" dock, a tab beside the tools

        self.status_points = dialogs.plain_label("")
        self.status_units = dialogs.plain_label("")
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

        # shows the session once the widgets exist (it connects to the views' shared state after them)
        self.display = DisplayController(self, self.session)
        self.actions_.update(build_actions(self))
        self.background_controller = BackgroundController(self)  # View ▸ Background and the map's layer
        self._connect()
        self._apply_display_settings()
        self._restore_layout()
        self.display.update_title()

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
        self.cancel_button.clicked.connect(self.previews.cancel_long_job)
        self.profile_view.readout_changed.connect(self.profile_pane.set_readout)
        self.map_view.point_dragged.connect(self.editing.move_point)
        self.profile_view.elevation_dragged.connect(self.editing.set_point_elevation)
        for view in self.views:
            view.move_status.connect(lambda text: self.statusBar().showMessage(text) if text
                                     else self.statusBar().clearMessage())
        self.track_list.track_chosen.connect(self.display.show_track)
        self.track_list.segment_chosen.connect(self.display.show_segment)
        self.splitter.splitterMoved.connect(lambda *_: self._save_layout())

    def _apply_display_settings(self) -> None:
        self.map_view.set_units(self.units)
        self.profile_view.units = self.units
        self.profile_view.set_time_axis(self.settings.profile_against_time, self.utc_offset_h)
        self.totals_panel.set_units(self.units)
        self.tool_dock.set_units(self.units)  # tool settings too: converted for display, stored in SI
        self.splitter.setOrientation(QtCore.Qt.Orientation.Vertical if self.settings.stacked
                                     else QtCore.Qt.Orientation.Horizontal)
        self.status_units.setText(f"{self.units.long_name} · {self.units.short_name} · "
                                  f"{offset_label(self.utc_offset_h)}")

    def _restore_layout(self) -> None:
        geometry = self.settings.value("layout/geometry")
        if geometry is not None:
            self.restoreGeometry(geometry)
        else:
            self.resize(*first_size(self.screen().availableGeometry().size() if self.screen() else None))
        window_state = self.settings.value("layout/window_state")
        if window_state is not None:
            self.restoreState(window_state)
        else:
            # once the window has its size: the tool controls get most of the height, and on a
            # short screen (1280×720) the totals and the history give way
            QtCore.QTimer.singleShot(0, self._first_dock_heights)
        splitter = self.settings.value("layout/splitter")
        if splitter is not None:
            self.splitter.restoreState(splitter)
        else:
            self.splitter.setSizes([620, 320] if self.settings.stacked else [700, 500])

    def _first_dock_heights(self) -> None:
        docks = [self.tools_dock, self.totals_dock, self.history_dock]
        height = sum(d.height() for d in docks) or self.height()
        self.resizeDocks(docks, [round(height * 0.6), round(height * 0.25), round(height * 0.15)],
                         QtCore.Qt.Orientation.Vertical)

    def _save_layout(self) -> None:
        self.settings.set_value("layout/geometry", self.saveGeometry())
        self.settings.set_value("layout/window_state", self.saveState())
        self.settings.set_value("layout/splitter", self.splitter.saveState())

    # --- display settings -------------------------------------------------------------------------
    def set_units(self, units) -> None:
        self.units = units
        self.settings.units = units
        self.profile_view.set_units(units)
        self._apply_display_settings()
        self.clean_up.set_units(units)

    def set_utc_offset(self, hours: float) -> None:
        self.utc_offset_h = hours
        self.settings.utc_offset_h = hours
        self._apply_display_settings()
        self.state.hover_changed.emit(self.state.hover)

    def terrain_chosen(self, terrain) -> None:
        """Terrain files were chosen (Elevation tool): offer their shaded relief as the map background,
        and show it at once when the map has no background yet."""
        if terrain is None:
            self.background_controller.set_relief_source(None)
            return

        def relief() -> ReliefBackground:
            return ReliefBackground(terrain)

        self.background_controller.set_relief_source(relief)
        if self.map_view.background is None:
            self.background_controller.choose("relief")
        self.statusBar().showMessage("Terrain loaded: its shaded relief is under the map "
                                     "(View ▸ Background chooses another).", 8000)

    def set_move_mode(self, on: bool) -> None:
        """Points can be dragged only in this mode; every other drag pans (see Help ▸ Gestures)."""
        for view in self.views:
            view.set_move_mode(on)
        self.statusBar().showMessage("Move points: press on a point (the pointer shows a hand) and drag it. "
                                     "Ctrl+M turns it off." if on else "Move points is off: drags pan.", 6000)

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
        for view in self.views:
            view.fit_all()

    def fit_selection(self) -> None:
        if len(self.state.selection):
            for view in self.views:
                view.fit_rows(self.state.selection)

    # --- drag and drop, closing -------------------------------------------------------------------
    def dragEnterEvent(self, event: QtGui.QDragEnterEvent) -> None:  # noqa: N802 (Qt override)
        if any(u.isLocalFile() for u in event.mimeData().urls()):
            event.acceptProposedAction()

    def dropEvent(self, event: QtGui.QDropEvent) -> None:  # noqa: N802 (Qt override)
        files = [u.toLocalFile() for u in event.mimeData().urls() if u.isLocalFile()]
        if files:
            event.acceptProposedAction()
            self.files.open_path(files[0])

    def closeEvent(self, event: QtGui.QCloseEvent) -> None:  # noqa: N802 (Qt override)
        if not self.files.confirm_discard("closing"):
            event.ignore()
            return
        self._save_layout()
        self.settings.sync()
        self.previews.runner.cancel()
        self.previews.cancel_long_job()
        self.files.jobs.cancel()
        for view in self.views:
            view.detach()
        self.pool.shutdown()
        self.long_pool.shutdown()
        self.recovery.discard()
        self.closing = True
        event.accept()
