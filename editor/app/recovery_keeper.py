"""Keeps the crash-recovery journal of a window up to date and offers journals left by a crash.

The journal (:mod:`editor.recovery`) is written at most every
:data:`JOURNAL_INTERVAL_MS` while there are unsaved edits, at once after every
applied tool, and removed after a clean save or close. After a crash the next
start lists the journals whose editor is gone and offers to restore them: the
original file is read again and every journaled edit is pushed back onto the
undo stack with its label, so the history (and undo) come back too.
"""
from __future__ import annotations

from pathlib import Path

from PySide6 import QtCore, QtWidgets

from ..commands import EditCommand
from ..io.errors import TrackFileError
from ..recovery import JournalEntry, RecoveryJournal, find_journals, load_edits, original_document
from . import dialogs

#: Longest time unsaved edits stay out of the journal (milliseconds).
JOURNAL_INTERVAL_MS = 20_000


class RecoveryKeeper(QtCore.QObject):
    """Journals one window's undo stack. ``window`` needs ``undo_stack``, ``doc`` and ``settings``."""

    def __init__(self, window, interval_ms: int = JOURNAL_INTERVAL_MS) -> None:
        super().__init__(window)
        self.window = window
        self.journal: RecoveryJournal | None = None
        self._timer = QtCore.QTimer(self, singleShot=True, interval=interval_ms)
        self._timer.timeout.connect(self.record_now)
        window.undo_stack.indexChanged.connect(self._stack_changed)

    @property
    def directory(self) -> Path:
        return self.window.settings.recovery_dir

    def document_opened(self, path) -> None:
        """Start a new journal for a document read from ``path`` (``None``: nothing to replay from)."""
        self.discard()
        try:
            self.journal = RecoveryJournal(self.directory, path) if path and Path(path).is_file() else None
        except OSError:
            self.journal = None

    def _stack_changed(self, _index: int) -> None:
        if self.journal is None or self.window.closing:
            return
        try:
            clean = self.window.undo_stack.isClean()
        except RuntimeError:  # the stack announces its own clearing while Qt destroys it
            return
        if clean:
            self.journal.discard()
            self._timer.stop()
        elif not self._timer.isActive():
            self._timer.start()

    def record_now(self) -> None:
        """Write the journal now (after an applied tool, or when the interval ends)."""
        self._timer.stop()
        if self.journal is None or self.window.undo_stack.isClean():
            return
        stack = self.window.undo_stack
        commands = [stack.command(i) for i in range(stack.index())]
        try:
            self.journal.record([c.forward for c in commands], [c.text() for c in commands])
        except OSError as err:  # a full disk must not stop editing; say so once
            self.window.statusBar().showMessage(f"Could not write the recovery journal: {err}", 8000)

    def discard(self) -> None:
        self._timer.stop()
        if self.journal is not None:
            self.journal.discard()


def offer_recovery(window) -> bool:
    """Ask whether to restore journals left by an editor that stopped unexpectedly.

    Returns True when a document was restored into ``window``.
    """
    entries = find_journals(window.settings.recovery_dir)
    for entry in entries:
        name = Path(entry.source_path).name if entry.source_path else "an unsaved document"
        steps = "\n".join(f"  • {label}" for label in entry.labels[-8:])
        answer = dialogs.ask(
            window, "Restore unsaved edits?",
            f"Trackwright stopped before saving the edits to {name}:\n{steps}\n\n"
            "Restore them now? (No deletes this recovery journal.)")
        if answer == QtWidgets.QMessageBox.StandardButton.Yes:
            if restore_into(window, entry):
                return True
        else:
            entry.journal_path.unlink(missing_ok=True)
    return False


def restore_into(window, entry: JournalEntry) -> bool:
    """Open the journal's original file in ``window`` and push its edits back as undo steps."""
    try:
        edits = load_edits(entry)
        doc = original_document(entry)
    except TrackFileError as err:
        window.show_file_error("Cannot restore the edits", err)
        return False
    window.set_document(doc, entry.source_path)
    for edit, label in zip(edits, entry.labels):
        window.undo_stack.push(EditCommand(window.doc, edit, label))
    entry.journal_path.unlink(missing_ok=True)
    window.recovery.record_now()
    window.statusBar().showMessage(f"Restored {len(edits)} unsaved edit(s) to {Path(entry.source_path).name}", 8000)
    return True
