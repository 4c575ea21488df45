"""Crash recovery in the window: a killed editor's edits come back, with their history.

The journal is written at every change of the undo stack, so even the hand edit made
just before the kill is restored. Hostile or damaged journals are reported, never run.
"""
from __future__ import annotations

import os
import shutil
import signal
import sqlite3
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import numpy as np
from gui_support import journal_after_a_crash
from PySide6 import QtWidgets

from editor.io.gpx import read_gpx
from editor.model import DeletePoints, SetValues

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_tracks" / "demo_tunnel.gpx"

# The child process: a real window, hand edits, a tool applied, an undo, and a last hand edit
# immediately before SIGKILL (no clean close, no explicit journal call).
CHILD = textwrap.dedent("""
    import os, signal, sys
    os.environ["QT_QPA_PLATFORM"] = "offscreen"
    sys.path.insert(0, {root!r})
    from editor.app import create_application
    from editor.app.settings import AppSettings
    from editor.app.window import MainWindow
    from editor.model import DeletePoints, SetValues
    from editor.processing.smoothing import SmoothParams, smooth
    import numpy as np
    app = create_application()
    window = MainWindow(AppSettings.at_path({settings!r}))
    assert window.files.open_path({source!r}, confirmed=True)
    window.editing.push_edit(DeletePoints(0, np.array([5, 6, 7])), "Delete 3 points")
    window.editing.push_edit(smooth(window.session.doc.tracks[0], SmoothParams(horizontal_strength=30.0,
                                                               vertical_strength=30.0)).edit(), "Smooth track")
    window.editing.push_edit(SetValues(0, np.array([20]), {{"ele": np.array([999.0])}}), "Set elevation")
    window.undo_stack.undo()
    window.editing.push_edit(SetValues(0, np.array([21]), {{"ele": np.array([998.0])}}), "Set elevation 2")
    os.kill(os.getpid(), signal.SIGKILL)
""")


def _journals(folder: Path) -> list[Path]:
    return sorted(folder.glob("*.twj"))


def test_killed_editor_is_restored_exactly(tmp_path, qtbot, dialogs):
    from editor.app import create_application
    from editor.app.recovery_keeper import offer_recovery
    from editor.app.settings import AppSettings
    from editor.app.window import MainWindow
    from editor.processing.smoothing import SmoothParams, smooth

    source = tmp_path / "tunnel.gpx"
    shutil.copy(DEMO, source)
    settings_path = tmp_path / "settings.ini"
    child = subprocess.run([sys.executable, "-c", CHILD.format(root=str(ROOT), settings=str(settings_path),
                                                               source=str(source))],
                           capture_output=True, text=True, timeout=120)
    assert child.returncode == -signal.SIGKILL, child.stderr
    settings = AppSettings.at_path(settings_path)
    assert len(_journals(settings.recovery_dir)) == 1

    expected = read_gpx(source)
    DeletePoints(0, np.array([5, 6, 7])).apply(expected)
    smooth(expected.tracks[0], SmoothParams(horizontal_strength=30.0, vertical_strength=30.0)).edit().apply(expected)
    SetValues(0, np.array([21]), {"ele": np.array([998.0])}).apply(expected)

    create_application()
    window = MainWindow(settings)
    qtbot.addWidget(window)
    dialogs.question_answer = QtWidgets.QMessageBox.StandardButton.Yes
    assert offer_recovery(window)
    assert "Restore unsaved edits" in dialogs.asked[0][1] and "Set elevation 2" in dialogs.asked[0][1]
    assert window.session.doc.equals(expected)
    assert [window.undo_stack.text(i) for i in range(window.undo_stack.count())] == [
        "Delete 3 points", "Smooth track", "Set elevation 2"]
    window.undo_stack.setIndex(0)
    assert window.session.doc.equals(read_gpx(source))  # undo still reaches the file as it was
    window.undo_stack.setIndex(3)
    # A clean save elsewhere marks the journal as saved, and closing removes it.
    assert window.files.write_copy(tmp_path / "tunnel-cleaned.gpx")
    window.close()
    assert _journals(settings.recovery_dir) == []


def test_declining_removes_the_journal(tmp_path, qtbot, dialogs):
    from editor.app import create_application
    from editor.app.recovery_keeper import offer_recovery
    from editor.app.settings import AppSettings
    from editor.app.window import MainWindow
    from editor.recovery import Journal, JournalRecorder
    from tests.recovery.stack_model import StackModel

    source = tmp_path / "tunnel.gpx"
    shutil.copy(DEMO, source)
    settings = AppSettings.at_path(tmp_path / "settings.ini")
    journal = Journal.create(settings.recovery_dir, source)
    StackModel(read_gpx(source), JournalRecorder(journal)).push(DeletePoints(0, np.array([1])), "Delete 1 point")
    journal.close()  # as if its editor had stopped: the lock is released

    create_application()
    window = MainWindow(settings)
    qtbot.addWidget(window)
    dialogs.question_answer = QtWidgets.QMessageBox.StandardButton.No
    assert not offer_recovery(window)
    assert dialogs.kinds() == ["question"]
    assert not journal.folder.exists()


def _steps(window) -> list[tuple[str, int]]:
    """The journal's steps, read through a second connection as another process would."""
    database = window.recovery.journal.database
    with sqlite3.connect(f"{database.as_uri()}?mode=ro", uri=True) as c:
        return [(k, p) for k, p in c.execute("SELECT kind, position FROM steps ORDER BY seq")]


def test_every_change_is_journaled_at_once(window, tmp_path, qtbot):
    from editor.recovery import summarize

    source = tmp_path / "tunnel.gpx"
    shutil.copy(DEMO, source)
    assert window.files.open_path(source, confirmed=True)
    window.editing.push_edit(DeletePoints(0, np.array([3])), "Delete 1 point")
    assert _steps(window) == [("push", 0)]  # a hand edit is on disk at once (no interval)
    window.undo_stack.undo()
    window.undo_stack.redo()
    assert _steps(window) == [("push", 0), ("index", 0), ("index", 1)]
    window.undo_stack.setIndex(0)
    assert not summarize(window.recovery.journal).unsaved  # back to the file as opened: nothing to offer


def test_live_journal_of_another_window_is_not_offered(window, tmp_path, qtbot, dialogs):
    from editor.app.recovery_keeper import offer_recovery
    from editor.app.window import MainWindow

    source = tmp_path / "tunnel.gpx"
    shutil.copy(DEMO, source)
    assert window.files.open_path(source, confirmed=True)
    window.editing.push_edit(DeletePoints(0, np.array([3])), "Delete 1 point")
    second = MainWindow(window.settings)
    qtbot.addWidget(second)
    assert not offer_recovery(second)  # the first window holds its journal's lock
    assert dialogs.asked == [] and len(_journals(window.settings.recovery_dir)) == 1


def test_save_over_the_original_starts_a_fresh_journal(window, tmp_path, qtbot, dialogs):

    source = tmp_path / "tunnel.gpx"
    shutil.copy(DEMO, source)
    assert window.files.open_path(source, confirmed=True)
    window.editing.push_edit(DeletePoints(0, np.array([3, 4])), "Delete 2 points")
    first = window.recovery.journal.folder
    dialogs.warning_answer = QtWidgets.QMessageBox.StandardButton.Yes
    assert window.files.write_copy(source)  # over the original
    assert not first.exists() and window.recovery.journal.folder != first
    window.editing.push_edit(SetValues(0, np.array([10]), {"ele": np.array([1234.0])}), "Set elevation")
    window.undo_stack.setIndex(0)  # below the save: the fresh journal stores the undone edit too
    window.undo_stack.setIndex(2)
    assert window.recovery.journal is not None, window.statusBar().currentMessage()
    expected = window.session.doc
    restored, journal = journal_after_a_crash(window)
    # the saved file also carries its cleaning record (metadata), which the live document does not
    assert len(restored.tracks) == len(expected.tracks)
    assert all(a.equals(b) for a, b in zip(restored.tracks, expected.tracks))
    journal.discard()


def test_hostile_and_damaged_journals_are_reported_never_run(tmp_path, qtbot, dialogs):
    from editor.app import create_application
    from editor.app.recovery_keeper import offer_recovery
    from editor.app.settings import AppSettings
    from editor.app.window import MainWindow
    from editor.recovery import Journal, JournalRecorder
    from tests.recovery.stack_model import StackModel

    settings = AppSettings.at_path(tmp_path / "settings.ini")
    folder = settings.recovery_dir
    folder.mkdir(parents=True)
    owned = tmp_path / "owned"
    # 1. The old pickle format with a numpy path to exec (passed the old prefix allow-list).
    gadget = (b"cnumpy.testing._private.utils\nrunstring\n(V__import__('pathlib').Path("
              + repr(str(owned)).encode() + b").write_text('x')\n(dtR.")
    (folder / "planted.twjournal").write_bytes(gadget)
    # 2. A corrupt database.
    (folder / "corrupt.twj").mkdir()
    (folder / "corrupt.twj" / "journal.sqlite3").write_bytes(b"SQLite format 3\x00" + os.urandom(3000))
    # 3. A well-formed journal whose edit claims an absurd array size.
    source = tmp_path / "tunnel.gpx"
    shutil.copy(DEMO, source)
    journal = Journal.create(folder, source)
    StackModel(read_gpx(source), JournalRecorder(journal)).push(DeletePoints(0, np.array([1])), "Delete 1 point")
    journal.connection.execute("UPDATE steps SET edit = replace(edit, '\"len\":1', '\"len\":1000000000000000')")
    journal.close()

    create_application()
    window = MainWindow(settings)
    qtbot.addWidget(window)
    dialogs.question_answer = QtWidgets.QMessageBox.StandardButton.Yes
    assert not offer_recovery(window)
    assert not owned.exists()
    told = [text for kind, text in dialogs.asked if kind == "warning"]
    assert len(told) == 3 and all("could not be restored" in t for t in told)
    aside = folder / "could-not-restore"
    for name in ("planted.twjournal", "corrupt.twj", journal.folder.name):
        assert any(str(aside / name) in t for t in told), name
        assert (aside / name).exists() and not (folder / name).exists()
    assert window.files.open_path(source, confirmed=True)  # the editor works normally afterwards


def test_files_of_interrupted_saves_are_removed_at_start(tmp_path, qtbot, dialogs):
    from editor.app import create_application
    from editor.app.recovery_keeper import offer_recovery
    from editor.app.settings import AppSettings
    from editor.app.window import MainWindow

    source = tmp_path / "tunnel.gpx"
    shutil.copy(DEMO, source)
    settings = AppSettings.at_path(tmp_path / "settings.ini")
    settings.add_recent_file(source)
    leftover = tmp_path / ".tunnel.gpx.0a1b2c3d.tmp"  # editor.io.save's naming
    leftover.write_bytes(b"x" * 300_000)
    old = time.time() - 3600
    os.utime(leftover, (old, old))
    unrelated = tmp_path / ".tunnel.gpx.notours.tmp"
    unrelated.write_bytes(b"keep")
    os.utime(unrelated, (old, old))

    create_application()
    window = MainWindow(settings)
    qtbot.addWidget(window)
    assert not offer_recovery(window)
    assert not leftover.exists() and unrelated.exists() and source.exists()
    assert "0.3 MB freed" in window.statusBar().currentMessage()
