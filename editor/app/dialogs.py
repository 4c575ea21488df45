"""Message boxes and labels that show text as text.

Qt guesses whether a string is rich text (a tag near its start is enough), so a
message that quotes a file ("the point has more than one <ele>", an elevation
``<img src="p.png">``) would be rendered as HTML: tags vanish, text after a
stray ``<`` disappears, and an ``<img>`` makes Qt open a local file. Every
dialog and label that can show file-derived text is built here, in plain-text
format. (Our own fixed texts, like the About box, may still use markup.)
"""
from __future__ import annotations

import html

from PySide6 import QtCore, QtWidgets

Button = QtWidgets.QMessageBox.StandardButton
Icon = QtWidgets.QMessageBox.Icon
PLAIN = QtCore.Qt.TextFormat.PlainText


def message(parent: QtWidgets.QWidget | None, icon: Icon, title: str, text: str,
            buttons: Button = Button.Ok, default: Button = Button.NoButton) -> Button:
    """Show a modal message box whose ``text`` is plain text; return the button pressed."""
    box = QtWidgets.QMessageBox(icon, title, text, buttons, parent)
    box.setTextFormat(PLAIN)
    if default != Button.NoButton:
        box.setDefaultButton(default)
    answer = box.exec()
    box.deleteLater()
    return Button(answer)


def ask(parent: QtWidgets.QWidget | None, title: str, text: str,
        buttons: Button = Button.Yes | Button.No, default: Button = Button.NoButton) -> Button:
    """A question in plain text (Yes / No unless ``buttons`` says otherwise)."""
    return message(parent, Icon.Question, title, text, buttons, default)


def warn(parent: QtWidgets.QWidget | None, title: str, text: str,
         buttons: Button = Button.Ok, default: Button = Button.NoButton) -> Button:
    """A warning in plain text."""
    return message(parent, Icon.Warning, title, text, buttons, default)


def plain_label(text: str = "", parent: QtWidgets.QWidget | None = None) -> QtWidgets.QLabel:
    """A label that never interprets its text as markup."""
    label = QtWidgets.QLabel(parent)
    label.setTextFormat(PLAIN)
    label.setText(text)
    return label


def plain_tooltip(text: str) -> str:
    """``text`` as a tooltip that shows exactly these characters (tooltips have no plain-text switch:
    the text is escaped and marked as rich text, so Qt does not guess)."""
    return "<qt>" + html.escape(text).replace("\n", "<br>") + "</qt>" if text else ""


__all__ = ["PLAIN", "Button", "Icon", "ask", "message", "plain_label", "plain_tooltip", "warn"]
