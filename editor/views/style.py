"""The look: palette, style sheet and icons from the ``resources`` folder (installed or in the checkout)."""
from __future__ import annotations

import json
import re
from dataclasses import dataclass
from pathlib import Path

from PySide6 import QtGui, QtWidgets

from ..bundled import folder

#: The palette, style sheet and icons: inside the installed package, or the checkout's resources/.
RESOURCES = folder("resources")


@dataclass(frozen=True)
class Palette:
    """Named colours (``#RRGGBB``) of the interface; see ``resources/palette.json``."""

    colours: dict

    @classmethod
    def load(cls, path: Path | None = None) -> "Palette":
        data = json.loads((path or RESOURCES / "palette.json").read_text(encoding="utf-8"))
        return cls({k: v for k, v in data.items() if not k.startswith("_")})

    def __getitem__(self, name: str) -> str:
        return self.colours[name]

    def qcolor(self, name: str, alpha: int = 255) -> QtGui.QColor:
        colour = QtGui.QColor(self.colours[name])
        colour.setAlpha(alpha)
        return colour

    def rgba(self, name: str, alpha: int = 255) -> tuple[int, int, int, int]:
        c = self.qcolor(name)
        return c.red(), c.green(), c.blue(), alpha


def style_sheet(palette: Palette) -> str:
    """The style sheet with ``@name`` replaced by the palette's colours."""
    text = (RESOURCES / "style.qss").read_text(encoding="utf-8")
    return re.sub(r"@([a-z_]+)", lambda m: palette.colours.get(m.group(1), m.group(0)), text)


def apply_look(app: QtWidgets.QApplication, palette: Palette) -> None:
    """Fusion style, our colours, our style sheet."""
    app.setStyle("Fusion")
    qp = QtGui.QPalette()
    role = QtGui.QPalette.ColorRole
    qp.setColor(role.Window, palette.qcolor("panel"))
    qp.setColor(role.Base, palette.qcolor("paper"))
    qp.setColor(role.AlternateBase, palette.qcolor("panel"))
    qp.setColor(role.Text, palette.qcolor("ink"))
    qp.setColor(role.WindowText, palette.qcolor("ink"))
    qp.setColor(role.Button, palette.qcolor("paper"))
    qp.setColor(role.ButtonText, palette.qcolor("ink"))
    qp.setColor(role.Highlight, palette.qcolor("accent"))
    qp.setColor(role.HighlightedText, QtGui.QColor("white"))
    qp.setColor(role.ToolTipBase, palette.qcolor("paper"))
    qp.setColor(role.ToolTipText, palette.qcolor("ink"))
    app.setPalette(qp)
    app.setStyleSheet(style_sheet(palette))


def icon(name: str) -> QtGui.QIcon:
    """An icon drawn for Trackwright (``resources/icons/NAME.svg``); empty if missing."""
    path = RESOURCES / "icons" / f"{name}.svg"
    return QtGui.QIcon(str(path)) if path.exists() else QtGui.QIcon()
