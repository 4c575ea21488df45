"""Issue 9, item 9: tool settings are labelled and explained for a rider, not a statistician.

Walks every settings widget of every tool tab of the real window: each has a label and a tooltip that
says what it does and when to change it, names the unit it shows, and carries no programmer markup;
the names of published methods stay out of the labels and appear on a secondary line. The checker is
also run on the texts the panels showed before (quoted from the old descriptors and docstrings), to
show that it fails on them.
"""
from __future__ import annotations

import re
from dataclasses import replace

import pytest
from PySide6 import QtWidgets

from editor.panels.tool_panel import ToolPanel
from editor.processing.tools import TOOLS
from editor.units import UNIT_WORDS

#: Programmer traces that must never reach a label or a tooltip.
MARKUP = (
    ("`", "reST backtick"), (":func:", "reST role"), (":mod:", "reST role"), (":data:", "reST role"),
    (":class:", "reST role"), ("module notes", "pointer into the code"), ("see :", "pointer into the code"),
    ("datasheet", "sensor datasheet"), ("BMP280", "sensor datasheet"), ("sqrt", "formula"), ("^2", "formula"),
)
#: A code name (snake_case identifier) or Python's None as a word.
CODE_WORD = re.compile(r"\b[a-z]+_[a-z0-9_]+\b|\bNone\b")
#: Greek letters and symbols of statistics are for the secondary "Method:" line at most.
STATISTICS = re.compile(r"[σμχ²]|\bsigma\b|\bchi\b", re.IGNORECASE)
#: Words that tell the rider when to change a setting.
WHEN = re.compile(r"\b(raise|lower|tick|untick|leave|choose|set it)\b", re.IGNORECASE)
#: Published methods: named on a secondary line, never as a label.
METHODS = ("Kalman", "Rauch", "Douglas", "Peucker", "Visvalingam", "Whyatt", "likelihood", "chi-square")


def problems(label: str, tooltip: str, suffix: str = "", shown_unit: str = "") -> list[str]:
    """What is wrong with one setting's words (an empty list: nothing)."""
    found = []
    if not tooltip.strip():
        return ["empty tooltip"]
    text = tooltip.split("\nMethod:")[0]  # the secondary line may name the method and the statistic
    for needle, why in MARKUP:
        if needle.lower() in (label + " " + tooltip).lower():
            found.append(f"{why}: {needle!r}")
    if CODE_WORD.search(label + " " + text):
        found.append(f"code name: {CODE_WORD.search(label + ' ' + text).group()!r}")
    if STATISTICS.search(label + " " + suffix.replace("m²", "").replace("ft²", "")):
        found.append("statistics symbol in the label or unit")
    if any(method.lower() in label.lower() for method in METHODS):
        found.append("method name as the label")
    if not WHEN.search(" ".join(text.split())):
        found.append("does not say when to change it")
    if shown_unit in UNIT_WORDS and UNIT_WORDS[shown_unit] not in tooltip:
        found.append(f"does not name its unit {shown_unit!r}")
    return found


def settings_of(panel: ToolPanel):
    """(label text, label widget, control) of every setting in a panel, read from its form layouts."""
    out = []
    for form in panel.findChildren(QtWidgets.QFormLayout):
        for row in range(form.rowCount()):
            label_item = form.itemAt(row, QtWidgets.QFormLayout.ItemRole.LabelRole)
            field_item = form.itemAt(row, QtWidgets.QFormLayout.ItemRole.FieldRole)
            if label_item is None or field_item is None or label_item.widget() is None:
                continue
            control = field_item.widget()
            if control in panel.controls.values():
                out.append((label_item.widget().text().rstrip(":"), label_item.widget(), control))
    return out


def test_every_setting_of_every_tool_is_explained_in_rider_words(window, qtbot):
    seen = 0
    report = {}
    for panel in window.tool_dock.panels:
        window.tool_dock.show_panel(panel)
        rows = settings_of(panel)
        assert len(rows) == len(panel.controls), panel.tool.key  # every control sits in a labelled row
        for text, label, control in rows:
            seen += 1
            suffix = control.editor.suffix() if hasattr(control.editor, "suffix") else ""
            found = problems(text, control.toolTip(), suffix, control.shown_unit)
            assert label.toolTip() == control.toolTip()  # the label explains the same as its box
            if isinstance(control.editor, QtWidgets.QComboBox):  # choices are words, methods named aside
                for i in range(control.editor.count()):
                    item = control.editor.itemText(i)
                    if any(m.lower() in item.lower() for m in METHODS):
                        found.append(f"method name as a choice: {item!r}")
            if found:
                report[f"{panel.tool.key}.{control.name} ({text})"] = found
    assert seen >= 43  # the issue counted 43 settings
    assert not report, report


def test_the_checker_fails_on_the_old_words():
    # Labels and tooltips as the panels showed them before (quoted verbatim from the old descriptors
    # and parameter docstrings): every one must be caught.
    old = [
        ("Position noise σ", "5.0 m, standard deviation of one horizontal coordinate.", " m", "m"),
        ("Position strength", "0..100, or ``None`` for automatic (maximum likelihood). See "
         ":data:`STRENGTH_LOG10_Q` and :func:`strength_to_q`.", "", ""),
        ("Elevation noise σ", "10.0 m. Barometric loggers are near 1 m (BMP280 datasheet: +-0.12 hPa = +-1 m): "
         "use ``estimate_noise`` for them.", " m", "m"),
        ("Gate confidence", "chi-square confidence of the innovation gate (default 0.999, see module notes).",
         "", ""),
        ("Noise allowance", "the speed test forgives this many sigmas (times sqrt 2) per step.", " σ", ""),
        ("Rounds", "most rounds of the robust stage.", "", ""),
        ("Check fixes after signal loss", "run the catch-up test after signal-loss gaps (module notes, test 2).",
         "", ""),
        ("… for the first", "seconds after a gap in which a catch-up is looked for (see "
         ":mod:`editor.processing.catch_up` for why the window is short).", " s", "s"),
        ("Least position σ", "floor of the estimate, 2 m.", " m", "m"),
        ("Method", "``\"rdp\"`` (Ramer-Douglas-Peucker, default) or ``\"vw\"`` (Visvalingam-Whyatt).", "", ""),
        ("Area (VW)", "", " m²", "m²"),
    ]
    for label, tooltip, suffix, unit in old:
        assert problems(label, tooltip, suffix, unit), label


def test_a_tool_without_rider_tips_is_caught(window, qtbot):
    # The smoothing tool as it was: no tips, so its tooltips come from the docstring (markup removed,
    # but "None", a datasheet and code names remain) and its labels carry σ.
    fields = {name: replace(spec, tip="", label=spec.label and spec.label.replace("scatter", "noise σ"))
              for name, spec in TOOLS["smooth"].fields.items()}
    panel = ToolPanel(replace(TOOLS["smooth"], fields=fields))
    qtbot.addWidget(panel)
    caught = {control.name: problems(text, control.toolTip(), control.editor.suffix()
                                     if hasattr(control.editor, "suffix") else "", control.shown_unit)
              for text, _label, control in settings_of(panel)}
    assert all(caught.values()), caught


def test_one_name_per_setting_across_tools_and_the_command_line(window, capsys):
    labels: dict[str, set[str]] = {}
    for panel in window.tool_dock.panels:
        for name, control in panel.controls.items():
            labels.setdefault(name, set()).add(control.label_text)
    for shared in ("horizontal_sigma_m", "vertical_sigma_m", "activity"):
        assert len(labels[shared]) == 1, (shared, labels[shared])
    assert labels["horizontal_sigma_m"] == {"Position scatter"}
    assert labels["vertical_sigma_m"] == {"Elevation scatter"}
    # clean --help describes the same settings in the panels' words (its option names do not change)
    from editor.cli.entry import main

    with pytest.raises(SystemExit):
        main(["clean", "--help"])
    text = " ".join(capsys.readouterr().out.split()).lower()
    for name in ("max_gap_s", "tolerance_m", "vertical_tolerance_m"):
        (label,) = labels[name]
        assert label.lower() in text, label
    assert "--max-gap seconds" in text and "--simplify metres" in text


def test_method_names_stand_on_a_secondary_line(window, qtbot):
    dock = window.tool_dock
    expected = {"smooth": ("Kalman", "Rauch–Tung–Striebel"), "simplify": ("Douglas–Peucker", "Visvalingam–Whyatt")}
    for key, names in expected.items():
        panel = dock.panel(key)
        dock.show_panel(panel)
        qtbot.wait(10)
        assert panel.method_note.isVisible() and panel.method_note.text().startswith("Method: ")
        for name in names:
            assert name in panel.method_note.text()
            assert name in dock.tabToolTip(dock.panels.index(panel)).split("\nMethod:")[1]
            assert name not in panel.tool.summary and name not in panel.tool.title
    # a setting's tooltip names its method on its own last line
    tip = dock.panel("despike").controls["confidence"].toolTip()
    assert tip.splitlines()[-1] == "Method: chi-square innovation gate."
    assert max(len(line) for line in tip.splitlines()) <= 72  # wrapped: Qt does not wrap a plain tooltip


def test_the_legend_explains_the_band_without_symbols(window):
    from editor.panels.legend import ENTRIES, TIPS

    for _kind, text in ENTRIES:
        assert not STATISTICS.search(text) and "1.96" not in text, text
    assert "95 %" in dict(ENTRIES)["band"]
    assert TIPS["band"].splitlines()[-1].startswith("Method: ±1.96 standard deviations")


def test_every_panel_fits_the_tool_docks_first_width(window):
    # 440 px: the tool dock's first width (MainWindow.resizeDocks); longer words must wrap or be cut
    # inside their box, never push the panel past the dock (a long choice once widened it to 522 px)
    for panel in window.tool_dock.panels:
        assert panel.minimumSizeHint().width() <= 440, (panel.tool.key, panel.minimumSizeHint().width())
