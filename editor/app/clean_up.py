"""Clean up in the window: the batch clean's steps on the shown track, previewed as one proposal.

The toolbar button and Tools ▸ Clean up open the "Clean up" dock and work the
clean up out on a worker thread (:func:`editor.processing.clean_up.clean_up_track`:
the steps, settings and code of ``trackwright clean``). The combined proposal is
the window's preview like any tool's (both views highlight what it changes, the
totals show before → after), and Apply goes through the same
:meth:`PreviewController.apply_preview`: one undo step, whose cleaning record
lists every step it ran. Switching a step off works it out again,
off the UI thread; only the newest result is shown.
"""
from __future__ import annotations

from typing import TYPE_CHECKING, Any

from PySide6 import QtCore, QtWidgets

from ..geo.projection import LocalProjection
from ..io.provenance import StepRecord, params_record
from ..model.payload import GAP_FILL_MARKER
from ..panels.clean_up_panel import CleanUpPanel
from ..processing.clean_up import CleanUpResult, clean_up_params, clean_up_track, offered_steps
from .workers import PreviewRunner, WorkerPool

if TYPE_CHECKING:
    from .window import MainWindow


def cleaning_records(result: CleanUpResult) -> tuple[StepRecord, ...]:
    """What a saved copy's cleaning record says about an applied Clean up: each step that ran, with the
    parameters it ran with (``auto (61.3)`` where it estimated a value), as ``trackwright clean`` records
    them (a step that found nothing to do is listed too)."""
    track = result.proposal.track
    return tuple(StepRecord(o.tool.key, o.tool.label, track, params_record(o.params, o.proposal.info))
                 for o in result.steps if o.on and o.proposal is not None)


class CleanUpController(QtCore.QObject):
    """The Clean up dock of one window: its panel, its worker and its preview."""

    def __init__(self, window: MainWindow) -> None:
        super().__init__(window)
        self.window = window
        self.session = window.session
        self.panel = CleanUpPanel()
        self.dock = QtWidgets.QDockWidget("Clean up", window)
        self.dock.setObjectName("cleanUpDock")
        self.dock.setWidget(self.panel)
        self.dock.setFeatures(window.tools_dock.features())
        window.addDockWidget(QtCore.Qt.DockWidgetArea.RightDockWidgetArea, self.dock)
        window.tabifyDockWidget(window.tools_dock, self.dock)
        self.dock.hide()  # opened by the toolbar button or the Tools menu
        # a pool of its own: a runner drops the queued jobs of its pool, which must not be another's
        self.pool = WorkerPool(1)
        window.destroyed.connect(lambda *_: self.pool.shutdown())
        self.runner = PreviewRunner(self.pool, self, debounce_ms=0)
        self.runner.result_ready.connect(self._ready)
        self.runner.failed.connect(self._failed)
        self.result: CleanUpResult | None = None
        self.panel.steps_changed.connect(self.request)
        self.panel.preview_requested.connect(self.request)
        self.panel.apply_requested.connect(self.apply)
        self.panel.discard_requested.connect(self.discard)
        self.session.state.preview_changed.connect(self._preview_changed)
        self.dock.visibilityChanged.connect(self._visibility_changed)
        self.panel.units = window.units
        self.panel.set_steps(offered_steps(self._terrain()))

    def set_units(self, units: Any) -> None:
        """Say what the steps did in these units (a shown result is described again)."""
        self.panel.units = units
        if self._showing() and self.result is not None:
            self.panel.show_result(self.result)

    def _terrain(self) -> Any:
        """The terrain files chosen in the Elevation tool, if any (the terrain step runs only with them)."""
        panel = self.window.tool_dock.panel("elevation")
        return getattr(panel, "terrain", None)

    def open(self) -> None:
        """Show the dock and work the clean up out on the shown track."""
        self.dock.show()
        self.dock.raise_()
        self.request()

    def request(self) -> None:
        """Work the clean up out in the background with the steps as switched."""
        session, state = self.session, self.session.state
        snapshot = session.snapshot()
        if snapshot is None or not len(snapshot.points):
            self.panel.set_status("The shown track has no points to clean up (the file may hold only "
                                  "waypoints or routes).")
            return
        terrain = self._terrain()
        self.panel.set_steps(offered_steps(terrain))
        params = clean_up_params(self.panel.switched_off())
        track_index, key = state.track, (id(session.doc), session.revision, state.track)
        lat0, lon0 = self.window.projection.lat0, self.window.projection.lon0

        def work() -> tuple[Any, CleanUpResult, Any]:
            result = clean_up_track(snapshot, track_index, params, inserted_marker=GAP_FILL_MARKER, terrain=terrain)
            proposal = result.proposal
            proposal.info["cleaning_record"] = cleaning_records(result)
            # projected for the map and spelled as an undo step here, off the UI thread
            xy = LocalProjection(lat0, lon0).to_xy(proposal.points.lat, proposal.points.lon)
            proposal.edit()
            return key, result, xy

        self.panel.set_working()
        self.runner.request(work, immediately=True)

    def _ready(self, answer: tuple) -> None:
        key, result, xy = answer
        session = self.session
        if key != (id(session.doc), session.revision, session.state.track):
            self.panel.set_status("The track changed meanwhile: press Preview to work the clean up out again.")
            return
        self.window.previews.discard_preview()  # a tool's pending preview must not replace this one
        self.result = result
        self.window.map_view.prepare_proposal_xy(result.proposal, xy)
        session.state.set_preview(result.proposal)
        self.panel.show_result(result)

    def _failed(self, message: str) -> None:
        first = message.splitlines()[0]
        self.panel.set_status(f"The clean up could not run: {first}")
        self.window.statusBar().showMessage(f"Clean up failed: {first}", 8000)

    def _showing(self) -> bool:
        return self.result is not None and self.session.state.preview is self.result.proposal

    def _preview_changed(self, proposal: Any) -> None:
        if self.result is not None and proposal is not self.result.proposal:
            # applied, discarded, replaced by a tool's preview, or the track changed
            self.result = None
            self.panel.set_has_result(False)
            self.panel.clear_words()
            if not self.runner.busy:
                self.panel.set_status("No clean up shown: press Preview to work it out.")

    def _visibility_changed(self, visible: bool) -> None:
        if not visible and self._showing() and not self.window.closing:
            self.discard()  # another tab took the dock's place: its preview goes with it

    def apply(self) -> bool:
        """Keep the shown clean up as one undo step."""
        if not self._showing():
            self.panel.set_status("There is no clean up to apply yet: press Preview.")
            return False
        self.runner.cancel()
        applied = self.window.previews.apply_preview()
        if applied:
            self.panel.set_status("Applied as one step (Edit ▸ Undo takes it back).")
        return applied

    def discard(self) -> None:
        self.runner.cancel()
        if self._showing():
            self.window.previews.discard_preview()
        self.panel.set_status("Discarded.")


__all__ = ["CleanUpController", "cleaning_records"]
