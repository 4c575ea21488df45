"""Crash recovery in the window: a killed editor's edits come back, with their history."""
from __future__ import annotations

import shutil
import signal
import subprocess
import sys
import textwrap
from pathlib import Path

import numpy as np
from PySide6 import QtWidgets

from editor.io.gpx import read_gpx
from editor.model import DeletePoints, SetValues

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_tracks" / "demo_tunnel.gpx"

# The child process: a real window, a hand edit, a tool applied, then SIGKILL (no clean close).
CHILD = textwrap.dedent("""
    import os, signal, sys
    os.environ["QT_QPA_PLATFORM"] = "offscreen"
    sys.path.insert(0, {root!r})
    from editor.app import create_application
    from editor.app.settings import AppSettings
    from editor.app.window import MainWindow
    from editor.model import DeletePoints, SetValues
    import numpy as np
    app = create_application()
    window = MainWindow(AppSettings.at_path({settings!r}))
    assert window.files.open_path({source!r}, confirmed=True)
    window.editing.push_edit(DeletePoints(0, np.array([5, 6, 7])), "Delete 3 points")
    window.editing.push_edit(SetValues(0, np.array([20]), {{"ele": np.array([999.0])}}), "Set elevation")
    window.recovery.record_now()
    os.kill(os.getpid(), signal.SIGKILL)
""")


def test_killed_editor_is_restored_exactly(tmp_path, qtbot, dialogs):
    from editor.app import create_application
    from editor.app.recovery_keeper import offer_recovery
    from editor.app.settings import AppSettings
    from editor.app.window import MainWindow

    source = tmp_path / "tunnel.gpx"
    shutil.copy(DEMO, source)
    settings_path = tmp_path / "settings.ini"
    child = subprocess.run([sys.executable, "-c", CHILD.format(root=str(ROOT), settings=str(settings_path),
                                                               source=str(source))],
                           capture_output=True, text=True, timeout=120)
    assert child.returncode == -signal.SIGKILL, child.stderr
    settings = AppSettings.at_path(settings_path)
    assert list(settings.recovery_dir.glob("*.twjournal"))

    expected = read_gpx(source)
    DeletePoints(0, np.array([5, 6, 7])).apply(expected)
    SetValues(0, np.array([20]), {"ele": np.array([999.0])}).apply(expected)

    create_application()
    window = MainWindow(settings)
    qtbot.addWidget(window)
    dialogs.question_answer = QtWidgets.QMessageBox.StandardButton.Yes
    assert offer_recovery(window)
    assert "Restore unsaved edits" in dialogs.asked[0][1]
    assert window.session.doc.equals(expected)
    assert [window.undo_stack.text(i) for i in range(window.undo_stack.count())] == ["Delete 3 points",
                                                                                      "Set elevation"]
    window.undo_stack.setIndex(0)
    assert window.session.doc.equals(read_gpx(source))  # undo still reaches the file as it was
    window.undo_stack.setIndex(2)
    # A clean save removes the journal.
    assert window.files.write_copy(tmp_path / "tunnel-cleaned.gpx")
    assert not list(settings.recovery_dir.glob("*.twjournal"))
    window.undo_stack.setClean()


def test_declining_removes_the_journal(tmp_path, qtbot, dialogs):
    from editor.app import create_application
    from editor.app.recovery_keeper import offer_recovery
    from editor.app.settings import AppSettings
    from editor.app.window import MainWindow
    from editor.recovery import RecoveryJournal

    source = tmp_path / "tunnel.gpx"
    shutil.copy(DEMO, source)
    settings = AppSettings.at_path(tmp_path / "settings.ini")
    journal = RecoveryJournal(settings.recovery_dir, source)
    journal.record([DeletePoints(0, np.array([1]))], ["Delete 1 point"])
    # Make it look like it was left by a process that is gone.
    import pickle
    data = pickle.loads(journal.path.read_bytes())
    data["pid"] = 2 ** 22 + 12345
    journal.path.write_bytes(pickle.dumps(data))

    create_application()
    window = MainWindow(settings)
    qtbot.addWidget(window)
    dialogs.question_answer = QtWidgets.QMessageBox.StandardButton.No
    assert not offer_recovery(window)
    assert not journal.path.exists()


def test_tool_apply_writes_the_journal_at_once_and_undo_to_clean_removes_it(window, tmp_path, qtbot):
    source = tmp_path / "tunnel.gpx"
    shutil.copy(DEMO, source)
    assert window.files.open_path(source, confirmed=True)
    journals = lambda: list(window.settings.recovery_dir.glob("*.twjournal"))  # noqa: E731
    window.editing.push_edit(DeletePoints(0, np.array([3])), "Delete 1 point")
    assert journals() == []  # a hand edit waits for the journal interval
    panel = window.tool_dock.panel("smooth")
    window.tool_dock.show_panel(panel)
    panel.controls["horizontal_strength"].set_value(50)
    panel.controls["vertical_strength"].set_value(60)
    panel.preview_button.click()
    qtbot.waitUntil(lambda: window.state.preview is not None, timeout=20000)
    qtbot.wait(50)
    panel.apply_button.click()
    assert window.undo_stack.count() == 2, window.statusBar().currentMessage()
    assert len(journals()) == 1  # an applied tool is journaled at once
    window.undo_stack.setIndex(0)
    assert journals() == []  # back to the file as opened: nothing to recover
