"""Help ▸ Gestures and shortcuts: what the mouse does in each view, and every keyboard shortcut.

The shortcut table is built from the window's actions, so it never disagrees with the menus.
"""
from __future__ import annotations

import html

from PySide6 import QtCore, QtGui, QtWidgets

#: (where, gesture, what it does). Written for a rider; keep in step with the views' gestures.
GESTURES = (
    ("Both views", "Drag", "Pan. A plain drag never changes the track."),
    ("Both views", "Click on a point", "Select it (in both views). Ctrl+click adds or removes a point."),
    ("Both views", "Click away from the track", "Clear the selection."),
    ("Both views", "Move points mode (Ctrl+M), then press on a point and drag",
     "Move the point (on the map) or change its elevation (on the profile). The pointer shows an "
     "open hand over a point that can be grabbed and a closed hand while it moves; the move is one "
     "step in History. Turn the mode off with Ctrl+M again."),
    ("Map", "Mouse wheel", "Zoom in and out around the pointer."),
    ("Map", "Shift+drag (or any drag with Box select on)", "Select the points inside a box."),
    ("Profile", "Mouse wheel", "Zoom the distance; the elevation range follows the points in view."),
    ("Profile", "Shift+mouse wheel", "Zoom the elevation only."),
    ("Profile", "Shift+drag", "Select a stretch of the track; drag its edges to adjust it."),
    ("Both views", "Pointer over the track", "Shows the point's position, distance, elevation, grade, "
     "speed and time, and marks it in the other view."),
)


def _shortcut_rows(actions: dict[str, QtGui.QAction]) -> list[tuple[str, str]]:
    rows = []
    for action in actions.values():
        keys = [k.toString(QtGui.QKeySequence.SequenceFormat.NativeText) for k in action.shortcuts()]
        keys = [k for k in keys if k]
        if keys:
            rows.append((action.text().replace("&", "").rstrip("…"), " or ".join(keys)))
    return sorted(rows, key=lambda r: r[0].lower())


def gestures_html(actions: dict[str, QtGui.QAction]) -> str:
    """The page's text: a gestures table and a shortcuts table."""
    out = ["<h3>Mouse</h3><table cellspacing='0' cellpadding='3'>"]
    for where, gesture, meaning in GESTURES:
        out.append(f"<tr><td><i>{html.escape(where)}</i></td><td><b>{html.escape(gesture)}</b></td>"
                   f"<td>{html.escape(meaning)}</td></tr>")
    out.append("</table><h3>Keyboard</h3><table cellspacing='0' cellpadding='3'>")
    for text, keys in _shortcut_rows(actions):
        out.append(f"<tr><td>{html.escape(text)}</td><td><b>{html.escape(keys)}</b></td></tr>")
    out.append("</table>")
    return "".join(out)


class GesturesPage(QtWidgets.QDialog):
    """A non-modal window with the gestures and shortcuts; it can stay open beside the editor."""

    def __init__(self, actions: dict[str, QtGui.QAction], parent=None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Gestures and shortcuts")
        self.setModal(False)
        self.browser = QtWidgets.QTextBrowser()
        self.browser.setHtml(gestures_html(actions))
        buttons = QtWidgets.QDialogButtonBox(QtWidgets.QDialogButtonBox.StandardButton.Close)
        buttons.rejected.connect(self.close)
        layout = QtWidgets.QVBoxLayout(self)
        layout.addWidget(self.browser)
        layout.addWidget(buttons)
        self.resize(QtCore.QSize(640, 560))
