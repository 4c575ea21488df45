"""Totals of the shown track, and before → after while a proposal is previewed.

The numbers come from :mod:`editor.processing.stats` (the proposal carries its
own before/after totals computed there); this panel only formats them.
"""
from __future__ import annotations

import math

from PySide6 import QtCore, QtWidgets

# the caution shown above the numbers is the one a saved copy's record carries
from ..io.provenance import CAUTION
from ..processing.stats import Totals
from ..units import METRIC, UnitSystem, format_duration

#: (label, how to format a Totals in given units)
ROWS = (
    ("Distance", lambda t, u: u.long(t.distance_m)),
    ("Ascent", lambda t, u: u.short(t.ascent_m)),
    ("Descent", lambda t, u: u.short(t.descent_m)),
    ("Moving time", lambda t, u: format_duration(t.moving_time_s)),
    ("Duration", lambda t, u: format_duration(t.duration_s)),
    ("Max speed", lambda t, u: u.speed(t.max_speed_mps)),
    ("Points", lambda t, u: f"{t.points:,}"),
    ("Segments", lambda t, u: f"{t.segments:,}"),
)


def _change(before: Totals, after: Totals, label: str, units: UnitSystem) -> str:
    key = {"Distance": "distance_m", "Ascent": "ascent_m", "Descent": "descent_m",
           "Moving time": "moving_time_s", "Duration": "duration_s", "Max speed": "max_speed_mps",
           "Points": "points", "Segments": "segments"}[label]
    a, b = float(getattr(before, key)), float(getattr(after, key))
    if not (math.isfinite(a) and math.isfinite(b)) or a == b:
        return ""
    diff = b - a
    if key == "distance_m":
        text = units.long(abs(diff))
    elif key in ("ascent_m", "descent_m"):
        text = units.short(abs(diff))
    elif key.endswith("_s"):
        text = format_duration(abs(diff))
    elif key == "max_speed_mps":
        text = units.speed(abs(diff))
    else:
        text = f"{abs(int(diff)):,}"
    pct = f" ({diff / a * 100:+.0f} %)" if a else ""
    return ("+" if diff > 0 else "−") + text + pct


class TotalsPanel(QtWidgets.QWidget):
    """A small table: the track's totals, and when previewing, the proposal's and the change."""

    def __init__(self, parent=None) -> None:
        super().__init__(parent)
        self.setObjectName("panelBody")
        self.units = METRIC
        self._before: Totals | None = None
        self._after: Totals | None = None
        grid = QtWidgets.QGridLayout(self)
        grid.setContentsMargins(8, 6, 8, 6)
        grid.setHorizontalSpacing(12)
        grid.setVerticalSpacing(3)
        # the header says what the numbers are: measured from a recording, and after a clean, estimates
        self.caution = QtWidgets.QLabel(CAUTION)
        self.caution.setObjectName("caution")
        self.caution.setWordWrap(True)
        grid.addWidget(self.caution, 0, 0, 1, 4)
        self.header_now = QtWidgets.QLabel("Track")
        self.header_after = QtWidgets.QLabel("→ Proposal")
        self.header_change = QtWidgets.QLabel("Change")
        for col, label in enumerate((self.header_now, self.header_after, self.header_change), start=1):
            label.setObjectName("totalsHeader")
            label.setAlignment(QtCore.Qt.AlignmentFlag.AlignRight)
            grid.addWidget(label, 1, col)
        self.cells: dict[str, tuple[QtWidgets.QLabel, ...]] = {}
        for row, (name, _) in enumerate(ROWS, start=2):
            name_label = QtWidgets.QLabel(name)
            now, after, change = (QtWidgets.QLabel("–"), QtWidgets.QLabel(""), QtWidgets.QLabel(""))
            after.setObjectName("totalsAfter")
            for col, label in enumerate((now, after, change), start=1):
                label.setAlignment(QtCore.Qt.AlignmentFlag.AlignRight)
                label.setTextInteractionFlags(QtCore.Qt.TextInteractionFlag.TextSelectableByMouse)
                grid.addWidget(label, row, col)
            grid.addWidget(name_label, row, 0)
            self.cells[name] = (now, after, change)
        grid.setColumnStretch(0, 1)
        grid.setRowStretch(len(ROWS) + 2, 1)
        self._show_after(False)

    def _show_after(self, visible: bool) -> None:
        if getattr(self, "_after_visible", None) == visible:
            return  # re-laying out the grid costs more than the numbers
        self._after_visible = visible
        self.header_after.setVisible(visible)
        self.header_change.setVisible(visible)
        for now, after, change in self.cells.values():
            after.setVisible(visible)
            change.setVisible(visible)

    def set_units(self, units: UnitSystem) -> None:
        self.units = units
        self._redraw()

    def set_totals(self, before: Totals | None, after: Totals | None = None) -> None:
        """Show ``before`` (the document) and, when given, ``after`` (the previewed proposal)."""
        self._before, self._after = before, after
        self._redraw()

    def text_of(self, name: str) -> tuple[str, str]:
        """The shown (now, after) texts of one row, e.g. ``"Ascent"``."""
        now, after, _ = self.cells[name]
        return now.text(), after.text()

    def _redraw(self) -> None:
        before, after = self._before, self._after
        self._show_after(after is not None)
        for name, fmt in ROWS:
            now, after_label, change = self.cells[name]
            now.setText("–" if before is None else fmt(before, self.units))
            if after is not None and before is not None:
                after_label.setText(fmt(after, self.units))
                change.setText(_change(before, after, name, self.units))
            else:
                after_label.setText("")
                change.setText("")
