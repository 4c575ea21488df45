"""The window's hand editing: each edit a builder from :mod:`editor.model.hand_edits` pushed as one undo step.

Also moving and growing the selection from the keyboard. The controller
receives the session and the window explicitly and keeps no document state.
"""
from __future__ import annotations

from typing import TYPE_CHECKING, Any, Callable

import numpy as np
from PySide6 import QtWidgets

from ..commands import EditCommand
from ..model import hand_edits
from ..io.provenance import StepRecord
from ..model.document import Track

from . import dialogs
from .session import Session

if TYPE_CHECKING:
    from .window import MainWindow


class EditController:
    """Hand edits of one window as undo commands (refused while the document is read-only)."""

    def __init__(self, window: MainWindow, session: Session) -> None:
        self.window = window
        self.session = session

    # --- hand edits -------------------------------------------------------------------------------
    def push_edit(self, edit: Any, label: str, record: StepRecord | tuple[StepRecord, ...] | None = None) -> bool:
        """Apply ``edit`` as one undo step named ``label`` (refused while the document is read-only).

        ``record``: what the step is in a saved copy's cleaning record (a hand edit by default; several
        entries for a step that ran several tools, Clean up).
        """
        if self.session.read_only:
            self.window.statusBar().showMessage(
                "These points were salvaged from a damaged file and are read-only: "
                "save a cleaned copy first (Ctrl+S), then edit the copy.", 8000)
            self.window.display.redraw_soon()  # a drag already drew the point moved: show the model again
            return False
        command = EditCommand(self.session.doc, edit, label)
        command.record = record or StepRecord("edit", label, self.session.state.track)
        self.window.undo_stack.push(command)
        return True

    def cleaning_steps(self) -> list[StepRecord]:
        """The steps of the undo stack that are applied now, in order, for a saved copy's record."""
        stack, track = self.window.undo_stack, self.session.state.track
        steps: list[StepRecord] = []
        for i in range(stack.index()):
            record = getattr(stack.command(i), "record", None) or StepRecord("edit", stack.text(i), track)
            steps.extend(record if isinstance(record, tuple) else (record,))
        return steps

    def _hand_edit(self, build: Callable[[Track], Any], label: str) -> bool:
        track = self.session.track()
        if track is None:
            return False
        try:
            edit = build(track)
        except hand_edits.HandEditError as err:
            self.window.statusBar().showMessage(str(err), 6000)
            return False
        return self.push_edit(edit, label)

    def move_point(self, row: int, x_m: float, y_m: float) -> None:
        projection = self.window.projection
        self._hand_edit(lambda t: hand_edits.move_point(t, self.session.state.track, row, x_m, y_m, projection),
                        f"Move point {row + 1:,}")

    def set_point_elevation(self, row: int, ele_m: float) -> None:
        self._hand_edit(lambda t: hand_edits.set_elevation(self.session.state.track, row, ele_m),
                        f"Change elevation of point {row + 1:,}")

    def delete_selection(self) -> None:
        state = self.session.state
        n = len(state.selection)
        track = self.session.track()
        if track is not None and n and n >= len(track.points):
            buttons = QtWidgets.QMessageBox.StandardButton
            answer = dialogs.ask(
                self.window, "Delete every point?",
                f"The selection holds all {n:,} points of this track. Deleting them leaves an empty track.\n\n"
                "Delete every point? (Undo brings them back.)", buttons.Yes | buttons.Cancel, buttons.Cancel)
            if answer != buttons.Yes:
                return
        self._hand_edit(lambda t: hand_edits.delete_points(t, state.track, state.selection),
                        f"Delete {n:,} point{'s' if n != 1 else ''}")

    def trim_before(self) -> None:
        self._hand_edit(lambda t: hand_edits.trim_before(t, self.session.state.track, self.session.state.selection),
                        "Trim before selection")

    def trim_after(self) -> None:
        self._hand_edit(lambda t: hand_edits.trim_after(t, self.session.state.track, self.session.state.selection),
                        "Trim after selection")

    def split_segment(self) -> None:
        self._hand_edit(lambda t: hand_edits.split_segment(t, self.session.state.track, self.session.state.selection),
                        "Split segment")

    def merge_segments(self) -> None:
        self._hand_edit(lambda t: hand_edits.merge_segments(t, self.session.state.track, self.session.state.selection),
                        "Join segments")

    def sort_by_time(self) -> None:
        self._hand_edit(lambda t: hand_edits.sort_by_time(t, self.session.state.track), "Sort points by time")

    def offer_time_sort(self) -> None:
        """After opening: if the shown track has points out of time order, offer to sort them."""
        track = self.session.track()
        count = hand_edits.backward_time_count(track) if track is not None else 0
        if not count:
            return
        answer = dialogs.ask(
            self.window, "Times out of order",
            f"{count:,} point{'s' if count != 1 else ''} of this track "
            f"{'have times' if count != 1 else 'has a time'} earlier than the point before.\n\n"
            "Sort each segment's points by time? (One undo step; Edit ▸ Sort points by time does the same.)")
        if answer == QtWidgets.QMessageBox.StandardButton.Yes:
            self.sort_by_time()

    def insert_point(self) -> None:
        sel = self.session.state.selection
        after = int(sel[-1]) if len(sel) else None
        if after is not None:
            self.session.pending_selection = [after + 1]  # the new point, once the views are rebuilt
        projection = self.window.projection
        if not self._hand_edit(lambda t: hand_edits.insert_point_after(t, self.session.state.track, sel, projection),
                               "Insert point"):
            self.session.pending_selection = None

    # --- selection by keyboard --------------------------------------------------------------------
    def select_all(self) -> None:
        track = self.session.track()
        if track is not None:
            self.session.state.select_range(0, len(track.points))

    def clear_selection(self) -> None:
        self.session.state.set_selection([])

    def step_selection(self, delta: int, extend: bool = False) -> None:
        """Move the selection by ``delta`` points, or grow it at that end when ``extend``."""
        track = self.session.track()
        if track is None or not len(track.points):
            return
        sel = self.session.state.selection
        n = len(track.points)
        if not len(sel):
            row = 0 if delta > 0 else n - 1
            self.session.state.set_selection([row])
        elif extend:
            lo, hi = int(sel[0]), int(sel[-1])
            lo, hi = (lo, min(hi + delta, n - 1)) if delta > 0 else (max(lo + delta, 0), hi)
            self.session.state.select_range(lo, hi + 1)
        else:
            row = int(np.clip((sel[-1] if delta > 0 else sel[0]) + delta, 0, n - 1))
            self.session.state.set_selection([row])
        self.session.state.set_hover(int(self.session.state.selection[-1 if delta > 0 else 0]))
