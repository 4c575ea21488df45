"""The Clean up panel: the recommended steps in order, what each did, a switch per step, Apply / Discard.

The panel knows nothing about threads or the document: it shows a
:class:`~editor.processing.clean_up.CleanUpResult` in words and asks the window
(through signals) to work the clean up out again when a step is switched, to
apply it, or to discard it.
"""
from __future__ import annotations

from PySide6 import QtCore, QtWidgets

from .. import CAUTION
from ..processing.clean_up import CleanUpResult
from ..processing.descriptor import ToolDescriptor
from ..processing.step_words import describe
from ..units import METRIC, UnitSystem
from .scrolling import SteadyScrollArea

INTRO = ("The recommended steps in order, with the batch clean's settings. Untick a step to leave it out; "
         "Apply keeps the result as one undo step.")


class StepRow(QtWidgets.QWidget):
    """One step: its switch, what it did, and how (secondary text)."""

    def __init__(self, tool: ToolDescriptor, parent=None) -> None:
        super().__init__(parent)
        self.tool = tool
        layout = QtWidgets.QGridLayout(self)
        layout.setContentsMargins(0, 2, 0, 2)
        layout.setHorizontalSpacing(6)
        layout.setVerticalSpacing(0)
        self.switch = QtWidgets.QCheckBox(tool.title)
        self.switch.setChecked(True)
        self.switch.setToolTip(tool.summary)
        self.switch.setStyleSheet("font-weight: 600;")
        self.result = QtWidgets.QLabel("")
        self.result.setTextFormat(QtCore.Qt.TextFormat.PlainText)
        self.result.setWordWrap(True)
        self.detail = QtWidgets.QLabel("")
        self.detail.setTextFormat(QtCore.Qt.TextFormat.PlainText)
        self.detail.setWordWrap(True)
        self.detail.setObjectName("caution")  # the muted small text
        layout.addWidget(self.switch, 0, 0, QtCore.Qt.AlignmentFlag.AlignTop)
        layout.addWidget(self.result, 0, 1)
        # the secondary line starts under the step's name and takes the whole width
        indent = self.style().pixelMetric(QtWidgets.QStyle.PixelMetric.PM_IndicatorWidth) + 6
        self.detail.setContentsMargins(indent, 0, 0, 0)
        layout.addWidget(self.detail, 1, 0, 1, 2)
        layout.setColumnStretch(1, 1)

    def set_words(self, text: str, detail: str) -> None:
        self.result.setText(text)
        self.detail.setText(detail)
        self.detail.setVisible(bool(detail))


class CleanUpPanel(QtWidgets.QWidget):
    """The steps of a Clean up and what they did.

    Signals
    -------
    steps_changed() : a step was switched on or off (the window works the clean up out again).
    preview_requested() : Preview pressed.
    apply_requested(), discard_requested() : keep or drop the shown result.
    """

    steps_changed = QtCore.Signal()
    preview_requested = QtCore.Signal()
    apply_requested = QtCore.Signal()
    discard_requested = QtCore.Signal()

    def __init__(self, parent=None) -> None:
        super().__init__(parent)
        self.setObjectName("panelBody")
        self.units: UnitSystem = METRIC
        self.rows: dict[str, StepRow] = {}
        outer = QtWidgets.QVBoxLayout(self)
        outer.setContentsMargins(8, 8, 8, 8)
        intro = QtWidgets.QLabel(INTRO)
        intro.setWordWrap(True)
        intro.setObjectName("caution")
        outer.addWidget(intro)
        # a plain list, no frame: on a 720-pixel screen every row counts
        self.steps_box = QtWidgets.QWidget()
        self.steps_box.setObjectName("panelBody")
        self.steps_layout = QtWidgets.QVBoxLayout(self.steps_box)
        self.steps_layout.setContentsMargins(0, 0, 0, 0)
        self.steps_layout.setSpacing(4)
        body = QtWidgets.QWidget()
        body.setObjectName("panelBody")
        body_layout = QtWidgets.QVBoxLayout(body)
        body_layout.setContentsMargins(0, 0, 0, 0)
        body_layout.addWidget(self.steps_box)
        self.activity = QtWidgets.QLabel("")
        self.activity.setTextFormat(QtCore.Qt.TextFormat.PlainText)
        self.activity.setWordWrap(True)
        body_layout.addWidget(self.activity)
        body_layout.addStretch(1)
        # the list scrolls on a short screen; the buttons stay in view
        outer.addWidget(SteadyScrollArea(body), 1)
        # where the result is shown, the caution is shown
        self.caution = QtWidgets.QLabel(CAUTION)
        self.caution.setWordWrap(True)
        self.caution.setObjectName("caution")
        outer.addWidget(self.caution)
        buttons = QtWidgets.QHBoxLayout()
        self.preview_button = QtWidgets.QPushButton("&Preview")
        self.apply_button = QtWidgets.QPushButton("&Apply")
        self.apply_button.setObjectName("primary")
        self.discard_button = QtWidgets.QPushButton("&Discard")
        self.preview_button.clicked.connect(self.preview_requested)
        self.apply_button.clicked.connect(self.apply_requested)
        self.discard_button.clicked.connect(self.discard_requested)
        for button in (self.preview_button, self.apply_button, self.discard_button):
            buttons.addWidget(button)
        outer.addLayout(buttons)
        self.status = QtWidgets.QLabel("")
        self.status.setTextFormat(QtCore.Qt.TextFormat.PlainText)  # may quote an error about the file
        self.status.setWordWrap(True)
        outer.addWidget(self.status)
        self.set_has_result(False)
        self.set_status("Preview works out the clean up of the whole shown track.")

    def set_steps(self, tools: list[ToolDescriptor]) -> None:
        """Offer these steps (in order); a step already offered keeps its switch."""
        if [t.key for t in tools] == list(self.rows):
            return
        switched_off = self.switched_off()
        for row in self.rows.values():
            self.steps_layout.removeWidget(row)
            row.deleteLater()
        self.rows = {}
        for tool in tools:
            row = StepRow(tool)
            row.switch.setChecked(tool.key not in switched_off)
            row.switch.toggled.connect(lambda _on: self.steps_changed.emit())
            self.steps_layout.addWidget(row)
            self.rows[tool.key] = row

    def switched_off(self) -> frozenset[str]:
        """The keys of the steps the user switched off."""
        return frozenset(key for key, row in self.rows.items() if not row.switch.isChecked())

    def show_result(self, result: CleanUpResult) -> None:
        """Say what each step did, and with which activity."""
        for outcome in result.steps:
            row = self.rows.get(outcome.tool.key)
            if row is not None:
                words = describe(outcome, self.units)
                row.set_words(words.text, words.detail)
        if result.activity:
            self.activity.setText(f"Limits for spikes and stops: {result.activity} (from the track's speeds).")
        proposal = result.proposal
        noop = proposal.is_noop()
        self.set_has_result(True, applicable=not noop)
        if noop:
            self.status.setText("Nothing to apply: the switched-on steps change nothing.")
        else:
            parts = [f"{int(proposal.changed.sum()):,} points moved"]
            if len(proposal.removed):
                parts.append(f"{len(proposal.removed):,} removed")
            if len(proposal.inserted):
                parts.append(f"{len(proposal.inserted):,} added")
            self.status.setText("Together: " + ", ".join(parts) + ".")

    def set_working(self) -> None:
        self.status.setText("Working out the clean up…")

    def set_status(self, text: str) -> None:
        self.status.setText(text)

    def set_has_result(self, has_result: bool, applicable: bool = True) -> None:
        """Enable Apply for a shown result that changes something, Discard for any shown result."""
        self.apply_button.setEnabled(has_result and applicable)
        self.discard_button.setEnabled(has_result)

    def clear_words(self) -> None:
        for row in self.rows.values():
            row.set_words("", "")


__all__ = ["CleanUpPanel", "StepRow"]
