"""A panel for one processing tool: its controls, the scope, Preview / Apply / Discard.

The panel knows nothing about threads or the document: it turns its controls
into the tool's parameter dataclass and asks the window (through signals) to
preview, apply or discard. Any control change asks for a preview.
"""
from __future__ import annotations

from dataclasses import replace
from typing import Any

from PySide6 import QtCore, QtWidgets

from ..processing.descriptor import ToolDescriptor
from .controls import ParamControl, build_controls
from .specs import panel_specs


class ToolPanel(QtWidgets.QWidget):
    """Controls of one tool.

    Signals
    -------
    preview_requested(bool immediately) : a control changed (debounced by the window) or Preview pressed.
    apply_requested() : commit the previewed proposal.
    discard_requested() : drop the preview.
    """

    preview_requested = QtCore.Signal(bool)
    apply_requested = QtCore.Signal()
    discard_requested = QtCore.Signal()

    def __init__(self, tool: ToolDescriptor, parent=None) -> None:
        super().__init__(parent)
        self.setObjectName("panelBody")
        self.tool = tool
        outer = QtWidgets.QVBoxLayout(self)
        outer.setContentsMargins(8, 8, 8, 8)
        summary = QtWidgets.QLabel(tool.summary)
        summary.setWordWrap(True)
        summary.setObjectName("caution")
        outer.addWidget(summary)
        # the published method, for those who want to look it up: a secondary line, never the label
        self.method_note = QtWidgets.QLabel(f"Method: {tool.method}" if tool.method else "")
        self.method_note.setObjectName("methodNote")
        self.method_note.setWordWrap(True)
        self.method_note.setVisible(bool(tool.method))
        outer.addWidget(self.method_note)
        box = QtWidgets.QGroupBox("Settings")
        self.form = QtWidgets.QFormLayout(box)
        self.form.setFieldGrowthPolicy(QtWidgets.QFormLayout.FieldGrowthPolicy.AllNonFixedFieldsGrow)
        self.controls: dict[str, ParamControl] = {}
        self.labels: dict[str, QtWidgets.QLabel] = {}
        # rarely needed settings wait under a collapsed "More settings" (issue 9, item 11)
        self.more_button = QtWidgets.QToolButton()
        self.more_button.setText("More settings")
        self.more_button.setCheckable(True)
        self.more_button.setToolButtonStyle(QtCore.Qt.ToolButtonStyle.ToolButtonTextBesideIcon)
        self.more_button.setArrowType(QtCore.Qt.ArrowType.RightArrow)
        self.more_box = QtWidgets.QWidget()
        more_form = QtWidgets.QFormLayout(self.more_box)
        more_form.setContentsMargins(0, 0, 0, 0)
        more_form.setFieldGrowthPolicy(QtWidgets.QFormLayout.FieldGrowthPolicy.AllNonFixedFieldsGrow)
        specs = panel_specs(tool)
        for control in build_controls(tool.params, specs):
            self.controls[control.name] = control
            label = QtWidgets.QLabel(control.label_text + ":")
            label.setBuddy(control.editor)
            label.setToolTip(control.toolTip())
            self.labels[control.name] = label
            more = specs.get(control.name)
            (more_form if more is not None and more.more else self.form).addRow(label, control)
            control.changed.connect(lambda: self.preview_requested.emit(False))
            if control.slider is not None:
                # released: the value the user settled on is wanted now, not an older one still running
                control.slider.sliderReleased.connect(lambda: self.preview_requested.emit(True))
        if more_form.rowCount():
            self.form.addRow(self.more_button)
            self.form.addRow(self.more_box)
        self.more_box.setVisible(False)
        self.more_button.setVisible(bool(more_form.rowCount()))
        self.more_button.toggled.connect(self._show_more)
        outer.addWidget(box)
        self.extra_row = QtWidgets.QHBoxLayout()
        outer.addLayout(self.extra_row)
        scope_box = QtWidgets.QGroupBox("Apply to")
        scope_layout = QtWidgets.QHBoxLayout(scope_box)
        self.whole_track = QtWidgets.QRadioButton("&Whole track")
        self.selection_only = QtWidgets.QRadioButton("Se&lection only")
        self.whole_track.setChecked(True)
        self.selection_only.setEnabled(False)
        scope_layout.addWidget(self.whole_track)
        scope_layout.addWidget(self.selection_only)
        self.selection_only.toggled.connect(lambda _on: self.preview_requested.emit(False))
        outer.addWidget(scope_box)
        # the buttons and the status form a footer, which the tool dock keeps in view below the
        # scrolling settings (detach_footer); a panel on its own keeps it in its layout
        self.footer = QtWidgets.QWidget()
        footer_layout = QtWidgets.QVBoxLayout(self.footer)
        footer_layout.setContentsMargins(0, 0, 0, 0)
        buttons = QtWidgets.QHBoxLayout()
        self.preview_button = QtWidgets.QPushButton("&Preview")
        self.apply_button = QtWidgets.QPushButton("&Apply")
        self.apply_button.setObjectName("primary")
        self.discard_button = QtWidgets.QPushButton("&Discard")
        self.preview_button.clicked.connect(lambda: self.preview_requested.emit(True))
        self.apply_button.clicked.connect(self.apply_requested)
        self.discard_button.clicked.connect(self.discard_requested)
        for b in (self.preview_button, self.apply_button, self.discard_button):
            buttons.addWidget(b)
        footer_layout.addLayout(buttons)
        self.status = QtWidgets.QLabel("")
        self.status.setTextFormat(QtCore.Qt.TextFormat.PlainText)  # may quote an error about the file
        self.status.setWordWrap(True)
        footer_layout.addWidget(self.status)
        outer.addWidget(self.footer)
        outer.addStretch(1)
        self.set_has_preview(False)

    def _show_more(self, shown: bool) -> None:
        self.more_box.setVisible(shown)
        self.more_button.setArrowType(QtCore.Qt.ArrowType.DownArrow if shown else QtCore.Qt.ArrowType.RightArrow)

    def set_units(self, units) -> None:
        """Show lengths, areas and speeds in ``units`` (an :class:`editor.units.UnitSystem`); the
        parameters the tool receives stay in SI units."""
        for name, control in self.controls.items():
            control.set_units(units)
            self.labels[name].setToolTip(control.toolTip())

    def detach_footer(self) -> QtWidgets.QWidget:
        """Take Preview / Apply / Discard and the status out of the panel, for the caller to place
        where they stay visible however far the settings scroll."""
        self.layout().removeWidget(self.footer)
        return self.footer

    def params(self) -> Any:
        """The tool's parameters as the controls show them (other fields at their defaults)."""
        values = {name: control.value() for name, control in self.controls.items()}
        return replace(self.tool.params(), **values)

    def set_selection_available(self, available: bool) -> None:
        self.selection_only.setEnabled(available)
        if not available and self.selection_only.isChecked():
            self.whole_track.setChecked(True)

    def selection_scope(self) -> bool:
        """Whether the tool should act on the selection only."""
        return self.selection_only.isChecked() and self.selection_only.isEnabled()

    def set_has_preview(self, has_preview: bool, applicable: bool = True) -> None:
        """Enable Apply for a preview that changes something (``applicable``) and Discard for any preview."""
        self.apply_button.setEnabled(has_preview and applicable)
        self.discard_button.setEnabled(has_preview)

    def show_proposal(self, proposal) -> None:
        """Reflect a new preview in the controls (e.g. what "auto" chose); nothing by default."""

    def set_status(self, text: str) -> None:
        self.status.setText(text)
