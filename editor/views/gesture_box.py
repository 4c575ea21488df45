"""The pieces of a view that meet the mouse: a ViewBox whose owner claims drags, clicks and the
wheel before pyqtgraph pans, and a scatter layer that never takes a click."""
from __future__ import annotations

from typing import TYPE_CHECKING

import pyqtgraph as pg
from PySide6 import QtCore

if TYPE_CHECKING:
    from .base import LinkedPlot


class PassiveScatter(pg.ScatterPlotItem):
    """A scatter layer that never takes a click: pyqtgraph's scatter accepts a click on one of
    its symbols, so the view never saw a click made exactly on a point (only one beside it)."""

    def mouseClickEvent(self, ev):  # noqa: N802 (pyqtgraph override)
        ev.ignore()


class GestureViewBox(pg.ViewBox):
    """A ViewBox that lets its owner claim left-button drags and clicks before panning."""

    def __init__(self, owner: "LinkedPlot", **kwargs) -> None:
        super().__init__(**kwargs)
        self._owner = owner
        self._gesture: str | None = None

    def mouseDragEvent(self, ev, axis=None):  # noqa: N802 (Qt override)
        if axis is None and ev.button() == QtCore.Qt.MouseButton.LeftButton:
            if ev.isStart():
                start = self.mapToView(ev.buttonDownPos())
                self._gesture = self._owner.gesture_started(start, ev.modifiers())
            if self._gesture is not None:
                ev.accept()
                pos = self.mapToView(ev.pos())
                if ev.isFinish():
                    gesture, self._gesture = self._gesture, None
                    self._owner.gesture_finished(gesture, pos)
                else:
                    self._owner.gesture_moved(self._gesture, pos)
                return
        super().mouseDragEvent(ev, axis)

    def mouseClickEvent(self, ev):  # noqa: N802 (Qt override)
        if ev.button() == QtCore.Qt.MouseButton.LeftButton:
            ev.accept()
            self._owner.clicked(self.mapToView(ev.pos()), ev.modifiers())
            return
        super().mouseClickEvent(ev)

    def wheelEvent(self, ev, axis=None):  # noqa: N802 (Qt override)
        axis = self._owner.wheel_axis(ev.modifiers()) if axis is None else axis
        super().wheelEvent(ev, axis)
        self._owner.wheel_zoomed(axis)
