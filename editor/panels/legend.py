"""What the colours and marks on the map and profile mean."""
from __future__ import annotations

from PySide6 import QtCore, QtGui, QtWidgets

from ..views.style import Palette
from .controls import tooltip_lines


def _swatch(palette: Palette, kind: str, size: int = 22) -> QtGui.QPixmap:
    pix = QtGui.QPixmap(size * 2, size)
    pix.fill(QtCore.Qt.GlobalColor.transparent)
    p = QtGui.QPainter(pix)
    p.setRenderHint(QtGui.QPainter.RenderHint.Antialiasing)
    mid = size / 2
    line = QtCore.QLineF(3, mid, size * 2 - 3, mid)
    if kind in ("track", "faded", "proposal", "selection"):
        if kind == "selection":
            halo = QtGui.QPen(palette.qcolor("selection"), 9)
            halo.setCapStyle(QtCore.Qt.PenCapStyle.RoundCap)
            p.setPen(halo)
            p.drawLine(line)
            kind = "track"
        colour = {"track": palette.qcolor("track"), "faded": palette.qcolor("track", 90),
                  "proposal": palette.qcolor("proposal")}[kind]
        p.setPen(QtGui.QPen(colour, 3 if kind == "proposal" else 2))
        p.drawLine(line)
    elif kind in ("other", "route"):
        pen = QtGui.QPen(palette.qcolor("muted", 170), 1.5) if kind == "other" else \
            QtGui.QPen(palette.qcolor("waypoint"), 2, QtCore.Qt.PenStyle.DashLine)
        p.setPen(pen)
        p.drawLine(line)
    elif kind == "kept":
        p.setPen(QtGui.QPen(palette.qcolor("proposal"), 3))
        p.drawLine(line)
        p.setPen(QtGui.QPen(palette.qcolor("paper"), 0.8))
        p.setBrush(palette.qcolor("proposal"))
        p.drawEllipse(QtCore.QPointF(size, mid), 3.5, 3.5)
    elif kind == "band":
        p.fillRect(QtCore.QRectF(3, mid - 6, size * 2 - 6, 12), palette.qcolor("band", 60))
        p.setPen(QtGui.QPen(palette.qcolor("proposal"), 3))
        p.drawLine(line)
    elif kind == "removed":
        p.setPen(QtGui.QPen(palette.qcolor("removed"), 2))
        p.drawLine(QtCore.QLineF(size - 5, mid - 5, size + 5, mid + 5))
        p.drawLine(QtCore.QLineF(size - 5, mid + 5, size + 5, mid - 5))
    elif kind == "inserted":
        p.setPen(QtGui.QPen(palette.qcolor("paper"), 1))
        p.setBrush(palette.qcolor("inserted"))
        p.drawPolygon(QtGui.QPolygonF([QtCore.QPointF(size, mid - 6), QtCore.QPointF(size + 6, mid),
                                       QtCore.QPointF(size, mid + 6), QtCore.QPointF(size - 6, mid)]))
    elif kind in ("start", "end"):
        p.setPen(QtGui.QPen(QtGui.QColor("white"), 1.5))
        p.setBrush(palette.qcolor("inserted" if kind == "start" else "ink"))
        if kind == "start":
            p.drawEllipse(QtCore.QPointF(size, mid), 5.5, 5.5)
        else:
            p.drawRect(QtCore.QRectF(size - 5, mid - 5, 10, 10))
    elif kind == "waypoint":
        p.setPen(QtCore.Qt.PenStyle.NoPen)
        p.setBrush(palette.qcolor("waypoint"))
        star = QtGui.QPolygonF()
        import math
        for i in range(10):
            r = 7 if i % 2 == 0 else 3
            a = -math.pi / 2 + i * math.pi / 5
            star.append(QtCore.QPointF(size + r * math.cos(a), mid + r * math.sin(a)))
        p.drawPolygon(star)
    p.end()
    return pix


ENTRIES = (
    ("track", "Track now"),
    ("faded", "Before the change"),
    ("proposal", "Proposal"),
    ("band", "Likely true track (95 %)"),
    ("removed", "Removed point"),
    ("inserted", "Added point"),
    ("kept", "Kept point (simplify)"),
    ("selection", "Selection"),
    ("start", "Segment start"),
    ("end", "Segment end"),
    ("waypoint", "Waypoint"),
    ("other", "Other track in the file"),
    ("route", "Route"),
)
#: What an entry means when the few words need more; the method goes on a secondary line.
TIPS = {
    "band": "The shaded band around a proposed profile: where the true heights lie 95 times in 100, by the "
            "tool's own estimate of its error. Narrow where the recording is steady, wide across a gap.\n"
            "Method: ±1.96 standard deviations of the smoother's estimate.",
    "kept": "Simplify shows the points it keeps; the others are removed.",
    "faded": "While a proposal is shown, the part of the track it changes is drawn faded.",
}


class LegendPanel(QtWidgets.QWidget):
    """A two-column key of swatches and words."""

    def __init__(self, palette: Palette, parent=None) -> None:
        super().__init__(parent)
        self.setObjectName("panelBody")
        grid = QtWidgets.QGridLayout(self)
        grid.setContentsMargins(8, 4, 8, 4)
        grid.setVerticalSpacing(1)
        half = (len(ENTRIES) + 1) // 2
        for i, (kind, text) in enumerate(ENTRIES):
            row, col = i % half, (i // half) * 2
            icon = QtWidgets.QLabel()
            icon.setPixmap(_swatch(palette, kind))
            label = QtWidgets.QLabel(text)
            label.setWordWrap(True)
            if kind in TIPS:
                tip = tooltip_lines(*TIPS[kind].split("\n"))
                icon.setToolTip(tip)
                label.setToolTip(tip)
            grid.addWidget(icon, row, col)
            grid.addWidget(label, row, col + 1)
        grid.setColumnStretch(1, 1)
        grid.setColumnStretch(3, 1)
