"""Selection, hover and preview: what the views share, in data terms.

Views never talk to each other. Each turns its own gestures into row indices
of the shown track and writes them here; every view redraws from here. Setters
compare before emitting, so a view that reacts to its own change cannot start
an update loop.
"""
from __future__ import annotations

from typing import Any

import numpy as np

from .document import Signal

_EMPTY = np.zeros(0, dtype=np.int64)


class EditorState:
    """Which track is shown, which rows are selected and hovered, and the pending preview.

    Signals
    -------
    track_changed(int), selection_changed(ndarray), hover_changed(int | None),
    preview_changed(object | None)
    """

    def __init__(self) -> None:
        self.track_changed = Signal()
        self.selection_changed = Signal()
        self.hover_changed = Signal()
        self.preview_changed = Signal()
        self._track = 0
        self._selection = _EMPTY
        self._hover: int | None = None
        self._preview: Any = None

    @property
    def track(self) -> int:
        return self._track

    def set_track(self, index: int) -> None:
        if index != self._track:
            self._track = index
            self.set_selection(_EMPTY)
            self.set_hover(None)
            self.set_preview(None)
            self.track_changed.emit(index)

    @property
    def selection(self) -> np.ndarray:
        """Sorted unique row indices of the selected points (empty: nothing selected)."""
        return self._selection

    def set_selection(self, rows) -> None:
        rows = np.unique(np.asarray(rows, dtype=np.int64))
        if not np.array_equal(rows, self._selection):
            self._selection = rows
            self.selection_changed.emit(rows)

    def select_range(self, start: int, stop: int) -> None:
        """Select rows ``start`` to ``stop - 1``."""
        self.set_selection(np.arange(max(start, 0), max(stop, start), dtype=np.int64))

    @property
    def hover(self) -> int | None:
        return self._hover

    def set_hover(self, row: int | None) -> None:
        row = None if row is None else int(row)
        if row != self._hover:
            self._hover = row
            self.hover_changed.emit(row)

    @property
    def preview(self) -> Any:
        """The proposal being previewed (see :mod:`editor.processing.proposal`) or ``None``."""
        return self._preview

    def set_preview(self, proposal: Any) -> None:
        if proposal is not self._preview:
            self._preview = proposal
            self.preview_changed.emit(proposal)
