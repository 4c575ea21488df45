"""The background's credit line, drawn on the map in its lower right corner (providers require it)."""
from __future__ import annotations

import pyqtgraph as pg
from PySide6 import QtCore, QtGui


class AttributionLabel(pg.GraphicsWidgetAnchor, pg.GraphicsObject):
    """Small text on a light box, anchored to the view box; takes no mouse events."""

    MAX_WIDTH_PX = 900

    def __init__(self) -> None:
        pg.GraphicsObject.__init__(self)
        pg.GraphicsWidgetAnchor.__init__(self)
        self.setAcceptedMouseButtons(QtCore.Qt.MouseButton.NoButton)
        self.setZValue(200)
        self._text = ""
        self._font = QtGui.QFont()
        self._font.setPointSizeF(8.0)
        self._rect = QtCore.QRectF()

    def set_text(self, text: str) -> None:
        self.prepareGeometryChange()
        self._text = text
        metrics = QtGui.QFontMetricsF(self._font)
        width = min(metrics.horizontalAdvance(text), self.MAX_WIDTH_PX) + 8
        self._rect = QtCore.QRectF(-width, -metrics.height() - 4, width, metrics.height() + 4) if text \
            else QtCore.QRectF()
        self.setVisible(bool(text))
        self.update()

    def text(self) -> str:
        return self._text

    def boundingRect(self) -> QtCore.QRectF:  # noqa: N802 (Qt override)
        return self._rect

    def paint(self, painter: QtGui.QPainter, *args) -> None:
        if not self._text:
            return
        painter.fillRect(self._rect, QtGui.QColor(255, 255, 255, 200))
        painter.setFont(self._font)
        painter.setPen(QtGui.QColor(40, 40, 40))
        shown = QtGui.QFontMetricsF(self._font).elidedText(self._text, QtCore.Qt.TextElideMode.ElideMiddle,
                                                            self._rect.width() - 8)
        painter.drawText(self._rect.adjusted(4, 0, -4, 0), QtCore.Qt.AlignmentFlag.AlignVCenter, shown)
