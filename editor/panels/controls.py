"""Controls built from a tool's parameter dataclass.

Each numeric, boolean or choice field of the parameters becomes one control;
its label, range and tooltip come from :class:`ControlSpec` when the panel gives one,
otherwise from the field's name and unit suffix (``_m`` metres, ``_s`` seconds,
``_mps`` metres per second) and, for the tooltip, the dataclass's numpydoc
``Attributes`` section with its markup taken out. Values are kept in the tool's
own SI units; a number box shows them in the chosen units (``set_units``), so
switching between metric and imperial never changes the stored value.
"""
from __future__ import annotations

import dataclasses
import math
import re
import textwrap
from typing import Any

from PySide6 import QtCore, QtWidgets

from ..processing.descriptor import ControlSpec
from ..units import METRIC, UNIT_WORDS, UnitSystem

UNIT_SUFFIXES = (("_m2", "m²"), ("_mps", "m/s"), ("_m", "m"), ("_s", "s"), ("_deg", "°"), ("_pct", "%"))


def field_docs(cls: type) -> dict[str, str]:
    """Per-attribute text from a numpydoc ``Attributes`` section (``name : text`` lines)."""
    doc = cls.__doc__ or ""
    out: dict[str, str] = {}
    current: list[str] | None = None
    in_section = False
    for line in doc.splitlines():
        stripped = line.strip()
        if stripped == "Attributes":
            in_section = True
            continue
        if not in_section or set(stripped) == {"-"}:
            continue
        m = re.match(r"^([a-z_][a-z0-9_]*(?:\s*,\s*[a-z_][a-z0-9_]*)*)\s*:\s*(.*)$", stripped)
        if m and line.startswith("    ") and not line.startswith("        "):
            current = [m.group(2)]
            for name in re.split(r"\s*,\s*", m.group(1)):
                out[name] = current  # type: ignore[assignment]
        elif current is not None and stripped:
            current.append(stripped)
        elif not stripped and current is not None:
            current = None
    return {k: " ".join(v) for k, v in out.items()}


def plain_text(doc: str) -> str:
    """A docstring fragment without reST markup: ``x`` and :role:`x` become x."""
    text = re.sub(r":[a-z]+:`~?([^`]*)`", r"\1", doc)
    return text.replace("``", "").replace("`", "")


def tooltip_lines(*paragraphs: str, width: int = 72) -> str:
    """Paragraphs as a plain-text tooltip, each wrapped (Qt shows a plain tooltip's lines as they are,
    so an unwrapped sentence would stretch across the screen)."""
    return "\n".join(textwrap.fill(p, width) for p in paragraphs if p)


def nice_step(step: float) -> float:
    """The 1, 2 or 5 × 10^k nearest to ``step`` (on a log scale): a converted step a rider can count in."""
    if not (step > 0 and math.isfinite(step)):
        return 1.0
    exponent = math.floor(math.log10(step))
    base = 10.0 ** exponent
    candidates = [c * base for c in (1.0, 2.0, 5.0, 10.0)]
    return min(candidates, key=lambda c: abs(math.log10(c / step)))


class TidySpinBox(QtWidgets.QDoubleSpinBox):
    """A number box without trailing zeros: "99.9 %" and "16.4 ft", not "99.9000 %" and "5.0 m"."""

    def textFromValue(self, value: float) -> str:  # noqa: N802 (Qt override)
        text = super().textFromValue(value)
        point = self.locale().decimalPoint()
        if point and point in text:
            text = text.rstrip("0").rstrip(point)
        return text


def _decimals_for(value: Any) -> int:
    """Enough decimals (2 to 6) to show ``value`` exactly."""
    if not isinstance(value, float):
        return 2
    for decimals in range(2, 7):
        if abs(round(value, decimals) - value) < 1e-12:
            return decimals
    return 6


def default_label(name: str) -> tuple[str, str]:
    """``"min_duration_s"`` → ``("Min duration", "s")``."""
    suffix = ""
    for ending, unit in UNIT_SUFFIXES:
        if name.endswith(ending):
            name, suffix = name[: -len(ending)], unit
            break
    words = name.replace("_", " ").strip()
    return words[:1].upper() + words[1:], suffix


class ParamControl(QtWidgets.QWidget):
    """One field's control. ``changed`` fires on every user change.

    A number keeps its value in the tool's stored unit (``stored_unit``: m, m², m/s, s ...); the
    box shows it in the chosen units (:meth:`set_units`) times the spec's ``scale``.
    """

    changed = QtCore.Signal()

    def __init__(self, name: str, default: Any, type_text: str, spec: ControlSpec, help_text: str,
                 parent=None) -> None:
        super().__init__(parent)
        self.name = name
        self.default = default
        self.spec = spec
        self.optional = default is None or "None" in type_text
        label, unit = default_label(name)
        self.label_text = spec.label or label
        self.stored_unit = spec.suffix if spec.suffix is not None else unit
        self.tip = spec.tip or plain_text(help_text)
        self.units: UnitSystem = METRIC
        self.shown_unit = self.stored_unit
        self._per_shown = 1.0  # stored units in one shown unit
        layout = QtWidgets.QHBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        self.auto_box: QtWidgets.QCheckBox | None = None
        self.slider: QtWidgets.QSlider | None = None
        self.auto_text = spec.auto_text
        self._auto_value: float | None = None   # what the tool chose for "auto" (stored unit), once known
        self._stored_value: float = 0.0         # the number, in the stored unit; the box only shows it
        self._showing_auto = False
        self.kind = self._kind(default, type_text, spec)
        if self.kind == "choice":
            self.editor = QtWidgets.QComboBox()
            # a long choice ("combine if the track has heights, else replace") must not widen the
            # whole panel past its dock: the box shows what fits, its list shows every word
            self.editor.setSizeAdjustPolicy(
                QtWidgets.QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon)
            self.editor.setMinimumContentsLength(14)
            for choice in spec.choices or ():
                value, text = choice if isinstance(choice, tuple) else (choice, str(choice))
                self.editor.addItem(text, value)
            index = self.editor.findData(default)
            self.editor.setCurrentIndex(max(index, 0))
            self.editor.currentIndexChanged.connect(self.changed)
        elif self.kind == "bool":
            self.editor = QtWidgets.QCheckBox()
            self.editor.setChecked(bool(default))
            self.editor.toggled.connect(self.changed)
        else:
            is_int = self.kind == "int"
            self.editor = QtWidgets.QSpinBox() if is_int else TidySpinBox()
            lo = spec.minimum if spec.minimum is not None else 0.0
            hi = spec.maximum if spec.maximum is not None else 1_000_000.0
            if not is_int:
                self.editor.setDecimals(spec.decimals if spec.decimals is not None
                                        else _decimals_for(default * spec.scale if default is not None else 0.0))
            start = default if isinstance(default, (int, float)) and not isinstance(default, bool) else lo
            self._stored_value = float(start)
            self._show_in_units(METRIC)
            self.editor.setKeyboardTracking(False)
            self.editor.valueChanged.connect(self._spin_changed)
            if spec.slider:
                self.slider = QtWidgets.QSlider(QtCore.Qt.Orientation.Horizontal)
                self.slider.setRange(int(lo), int(hi))
                self.slider.setValue(int(round(start)))
                self.slider.setAccessibleName(self.label_text)
                self.slider.valueChanged.connect(self._slider_changed)
                layout.addWidget(self.slider, 1)
            self.editor.setMinimumWidth(84)
        layout.addWidget(self.editor, 0 if self.slider else 1)
        if self.optional and self.kind in ("float", "int"):
            self.auto_box = QtWidgets.QCheckBox(spec.auto_text)
            self.auto_box.setChecked(default is None)
            self.auto_box.toggled.connect(self._auto_toggled)
            layout.addWidget(self.auto_box)
            self._auto_toggled(default is None, emit=False)
        self.editor.setAccessibleName(self.label_text)
        self.setToolTip(self.tooltip_text())

    @staticmethod
    def _kind(default: Any, type_text: str, spec: ControlSpec) -> str:
        if spec.choices:
            return "choice"
        if isinstance(default, bool) or type_text.strip() == "bool":
            return "bool"
        if isinstance(default, int) or re.fullmatch(r"\s*int(\s*\|\s*None)?\s*", type_text or ""):
            return "int"
        return "float"

    def tooltip_text(self) -> str:
        """What the setting does and when to change it, the unit it is shown in, and its method."""
        lines = [self.tip or self.label_text]
        if self.shown_unit in UNIT_WORDS:
            lines.append(f"Unit: {UNIT_WORDS[self.shown_unit]} ({self.shown_unit}).")
        if self.spec.method:
            lines.append(f"Method: {self.spec.method}.")
        return tooltip_lines(*lines)

    # --- units ------------------------------------------------------------------------------------
    def set_units(self, units: UnitSystem) -> None:
        """Show the number in ``units`` (metric or imperial); the stored value does not change."""
        self.units = units
        if self.kind in ("float", "int"):
            self._show_in_units(units)
        self.setToolTip(self.tooltip_text())

    def _show_in_units(self, units: UnitSystem) -> None:
        size, name = units.setting_unit(self.stored_unit)
        self.shown_unit = name
        self._per_shown = size / self.spec.scale
        spec, is_int = self.spec, self.kind == "int"
        lo = spec.minimum if spec.minimum is not None else 0.0
        hi = spec.maximum if spec.maximum is not None else 1_000_000.0
        step = spec.step if spec.step is not None else 1.0
        if self._per_shown != 1.0:  # a converted step is rounded to one a rider can count in
            step = nice_step(step / self._per_shown)
        blocker = QtCore.QSignalBlocker(self.editor)
        if is_int:
            self.editor.setRange(int(round(lo / self._per_shown)), int(round(hi / self._per_shown)))
            self.editor.setSingleStep(max(1, int(round(step))))
        else:
            self.editor.setRange(lo / self._per_shown, hi / self._per_shown)
            self.editor.setSingleStep(step)
        self.editor.setSuffix(f" {name}" if name else "")
        if self._showing_auto and self._auto_value is None:
            self.editor.setValue(self.editor.minimum())
        else:
            self._show_number(self._auto_value if self._showing_auto else self._stored_value)
        del blocker

    # --- user changes -----------------------------------------------------------------------------
    def _spin_changed(self, value) -> None:
        self._stored_value = float(value) * self._per_shown
        if self.slider is not None and int(round(value)) != self.slider.value():
            self.slider.blockSignals(True)
            self.slider.setValue(int(round(value)))
            self.slider.blockSignals(False)
        self.changed.emit()

    def _slider_changed(self, value: int) -> None:
        self.editor.setValue(value)  # emits through _spin_changed

    def _auto_toggled(self, auto: bool, emit: bool = True) -> None:
        # While "auto" is ticked the box and slider show the value the tool found (show_auto_value),
        # or "auto" until it has run; unticking keeps the value shown, so nothing jumps.
        if isinstance(self.editor, (QtWidgets.QSpinBox, QtWidgets.QDoubleSpinBox)):
            blockers = [QtCore.QSignalBlocker(w) for w in (self.editor, self.slider) if w]
            if auto:
                self._showing_auto = True
                if self._auto_value is not None:
                    self._show_number(self._auto_value)
                else:
                    self.editor.setSpecialValueText(self.auto_text)
                    self.editor.setValue(self.editor.minimum())
            else:
                self.editor.setSpecialValueText("")
                if self._showing_auto:
                    if self._auto_value is not None:
                        self._stored_value = self._auto_value
                    self._show_number(self._stored_value)
                self._showing_auto = False
                if self.slider is not None:
                    self.slider.setValue(int(round(self.editor.value())))
            del blockers
        self.editor.setEnabled(not auto)
        if self.slider is not None:
            self.slider.setEnabled(not auto)
        if emit:
            self.changed.emit()

    def _show_number(self, stored: float) -> None:
        """Put a value in the stored unit into the box (in the shown unit) and onto the slider."""
        shown = stored / self._per_shown
        self.editor.setSpecialValueText("")
        self.editor.setValue(int(round(shown)) if self.kind == "int" else float(shown))
        if self.slider is not None:
            self.slider.setValue(int(round(float(shown))))

    def show_auto_value(self, value: float | None) -> None:
        """Show the value the tool chose for "auto" (e.g. the estimated strength); no ``changed``."""
        if value is None or not isinstance(self.editor, (QtWidgets.QSpinBox, QtWidgets.QDoubleSpinBox)):
            return
        if self.kind == "int" or self.editor.decimals() == 0:
            value = float(round(value / self._per_shown)) * self._per_shown
        self._auto_value = value
        if self.auto_box is not None and self.auto_box.isChecked():
            blockers = [QtCore.QSignalBlocker(w) for w in (self, self.editor, self.slider) if w]
            self._show_number(value)
            del blockers

    def value(self) -> Any:
        """The value for the tool, in its stored unit (``None``: "auto")."""
        if self.auto_box is not None and self.auto_box.isChecked():
            return None
        if self.kind == "choice":
            return self.editor.currentData()
        if self.kind == "bool":
            return self.editor.isChecked()
        if self.kind == "int":
            return int(round(self._stored_value))
        return self._stored_value

    def set_value(self, value: Any, emit: bool = False) -> None:
        """Show ``value``, in the stored unit (``None`` ticks "auto" where there is one)."""
        blockers = [QtCore.QSignalBlocker(w) for w in (self, self.editor, self.slider, self.auto_box) if w]
        if value is None and self.auto_box is not None:
            self.auto_box.setChecked(True)
            self._auto_toggled(True, emit=False)
        else:
            if self.auto_box is not None:
                self.auto_box.setChecked(False)
                self._auto_toggled(False, emit=False)
            if self.kind == "choice":
                self.editor.setCurrentIndex(max(self.editor.findData(value), 0))
            elif self.kind == "bool":
                self.editor.setChecked(bool(value))
            else:
                self._stored_value = float(value)
                self._show_number(self._stored_value)
        del blockers
        if emit:
            self.changed.emit()


def build_controls(params_class: type, specs: dict[str, ControlSpec]) -> list[ParamControl]:
    """One control per showable field of ``params_class`` (fields it cannot show keep their default)."""
    docs = field_docs(params_class)
    defaults = params_class()
    controls = []
    for f in dataclasses.fields(params_class):
        spec = specs.get(f.name, ControlSpec())
        if spec.hidden or f.name.startswith("_"):
            continue
        default = getattr(defaults, f.name)
        type_text = f.type if isinstance(f.type, str) else getattr(f.type, "__name__", str(f.type))
        showable = spec.choices or isinstance(default, (bool, int, float)) or (
            default is None and re.search(r"\b(float|int)\b", type_text))
        if not showable:
            continue
        controls.append(ParamControl(f.name, default, type_text, spec, docs.get(f.name, "")))
    return controls
