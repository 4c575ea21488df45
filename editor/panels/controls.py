"""Controls built from a tool's parameter dataclass.

Each numeric, boolean or choice field of the parameters becomes one control;
its label and range come from :class:`ControlSpec` when the panel gives one,
otherwise from the field's name and unit suffix (``_m`` metres, ``_s`` seconds,
``_mps`` metres per second), and its tooltip from the dataclass's numpydoc
``Attributes`` section. Values are kept in the tool's own SI units.
"""
from __future__ import annotations

import dataclasses
import re
from typing import Any

from PySide6 import QtCore, QtWidgets

from ..processing.descriptor import ControlSpec

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
    """One field's control. ``changed`` fires on every user change."""

    changed = QtCore.Signal()

    def __init__(self, name: str, default: Any, type_text: str, spec: ControlSpec, help_text: str,
                 parent=None) -> None:
        super().__init__(parent)
        self.name = name
        self.default = default
        self.optional = default is None or "None" in type_text
        label, unit = default_label(name)
        self.label_text = spec.label or label
        unit = spec.suffix if spec.suffix is not None else unit
        layout = QtWidgets.QHBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        self.auto_box: QtWidgets.QCheckBox | None = None
        self.slider: QtWidgets.QSlider | None = None
        self.auto_text = spec.auto_text
        self._auto_value: float | None = None   # what the tool chose for "auto", once known
        self._kept_value: float | None = None   # the user's own value from before "auto" was ticked
        self._showing_auto = False
        self.kind = self._kind(default, type_text, spec)
        if self.kind == "choice":
            self.editor = QtWidgets.QComboBox()
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
            self.editor = QtWidgets.QSpinBox() if is_int else QtWidgets.QDoubleSpinBox()
            lo = spec.minimum if spec.minimum is not None else 0.0
            hi = spec.maximum if spec.maximum is not None else 1_000_000.0
            if not is_int:
                self.editor.setDecimals(spec.decimals if spec.decimals is not None else _decimals_for(default))
            self.editor.setRange(int(lo) if is_int else lo, int(hi) if is_int else hi)
            step = spec.step if spec.step is not None else 1.0
            self.editor.setSingleStep(int(step) if is_int else step)
            if unit:
                self.editor.setSuffix(f" {unit}")
            start = default if isinstance(default, (int, float)) and not isinstance(default, bool) else lo
            self.editor.setValue(int(start) if is_int else float(start))
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
        tip = help_text or self.label_text
        self.setToolTip(tip)

    @staticmethod
    def _kind(default: Any, type_text: str, spec: ControlSpec) -> str:
        if spec.choices:
            return "choice"
        if isinstance(default, bool) or type_text.strip() == "bool":
            return "bool"
        if isinstance(default, int) or re.fullmatch(r"\s*int(\s*\|\s*None)?\s*", type_text or ""):
            return "int"
        return "float"

    def _spin_changed(self, value) -> None:
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
                if not self._showing_auto:
                    self._kept_value = self.editor.value()
                self._showing_auto = True
                if self._auto_value is not None:
                    self._show_number(self._auto_value)
                else:
                    self.editor.setSpecialValueText(self.auto_text)
                    self.editor.setValue(self.editor.minimum())
            else:
                self.editor.setSpecialValueText("")
                if self._showing_auto:
                    kept = self._auto_value if self._auto_value is not None else self._kept_value
                    if kept is not None:
                        self._show_number(kept)
                self._showing_auto = False
                if self.slider is not None:
                    self.slider.setValue(int(round(self.editor.value())))
            del blockers
        self.editor.setEnabled(not auto)
        if self.slider is not None:
            self.slider.setEnabled(not auto)
        if emit:
            self.changed.emit()

    def _show_number(self, value: float) -> None:
        self.editor.setSpecialValueText("")
        self.editor.setValue(int(round(value)) if self.kind == "int" else float(value))
        if self.slider is not None:
            self.slider.setValue(int(round(float(value))))

    def show_auto_value(self, value: float | None) -> None:
        """Show the value the tool chose for "auto" (e.g. the estimated strength); no ``changed``."""
        if value is None or not isinstance(self.editor, (QtWidgets.QSpinBox, QtWidgets.QDoubleSpinBox)):
            return
        if self.kind == "int" or self.editor.decimals() == 0:
            value = float(round(value))
        self._auto_value = value
        if self.auto_box is not None and self.auto_box.isChecked():
            blockers = [QtCore.QSignalBlocker(w) for w in (self, self.editor, self.slider) if w]
            self._show_number(value)
            del blockers

    def value(self) -> Any:
        if self.auto_box is not None and self.auto_box.isChecked():
            return None
        if self.kind == "choice":
            return self.editor.currentData()
        if self.kind == "bool":
            return self.editor.isChecked()
        return self.editor.value()

    def set_value(self, value: Any, emit: bool = False) -> None:
        """Show ``value`` (``None`` ticks "auto" where there is one)."""
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
                self.editor.setValue(int(value) if self.kind == "int" else float(value))
                if self.slider is not None:
                    self.slider.setValue(int(round(float(value))))
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
