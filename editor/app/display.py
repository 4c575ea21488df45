"""Showing the session's document: views, totals, track list, title, and reactions to the shared state.

The :class:`DisplayController` redraws every view in ``window.views`` from the
session; it is the only code that turns a document change into view updates.
"""
from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np
from PySide6 import QtCore

from ..model.document import Document
from ..processing.stats import Totals, track_totals
from ..views.geometry import TrackGeometry, document_projection
from .session import Session

if TYPE_CHECKING:
    from .window import MainWindow

APP_NAME = "Trackwright"


class DisplayController(QtCore.QObject):
    """Keeps the views, totals and title of one window in step with its session."""

    def __init__(self, window: MainWindow, session: Session) -> None:
        super().__init__(window)
        self.window = window
        self.session = session
        self.geometry = TrackGeometry.empty()
        self.totals: Totals | None = None
        self._geometry_key: tuple | None = None
        self._rebuild_timer = QtCore.QTimer(self, singleShot=True, interval=0)
        self._rebuild_timer.timeout.connect(self.rebuild_views)
        self._totals_timer = QtCore.QTimer(self, singleShot=True, interval=0)
        self._totals_timer.timeout.connect(self.update_totals)
        session.doc.changed.connect(self._doc_changed)
        state = session.state
        state.hover_changed.connect(self._hover_changed)
        state.selection_changed.connect(self._selection_changed)
        state.preview_changed.connect(self._preview_changed)
        window.undo_stack.cleanChanged.connect(lambda _clean: self.update_title())
        self._history_index: tuple[int, Any] = (0, None)  # (undo stack index, the step a redo would do)
        window.undo_stack.indexChanged.connect(self._history_moved)

    # --- the document -----------------------------------------------------------------------------
    def set_document(self, doc: Document, path: str | Path | None = None, read_only: bool = False) -> None:
        """Show ``doc`` (as read from ``path``); the undo history starts empty.

        ``read_only``: the points salvaged from a damaged file; edits are refused until the
        user has saved them as a copy (which then becomes the document's file).
        """
        window, session, state = self.window, self.session, self.session.state
        window.previews.discard_preview()
        session.doc.changed.disconnect(self._doc_changed)
        self._history_index = (0, None)  # clearing the history is not an undo: nothing to report
        window.undo_stack.clear()
        session.replace_document(doc, path, read_only)
        window.projection = document_projection(doc)
        window.map_view.set_projection(window.projection)
        state.set_selection([])
        state.set_hover(None)
        first = next((i for i, t in enumerate(doc.tracks) if len(t.points)), 0)
        state.set_track(first)
        doc.changed.connect(self._doc_changed)
        window.track_list.set_document(doc, state.track)
        window.tracks_dock.setVisible(len(doc.tracks) > 1 or any(t.segment_count > 1 for t in doc.tracks))
        window.map_view.set_waypoints(doc.waypoints.lat, doc.waypoints.lon, doc.waypoints.name)
        self._show_context()
        self.rebuild_views(fit=True)
        self.update_totals()
        self._totals_timer.stop()  # rebuild_views asked for them in the next turn: done already
        window.undo_stack.setClean()
        window.recovery.document_opened(session.source_path)
        self.update_title()
        for warning in doc.warnings[:1]:
            window.statusBar().showMessage(f"Note: {warning}", 10000)

    def _doc_changed(self, _track_index: Any) -> None:
        # An edit can emit several times (an edit sequence); redraw once afterwards.
        self.session.edited()
        self.window.previews.runner.cancel()
        self.session.state.set_preview(None)
        self._rebuild_timer.start()

    def redraw_soon(self) -> None:
        """Redraw from the model in the next event-loop turn (after a refused drag, say)."""
        self._rebuild_timer.start()

    def rebuild_views(self, fit: bool = False) -> None:
        window, session, state = self.window, self.session, self.session.state
        track = session.track()
        same_track = self._geometry_key == (id(session.doc), state.track)
        previous = self.geometry if same_track and not fit else None
        hint = window.previews.applied_hint
        if hint is not None and hint.fits(session) and track is not None and len(hint.lat) == len(track.points):
            # an applied tool: its worker already projected the new points
            previous = TrackGeometry.planar(hint.lat, hint.lon, *hint.xy)
        geometry = (TrackGeometry.from_track(track, window.projection, previous) if track is not None
                    else TrackGeometry.empty())
        self._geometry_key = (id(session.doc), state.track)
        length_changed = len(geometry) != len(self.geometry)
        self.geometry = geometry
        if length_changed:
            state.set_selection(session.pending_selection if session.pending_selection is not None else [])
            state.set_hover(None)
        session.pending_selection = None
        for view in window.views:
            view.set_geometry(geometry, fit=fit)
        # Totals of a long track take tens of milliseconds: do them in the next event-loop turn,
        # after the views have painted, so no single UI step grows long.
        self._totals_timer.start()
        if track is not None:
            window.track_list.set_document(session.doc, state.track)
        n, tracks = len(geometry), len(session.doc.tracks)
        window.status_points.setText(f"{n:,} point{'' if n == 1 else 's'} · {tracks} track{'' if tracks == 1 else 's'}")
        window.tool_dock.document_changed()
        self.update_actions()

    def update_totals(self) -> None:
        """Totals of the shown track from the core's statistics."""
        track = self.session.track()
        hint, self.window.previews.applied_hint = self.window.previews.applied_hint, None
        if hint is not None and hint.fits(self.session):
            self.totals = hint.totals  # the applied proposal's "after" totals are this track's
        else:
            self.totals = track_totals(track) if track is not None else None
        self.window.totals_panel.set_track_activity(track, self.geometry, self.window.projection)
        if self.session.state.preview is None:
            self.window.totals_panel.set_totals(self.totals)

    def _show_context(self) -> None:
        """The map draws the file's other tracks and its routes around the shown track."""
        doc, shown = self.session.doc, self.session.state.track
        others = [(t.points.lat, t.points.lon) for i, t in enumerate(doc.tracks) if i != shown]
        self.window.map_view.set_context(others, [(r.points.lat, r.points.lon) for r in doc.routes])

    def show_track(self, index: int) -> None:
        session = self.session
        if index != session.state.track and 0 <= index < len(session.doc.tracks):
            self.window.previews.discard_preview()
            session.state.set_track(index)
            self._show_context()
            self.rebuild_views(fit=True)

    def show_segment(self, track_index: int, segment: int) -> None:
        self.show_track(track_index)
        start, stop = self.session.doc.tracks[track_index].segment_bounds()[segment]
        self.session.state.select_range(start, stop)
        self.window.map_view.fit_rows(self.session.state.selection)

    def update_title(self) -> None:
        session, window = self.session, self.window
        name = session.source_path.name if session.source_path else "untitled"
        if session.saved_copy_path is not None and session.source_path != session.saved_copy_path:
            # After "Save cleaned copy" the window works on the copy: say so, and where it came from.
            name = f"{session.saved_copy_path.name} (cleaned copy of {name})"
        salvaged = " (salvaged, read-only)" if session.read_only else ""
        window.setWindowTitle(f"{name}{salvaged}[*] — {APP_NAME}")
        window.setWindowModified(not window.undo_stack.isClean())

    def update_actions(self) -> None:
        """Enable the editing actions that apply to the current selection and preview."""
        a = self.window.actions_
        if not a:
            return
        state = self.session.state
        has_track = self.session.track() is not None and len(self.geometry) > 0
        has_selection = has_track and len(state.selection) > 0
        for name in ("delete", "trim_before", "trim_after", "split", "merge", "insert", "fit_selection"):
            a[name].setEnabled(has_selection)
        for name in ("apply", "discard"):
            a[name].setEnabled(state.preview is not None)
        for name in ("save", "geojson", "csv", "select_all"):
            a[name].setEnabled(self.session.has_content())

    # --- state reactions --------------------------------------------------------------------------
    def _hover_changed(self, row: int | None) -> None:
        track = self.session.track()
        pane = self.window.map_pane
        if row is None or track is None or not 0 <= row < len(track.points):
            pane.set_readout("")
            return
        lat, lon = track.points.lat[row], track.points.lon[row]
        pane.set_readout(f"point {row + 1:,}   {abs(lat):.5f}° {'N' if lat >= 0 else 'S'}  "
                         f"{abs(lon):.5f}° {'E' if lon >= 0 else 'W'}")

    def _selection_changed(self, rows: np.ndarray) -> None:
        self.window.tool_dock.selection_changed(len(rows) > 0)
        if len(rows):
            self.window.statusBar().showMessage(f"{len(rows):,} point{'' if len(rows) == 1 else 's'} selected", 4000)
        self.update_actions()

    def _history_moved(self, index: int) -> None:
        """Say what an undo, redo or new step did, replacing any older message ("Applied: …")."""
        if self.window.closing:
            return
        stack = self.window.undo_stack
        (previous, next_step) = self._history_index
        try:
            self._history_index = (index, stack.command(index) if index < stack.count() else None)
        except RuntimeError:  # the stack announces its own clearing while Qt destroys it
            return
        if index == previous:
            return
        verb = "Undone" if index < previous else ("Redone" if stack.command(index - 1) is next_step else "Done")
        track = self.session.track()
        n = len(track.points) if track is not None else 0
        self.window.statusBar().showMessage(f"{verb}: {stack.text(min(index, previous))} · the track has "
                                            f"{n:,} point{'' if n == 1 else 's'}", 8000)

    def _preview_changed(self, proposal: Any) -> None:
        if proposal is None:
            self.window.totals_panel.set_totals(self.totals)
        else:
            self.window.totals_panel.set_totals(proposal.before, proposal.after)
        self.window.tool_dock.preview_changed(proposal)
        self.update_actions()


__all__ = ["DisplayController", "APP_NAME"]
