"""The two view panes: a header line above each linked plot."""
from __future__ import annotations

from PySide6 import QtCore, QtWidgets

from .dialogs import plain_tooltip


class ElidedLabel(QtWidgets.QLabel):
    """A one-line label that shortens its text with "…" instead of widening the window."""

    def __init__(self, text: str = "", parent=None) -> None:
        super().__init__(parent)
        self._full = text
        self.setTextFormat(QtCore.Qt.TextFormat.PlainText)  # readouts can quote the file (point names)
        self.setSizePolicy(QtWidgets.QSizePolicy.Policy.Ignored, QtWidgets.QSizePolicy.Policy.Preferred)
        self.setText(text)

    def setText(self, text: str) -> None:  # noqa: N802 (Qt override)
        self._full = text
        self.setToolTip(plain_tooltip(text))
        self._elide()

    def full_text(self) -> str:
        return self._full

    def resizeEvent(self, event) -> None:  # noqa: N802 (Qt override)
        super().resizeEvent(event)
        self._elide()

    def _elide(self) -> None:
        width = max(self.contentsRect().width() - 4, 0)
        shown = self.fontMetrics().elidedText(self._full, QtCore.Qt.TextElideMode.ElideRight, width)
        super().setText(shown)


class ViewPane(QtWidgets.QWidget):
    """A plot with a title and a one-line readout above it."""

    def __init__(self, title: str, plot: QtWidgets.QWidget, hint: str, parent=None) -> None:
        super().__init__(parent)
        layout = QtWidgets.QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.setSpacing(0)
        header = QtWidgets.QHBoxLayout()
        header.setContentsMargins(6, 2, 6, 2)
        self.title = QtWidgets.QLabel(f"<b>{title}</b>")
        self.readout = ElidedLabel("")
        self.readout.setObjectName("readout")
        self.hint = ElidedLabel(hint)
        self.hint.setObjectName("viewHeader")
        # Long readouts must never widen the window (that would move every view under the mouse).
        self.hint.setAlignment(QtCore.Qt.AlignmentFlag.AlignRight | QtCore.Qt.AlignmentFlag.AlignVCenter)
        header.addWidget(self.title)
        header.addWidget(self.readout, 2)
        header.addWidget(self.hint, 1)
        layout.addLayout(header)
        layout.addWidget(plot, 1)
        self.plot = plot

    def set_readout(self, text: str) -> None:
        """Show ``text``; the gesture hint takes the space while nothing is hovered."""
        self.readout.setText(text)
        self.hint.setVisible(not text)
