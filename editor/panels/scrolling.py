"""Scroll areas for the docks whose contents keep their place when a scroll bar comes and goes."""
from __future__ import annotations

from PySide6 import QtCore, QtWidgets


class SteadyScrollArea(QtWidgets.QScrollArea):
    """Scrolls up and down; the room for the vertical scroll bar is always kept free.

    A plain scroll area hands the bar's width back to its contents while the bar is hidden, so
    opening "More settings" (the bar appears) would push every field and button sideways by
    the bar's width and rewrap the labels. Here the contents are always as wide as they are with
    the bar shown, so nothing moves when it appears."""

    def __init__(self, widget: QtWidgets.QWidget, sideways: bool = False) -> None:
        super().__init__()
        self.setWidgetResizable(True)
        self.setFrameShape(QtWidgets.QFrame.Shape.NoFrame)
        if not sideways:
            self.setHorizontalScrollBarPolicy(QtCore.Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.setWidget(widget)
        self.verticalScrollBar().rangeChanged.connect(lambda *_: self._keep_bar_room())
        self._keep_bar_room()

    def bar_width(self) -> int:
        return self.verticalScrollBar().sizeHint().width()

    def _keep_bar_room(self) -> None:
        # a bar that shows takes its room from the viewport; a hidden one leaves the same margin
        bar = self.verticalScrollBar()
        shown = bar.maximum() > bar.minimum()
        right = 0 if shown else self.bar_width()
        if self.viewportMargins().right() != right:
            self.setViewportMargins(0, 0, right, 0)

    def resizeEvent(self, event) -> None:  # noqa: N802 (Qt's name)
        super().resizeEvent(event)
        self._keep_bar_room()


def scrolled(widget: QtWidgets.QWidget) -> SteadyScrollArea:
    """``widget`` in a scroll area that keeps the dock at least as wide as the widget's minimum (a
    column that grows later, the totals' changes, scrolls sideways rather than being cut off)."""
    scroller = SteadyScrollArea(widget, sideways=True)
    scroller.setMinimumWidth(widget.minimumSizeHint().width() + scroller.bar_width())
    return scroller
