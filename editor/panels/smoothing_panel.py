"""The smoothing panel: strength per axis group, and an automatic estimate from the track itself."""
from __future__ import annotations

import math

from PySide6 import QtCore, QtWidgets

from ..processing.descriptor import ToolDescriptor
from .tool_panel import ToolPanel


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
        self.estimate_button.setToolTip("Find the strengths under which the recording is most likely "
                                        "(maximum likelihood); runs in the background and can be cancelled.")
        self.estimate_button.clicked.connect(self.estimate_requested)
        self.extra_row.addWidget(self.estimate_button)

    def set_estimate(self, estimate) -> None:
        """Show an estimate's strengths in the controls and ask for a preview with them."""
        for name in ("horizontal_strength", "vertical_strength"):
            control = self.controls.get(name)
            value = getattr(estimate, name, None)
            if control is not None and value is not None and math.isfinite(value):
                control.set_value(round(float(value)))
        h = getattr(estimate, "horizontal_strength", float("nan"))
        v = getattr(estimate, "vertical_strength", float("nan"))
        self.set_status(f"Estimated strengths: horizontal {h:.0f}, elevation {v:.0f}.")
        self.preview_requested.emit(True)
