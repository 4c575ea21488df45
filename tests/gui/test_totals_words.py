"""Issue 9, item 12: the totals' changes use one minus sign, thousands separators and plurals."""
from __future__ import annotations

from dataclasses import replace

from editor.panels.totals_panel import TotalsPanel
from editor.processing.stats import Totals


def test_changes_read_with_a_true_minus_and_separators(qtbot):
    panel = TotalsPanel()
    qtbot.addWidget(panel)
    before = replace(Totals(), distance_m=42_250.0, ascent_m=786.0, points=5_609)
    after = replace(before, distance_m=39_790.0, ascent_m=900.0, points=4_100)
    panel.set_totals(before, after)
    distance = panel.cells["Distance"][2].text()
    ascent = panel.cells["Ascent"][2].text()
    points = panel.cells["Points"][2].text()
    assert distance == "\u22122.46 km (\u22126 %)" and "-" not in distance
    assert ascent == "+114 m (+15 %)"
    assert points.startswith("\u22121,509")
