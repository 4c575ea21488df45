"""The tabbed tool panels, wired to the window's preview machinery."""
from __future__ import annotations

import numpy as np
from PySide6 import QtCore, QtWidgets

from ..panels.elevation_panel import ElevationPanel
from ..panels.smoothing_panel import SmoothingPanel
from ..panels.specs import ORDER, TOOL_TEXTS, activity_spec
from ..panels.tool_panel import ToolInfo, ToolPanel

#: Where each tool lives, for builds where the ``editor.processing.tools`` registry is absent.
_TOOL_MODULES = (("smooth", "smoothing", "smooth", "SmoothParams", "Smooth track"),
                 ("despike", "spikes", "despike", "SpikeParams", "Remove spikes"),
                 ("fill_gaps", "gaps", "fill_gaps", "GapParams", "Fill gaps"),
                 ("collapse_stops", "stops", "collapse_stops", "StopParams", "Collapse stops"),
                 ("simplify", "simplify", "simplify", "SimplifyParams", "Simplify track"))


def load_tools() -> tuple[dict, object]:
    """``TOOLS`` and ``ACTIVITIES`` of :mod:`editor.processing.tools` (or of the tool modules found)."""
    import importlib

    try:
        from ..processing import tools
        return dict(tools.TOOLS), getattr(tools, "ACTIVITIES", None)
    except ImportError:
        pass
    found = {}
    for key, module_name, function_name, params_name, label in _TOOL_MODULES:
        try:
            module = importlib.import_module(f"editor.processing.{module_name}")
        except ImportError:
            continue
        function, params = getattr(module, function_name, None), getattr(module, params_name, None)
        if function is not None and params is not None:
            found[key] = (function, params, label)
    try:
        from ..processing.activity import ACTIVITIES
    except ImportError:
        ACTIVITIES = None
    return found, ACTIVITIES


def tool_infos(tools: dict, activities) -> list[ToolInfo]:
    """One :class:`ToolInfo` per registered tool, in our tab order."""
    infos = []
    for key, (function, params_class, label) in tools.items():
        title, summary, specs = TOOL_TEXTS.get(function.__name__, (label, label, {}))
        specs = dict(specs)
        specs.setdefault("activity", activity_spec(activities))
        infos.append(ToolInfo(key, title, summary, function, params_class, specs))
    rank = {name: i for i, name in enumerate(ORDER)}
    infos.sort(key=lambda info: rank.get(info.function.__name__, len(ORDER)))
    return infos


class ToolDock(QtWidgets.QTabWidget):
    """One tab per tool; the shown tab owns the preview."""

    def __init__(self, window, tools: dict | None = None, activities=None) -> None:
        super().__init__()
        self.window_ = window
        if tools is None:
            tools, activities = load_tools()
        self.panels: list[ToolPanel] = []
        for info in tool_infos(tools, activities):
            panel = SmoothingPanel(info) if info.function.__name__ == "smooth" else ToolPanel(info)
            panel.preview_requested.connect(lambda immediately, p=panel: self._preview(p, immediately))
            panel.apply_requested.connect(window.apply_preview)
            panel.discard_requested.connect(window.discard_preview)
            if isinstance(panel, SmoothingPanel):
                panel.estimate_requested.connect(lambda p=panel: self.estimate(p))
            scroller = QtWidgets.QScrollArea()
            scroller.setWidgetResizable(True)
            scroller.setFrameShape(QtWidgets.QFrame.Shape.NoFrame)
            scroller.setHorizontalScrollBarPolicy(QtCore.Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
            scroller.setWidget(panel)
            self.addTab(scroller, info.title)
            self.setTabToolTip(self.count() - 1, info.summary)
            self.panels.append(panel)
        if self.panels:  # elevation from terrain: not in the registry, it needs the user's terrain files
            self._add_elevation_panel(window)
        if not self.panels:
            note = QtWidgets.QLabel("The processing tools are not part of this build.")
            note.setWordWrap(True)
            self.addTab(note, "Tools")
        self.currentChanged.connect(lambda _i: window.discard_preview())

    def _add_elevation_panel(self, window) -> None:
        panel = ElevationPanel()
        panel.preview_requested.connect(lambda immediately, p=panel: self._preview(p, immediately))
        panel.apply_requested.connect(window.apply_preview)
        panel.discard_requested.connect(window.discard_preview)
        map_view = getattr(window, "map_view", None)
        if map_view is not None and hasattr(map_view, "set_terrain"):
            panel.terrain_changed.connect(map_view.set_terrain)  # shaded relief of the same terrain
        scroller = QtWidgets.QScrollArea()
        scroller.setWidgetResizable(True)
        scroller.setFrameShape(QtWidgets.QFrame.Shape.NoFrame)
        scroller.setWidget(panel)
        self.addTab(scroller, panel.info.title)
        self.setTabToolTip(self.count() - 1, panel.info.summary)
        self.panels.append(panel)

    def panel(self, name: str) -> ToolPanel | None:
        """The panel of the tool whose function is called ``name`` (``"smooth"``) or whose key is ``name``."""
        for p in self.panels:
            if name in (p.info.name, p.info.function.__name__):
                return p
        return None

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
        self.window_.request_preview(panel.info.function, panel.params(), panel.selection_scope(), immediately)

    def estimate(self, panel: SmoothingPanel) -> None:
        try:
            from ..processing.smoothing import estimate_strength
        except ImportError:
            panel.set_status("The strength estimate is not part of this build.")
            return
        window = self.window_
        snapshot = window.snapshot()
        if snapshot is None:
            return
        rows = window.state.selection.copy() if panel.selection_scope() else None
        params = panel.params()

        def work(progress, cancelled):
            return estimate_strength(snapshot, rows, params=params, progress=progress, cancelled=cancelled)

        panel.set_status("Estimating the strengths…")
        window.start_long_job("Estimating strengths", work, panel.set_estimate)

    # --- window notifications ---------------------------------------------------------------------
    def selection_changed(self, available: bool) -> None:
        for panel in self.panels:
            panel.set_selection_available(available)

    def document_changed(self) -> None:
        # The edit already dropped the old preview; a preview computed on the edited track
        # may have arrived before this redraw and stays applicable.
        has_preview = self.window_.state.preview is not None
        for panel in self.panels:
            panel.set_has_preview(has_preview and panel is self.current_panel())

    def set_status(self, text: str) -> None:
        panel = self.current_panel()
        if panel is not None:
            panel.set_status(text)

    def preview_changed(self, proposal) -> None:
        panel = self.current_panel()
        if panel is None:
            return
        panel.set_has_preview(proposal is not None)
        if proposal is None:
            panel.set_status("")
            return
        changed = int(np.count_nonzero(proposal.changed))
        parts = [f"{changed:,} point(s) moved"]
        if len(proposal.removed):
            parts.append(f"{len(proposal.removed):,} removed")
        if len(proposal.inserted):
            parts.append(f"{len(proposal.inserted):,} added")
        extra = panel.describe(proposal) if hasattr(panel, "describe") else ""
        panel.set_status("Proposal: " + ", ".join(parts) + (f"; {extra}" if extra else "")
                         + ". Apply keeps it; Discard drops it.")
