"""The smoothing panel: strength per axis group, and an automatic estimate from the track itself."""
from __future__ import annotations

import math

from PySide6 import QtCore, QtWidgets

from ..processing.descriptor import ToolDescriptor
from .tool_panel import ToolPanel

#: The strength fields of the smoothing parameters.
STRENGTHS = ("horizontal_strength", "vertical_strength")


class SmoothingPanel(ToolPanel):
    """A :class:`ToolPanel` with an "Estimate from the track" button.

    Signals
    -------
    estimate_requested() : run the maximum-likelihood strength estimate (a long job).
    """

    estimate_requested = QtCore.Signal()

    def __init__(self, tool: ToolDescriptor, parent=None) -> None:
        super().__init__(tool, parent)
        self.estimate_button = QtWidgets.QPushButton("Esti&mate strengths from the track")
        self.estimate_button.setToolTip("Find the strengths that best explain this recording and put them "
                                        "in both boxes, whether “auto” is ticked or not. Runs in the "
                                        "background and can be cancelled.\nMethod: maximum likelihood.")
        self.estimate_button.clicked.connect(self.estimate_requested)
        self.extra_row.addWidget(self.estimate_button)

    def set_estimate(self, estimate) -> None:
        """Set both strengths to an estimate's values (unticking "auto") and ask for a preview with them."""
        for name in STRENGTHS:
            control = self.controls.get(name)
            value = getattr(estimate, name, None)
            if control is not None and value is not None and math.isfinite(value):
                control.show_auto_value(float(value))
                control.set_value(round(float(value)))
        h = getattr(estimate, "horizontal_strength", float("nan"))
        v = getattr(estimate, "vertical_strength", float("nan"))
        self.set_status(f"Estimated strengths: position {h:.0f}, elevation {v:.0f}.")
        self.preview_requested.emit(True)

    def show_proposal(self, proposal) -> None:
        """A strength left on "auto" shows the value the preview used (the estimate), not a dash."""
        for name in STRENGTHS:
            control = self.controls.get(name)
            value = proposal.info.get(name) if proposal is not None else None
            if control is not None and value is not None and math.isfinite(value):
                control.show_auto_value(float(value))
