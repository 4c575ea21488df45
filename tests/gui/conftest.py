"""Fixtures for the window tests: offscreen Qt, temporary settings, no modal dialog ever left open.

Every QMessageBox / QFileDialog / QInputDialog entry point the window uses is
replaced by a recorder that answers immediately, so a test can never block on
a dialog; tests state the answers they need and check what was asked.
"""
from __future__ import annotations

import os
from dataclasses import dataclass, field

import pytest

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6 import QtWidgets  # noqa: E402



@dataclass
class DialogRecorder:
    """What the window asked and what it was answered."""

    asked: list = field(default_factory=list)
    question_answer: QtWidgets.QMessageBox.StandardButton = QtWidgets.QMessageBox.StandardButton.Discard
    warning_answer: QtWidgets.QMessageBox.StandardButton = QtWidgets.QMessageBox.StandardButton.Cancel
    save_path: str = ""
    open_path: str = ""
    #: message boxes as shown: title, text, text format, and (when ``render``) the box painted offscreen
    boxes: list = field(default_factory=list)
    render: bool = False

    def kinds(self) -> list[str]:
        return [kind for kind, _ in self.asked]


@pytest.fixture
def dialogs(monkeypatch) -> DialogRecorder:
    rec = DialogRecorder()
    box = QtWidgets.QMessageBox

    def question(_parent, title, text, *args, **kwargs):
        rec.asked.append(("question", f"{title}: {text}"))
        return rec.question_answer

    def warning(_parent, title, text, *args, **kwargs):
        rec.asked.append(("warning", f"{title}: {text}"))
        return rec.warning_answer

    def information(_parent, title, text, *args, **kwargs):
        rec.asked.append(("information", f"{title}: {text}"))
        return box.StandardButton.Ok

    def about(_parent, title, text):
        rec.asked.append(("about", f"{title}: {text}"))

    kinds = {box.Icon.Question: "question", box.Icon.Warning: "warning", box.Icon.Critical: "warning",
             box.Icon.Information: "information"}
    answers = {"question": lambda: rec.question_answer, "warning": lambda: rec.warning_answer}

    def exec_box(self):
        """A message box built by the window (editor.app.dialogs): recorded, painted, answered, never modal."""
        kind = kinds.get(self.icon(), "information")
        rec.asked.append((kind, f"{self.windowTitle()}: {self.text()}"))
        image = self.grab().toImage() if rec.render else None
        rec.boxes.append((self.windowTitle(), self.text(), self.textFormat(), image))
        return answers.get(kind, lambda: box.StandardButton.Ok)()

    monkeypatch.setattr(box, "exec", exec_box)
    monkeypatch.setattr(box, "question", staticmethod(question))
    monkeypatch.setattr(box, "warning", staticmethod(warning))
    monkeypatch.setattr(box, "critical", staticmethod(warning))
    monkeypatch.setattr(box, "information", staticmethod(information))
    monkeypatch.setattr(box, "about", staticmethod(about))
    monkeypatch.setattr(QtWidgets.QFileDialog, "getSaveFileName",
                        staticmethod(lambda *a, **k: (rec.asked.append(("save", a[1] if len(a) > 1 else k.get(
                            "caption", ""))) or (rec.save_path, ""))))
    monkeypatch.setattr(QtWidgets.QFileDialog, "getOpenFileName",
                        staticmethod(lambda *a, **k: (rec.asked.append(("open", "")) or (rec.open_path, ""))))
    monkeypatch.setattr(QtWidgets.QInputDialog, "getDouble",
                        staticmethod(lambda *a, **k: (rec.asked.append(("offset", "")) or (2.0, True))))
    return rec


@pytest.fixture
def settings(tmp_path):
    from editor.app.settings import AppSettings
    return AppSettings.at_path(tmp_path / "settings.ini")


@pytest.fixture
def window(qtbot, dialogs, settings):
    from editor.app import create_application
    from editor.app.window import MainWindow

    create_application()
    win = MainWindow(settings)
    win.resize(1300, 850)
    qtbot.addWidget(win)
    win.show()
    qtbot.waitExposed(win)
    yield win
    win.undo_stack.setClean()  # teardown closes the window; nothing to ask about
    win.previews.runner.cancel()
    win.previews.cancel_long_job()
    assert win.pool.wait(30) and win.long_pool.wait(30)
    assert QtWidgets.QApplication.activeModalWidget() is None


