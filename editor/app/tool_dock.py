"""The tabbed tool panels, wired to the window's preview machinery."""
from __future__ import annotations

from dataclasses import replace

import numpy as np
from PySide6 import QtWidgets

from ..panels.controls import tooltip_lines
from ..panels.elevation_panel import ElevationPanel
from ..panels.smoothing_panel import SmoothingPanel
from ..panels.tool_panel import ToolPanel
from ..processing.clean_up import CLEAN_UP_KEY
from ..processing.proposal import PlaceNote
from ..processing.smoothing import estimate_strength
from ..units import METRIC, UnitSystem
from ..processing.tools import TOOLS
from ..panels.scrolling import SteadyScrollArea

#: The panel class for each descriptor's ``panel`` kind.
PANEL_KINDS: dict[str, type[ToolPanel]] = {"standard": ToolPanel, "strength": SmoothingPanel,
                                           "terrain": ElevationPanel}


class ToolDock(QtWidgets.QTabWidget):
    """One tab per tool; the shown tab owns the preview."""

    def __init__(self, window) -> None:
        super().__init__()
        self.window_ = window
        self.panels: list[ToolPanel] = []
        for tool in TOOLS.values():
            panel = PANEL_KINDS[tool.panel](tool)
            panel.preview_requested.connect(lambda immediately, p=panel: self._preview(p, immediately))
            panel.apply_requested.connect(window.previews.apply_preview)
            panel.discard_requested.connect(window.previews.discard_preview)
            if isinstance(panel, SmoothingPanel):
                panel.estimate_requested.connect(lambda p=panel: self.estimate(p))
            if isinstance(panel, ElevationPanel):
                panel.terrain_changed.connect(window.terrain_chosen)  # shaded relief of the same terrain
            scroller = SteadyScrollArea(panel)
            page = QtWidgets.QWidget()  # settings scroll; Preview / Apply / Discard stay in view below
            page_layout = QtWidgets.QVBoxLayout(page)
            page_layout.setContentsMargins(0, 0, 0, 0)
            page_layout.addWidget(scroller, 1)
            footer = panel.detach_footer()
            footer.setContentsMargins(8, 4, 8, 8)
            page_layout.addWidget(footer)
            self.addTab(page, tool.title)
            self.setTabToolTip(self.count() - 1,
                               tooltip_lines(tool.summary, f"Method: {tool.method}." if tool.method else ""))
            self.panels.append(panel)
        self.currentChanged.connect(lambda _i: window.previews.discard_preview())

    def panel(self, key: str) -> ToolPanel | None:
        """The panel of the tool registered as ``key`` (``"smooth"``)."""
        return next((p for p in self.panels if p.tool.key == key), None)

    def set_units(self, units) -> None:
        """Every panel shows its settings in ``units`` (View ▸ Units), and the preview's status too."""
        for panel in self.panels:
            panel.set_units(units)
        preview = self.window_.state.preview
        if preview is not None:
            self.preview_changed(preview)

    def current_panel(self) -> ToolPanel | None:
        i = self.currentIndex()
        return self.panels[i] if 0 <= i < len(self.panels) else None

    def show_panel(self, panel: ToolPanel) -> None:
        self.setCurrentIndex(self.panels.index(panel))
        first = next(iter(panel.controls.values()), None)
        (first.editor if first else panel.preview_button).setFocus()

    def _preview(self, panel: ToolPanel, immediately: bool) -> None:
        if panel is not self.current_panel():
            return
        self.window_.previews.request_preview(panel.tool, panel.params(), panel.selection_scope(), immediately)

    def estimate(self, panel: SmoothingPanel) -> None:
        window = self.window_
        snapshot = window.session.snapshot()
        if snapshot is None:
            return
        rows = window.state.selection.copy() if panel.selection_scope() else None
        # "Estimate" always estimates both strengths, whatever the boxes hold
        params = replace(panel.params(), horizontal_strength=None, vertical_strength=None)

        def work(progress, cancelled):
            return estimate_strength(snapshot, rows, params=params, progress=progress, cancelled=cancelled)

        panel.set_status("Estimating the strengths…")
        window.previews.start_long_job("Estimating strengths", work, panel.set_estimate)

    # --- window notifications ---------------------------------------------------------------------
    def selection_changed(self, available: bool) -> None:
        for panel in self.panels:
            panel.set_selection_available(available)

    def document_changed(self) -> None:
        # The edit already dropped the old preview; a preview computed on the edited track
        # may have arrived before this redraw and stays applicable.
        preview = self.window_.state.preview
        for panel in self.panels:
            own = preview is not None and panel is self.current_panel() and preview.tool != CLEAN_UP_KEY
            panel.set_has_preview(own,
                                  applicable=preview is not None and not preview.is_noop())

    def set_status(self, text: str) -> None:
        panel = self.current_panel()
        if panel is not None:
            panel.set_status(text)

    def preview_changed(self, proposal) -> None:
        panel = self.current_panel()
        if panel is None:
            return
        if proposal is not None and proposal.tool == CLEAN_UP_KEY:
            proposal = None  # the Clean up dock's preview: no tool panel's
        if proposal is None:
            panel.set_has_preview(False)
            panel.set_status("")
            return
        panel.show_proposal(proposal)
        noop = proposal.is_noop()
        panel.set_has_preview(True, applicable=not noop)
        extra = panel.describe(proposal) if isinstance(panel, ElevationPanel) else ""
        panel.set_status(proposal_status(proposal, noop, extra, units=self.window_.units))


def _count(n: int, word: str) -> str:
    return f"{n:,} {word}{'' if n == 1 else 's'}"


def proposal_status(proposal, noop: bool, extra: str = "", units: UnitSystem = METRIC) -> str:
    """What a preview does, for the panel: counts, or that it changes nothing; and what was left alone
    (places along the track in ``units``). ``extra``: what the panel adds (the terrain's coverage)."""
    notes = [n.in_units(units.long) if isinstance(n, PlaceNote) else str(n) for n in proposal.info.get("notes", ())]
    left = (" Left alone: " + "; ".join(notes) + ".") if notes else ""
    if noop:
        return "Nothing to apply: with these settings the tool changes nothing." + left
    changed = int(np.count_nonzero(proposal.changed))
    parts = [_count(changed, "point") + " moved"]
    if len(proposal.removed):
        parts.append(f"{len(proposal.removed):,} removed")
    if len(proposal.inserted):
        parts.append(f"{len(proposal.inserted):,} added")
    return ("Proposal: " + ", ".join(parts) + (f"; {extra}" if extra else "") + ". Apply keeps it; Discard drops it."
            + left)
