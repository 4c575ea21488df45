"""The window's side of crash recovery: journal every undo-stack change, offer journals left by a crash.

All the logic is Qt-free in :mod:`editor.recovery`; this module only connects it to
the window. Every change of the undo stack (a new edit, undo, redo) is appended to
the journal at once. A save over the original starts a fresh journal from the saved
file; a save elsewhere marks the saved state; closing removes the journal. At start
the journals of editors that stopped are offered, journals that cannot be restored
are reported with the place they were moved to, and the files of interrupted saves
are removed.
"""
from __future__ import annotations

import sqlite3
from contextlib import contextmanager
from pathlib import Path

from PySide6 import QtCore, QtWidgets

from ..commands import EditCommand
from ..io.save import same_file
from ..recovery import (
    FoundJournal,
    Journal,
    JournalRecorder,
    RestoreError,
    UnreadableJournal,
    describe_freed,
    find_journals,
    remove_leftover_saves,
    replay,
    set_aside,
)
from . import dialogs

_WRITE_ERRORS = (OSError, sqlite3.Error, TypeError, ValueError)


class RecoveryKeeper(QtCore.QObject):
    """Journals one window's undo stack. ``window`` needs ``undo_stack``, ``settings``, ``closing``."""

    def __init__(self, window) -> None:
        super().__init__(window)
        self.window = window
        self.recorder: JournalRecorder | None = None
        self._suspended = False
        window.undo_stack.indexChanged.connect(self.record_now)

    @property
    def directory(self) -> Path:
        return self.window.settings.recovery_dir

    @property
    def journal(self) -> Journal | None:
        return None if self.recorder is None else self.recorder.journal

    def document_opened(self, path) -> None:
        """Start a new journal for a document read from ``path`` (``None``: nothing to replay from)."""
        self.discard()
        if self._suspended or not path or not Path(path).is_file():
            return
        try:
            self.recorder = JournalRecorder(Journal.create(self.directory, path))
        except (OSError, sqlite3.Error) as err:
            self._say(f"Crash recovery is off for this file: the journal could not be created ({err}).")

    def record_now(self, *_args) -> None:
        """Bring the journal up to date with the undo stack (called on every index change)."""
        if self.recorder is None or self._suspended or self.window.closing:
            return
        stack = self.window.undo_stack
        try:
            self.recorder.sync(stack.index(), stack.count(), stack.command, stack.text)
        except RuntimeError:  # the stack announces its own clearing while Qt destroys it
            return
        except _WRITE_ERRORS as err:
            # A journal missing a step would replay into a wrong document: drop it, and say so.
            self.discard()
            self._say(f"Crash recovery is off for this document: the journal could not be written ({err}).")

    def saved(self, target) -> None:
        """The document was saved to ``target`` (the undo stack is clean now)."""
        if self.recorder is None:
            return
        stack = self.window.undo_stack
        if same_file(target, self.recorder.journal.source_path):
            # Saved over the original: later edits apply to the saved file, so start from it.
            old = self.recorder
            index = stack.index()
            try:
                fresh = Journal.create(self.directory, target)
            except (OSError, sqlite3.Error) as err:
                self.discard()
                self._say(f"Crash recovery is off for this file: the journal could not be created ({err}).")
                return
            old.journal.discard()
            self.recorder = JournalRecorder(fresh, old.live[:index], offset=index)
            return
        try:
            self.recorder.clean_at(stack.cleanIndex())
        except _WRITE_ERRORS as err:
            self.discard()
            self._say(f"Crash recovery is off for this document: the journal could not be written ({err}).")

    def discard(self) -> None:
        """Remove the journal (after a close, or when another document replaces this one)."""
        if self.recorder is not None:
            self.recorder.journal.discard()
            self.recorder = None

    @contextmanager
    def suspended(self):
        """Changes made inside are not journaled (a restore rebuilding the stack)."""
        self._suspended = True
        try:
            yield
        finally:
            self._suspended = False

    def adopt(self, journal: Journal) -> None:
        """Continue writing a restored journal, whose steps describe the window's stack as it is now."""
        self.discard()
        stack = self.window.undo_stack
        commands = [(stack.command(i), stack.text(i)) for i in range(stack.count())]
        self.recorder = JournalRecorder(journal, commands, offset=0, index=stack.index())
        try:
            self.recorder.clean_at(stack.cleanIndex())
        except _WRITE_ERRORS as err:
            self.discard()
            self._say(f"Crash recovery is off for this document: the journal could not be written ({err}).")

    def _say(self, text: str) -> None:
        self.window.statusBar().showMessage(text, 10000)


def offer_recovery(window) -> bool:
    """At start: tidy interrupted saves, report unreadable journals, offer restorable ones.

    Returns True when a document was restored into ``window``.
    """
    found, unreadable = find_journals(window.settings.recovery_dir)
    tidy_interrupted_saves(window, [f.source_path for f in found])
    for item in unreadable:
        tell_not_restored(window, item)
    restored = False
    for entry in found:
        if restored:
            entry.journal.close()  # offered again at the next start
            continue
        name = Path(entry.source_path).name
        steps = "\n".join(f"  • {label}" for label in entry.labels[-8:])
        answer = dialogs.ask(
            window, "Restore unsaved edits?",
            f"Trackwright stopped before saving the edits to {name}:\n{steps}\n\n"
            "Restore them now? (No deletes this recovery journal.)")
        if answer == QtWidgets.QMessageBox.StandardButton.Yes:
            restored = restore_into(window, entry)
        else:
            entry.journal.discard()
    return restored


def tell_not_restored(window, item: UnreadableJournal) -> None:
    where = item.moved_to or item.path
    dialogs.warn(
        window, "Unsaved edits could not be restored",
        f"A recovery journal could not be restored: {item.reason}.\n\n"
        f"Nothing in it was run. It was kept here:\n{where}")


def tidy_interrupted_saves(window, extra_files=()) -> int:
    """Remove temporary files of killed saves beside recent files; tell how much that freed."""
    removed, freed = remove_leftover_saves([*window.settings.recent_files(), *extra_files])
    if removed:
        window.statusBar().showMessage(describe_freed(len(removed), freed), 15000)
    return freed


def restore_into(window, entry: FoundJournal) -> bool:
    """Replay ``entry`` and rebuild the document and its undo history in ``window``."""
    try:
        replayed = replay(entry.journal)
    except RestoreError as err:
        tell_not_restored(window, set_aside(entry, str(err)))
        return False
    index = replayed.index
    bottom = replayed.rewind()
    keeper: RecoveryKeeper = window.recovery
    with keeper.suspended():
        window.display.set_document(bottom, entry.source_path)
        for command in replayed.commands:
            window.undo_stack.push(EditCommand(window.session.doc, command.forward, command.label))
        window.undo_stack.setIndex(index)
        if not replayed.starts_at_original:
            window.undo_stack.resetClean()  # the bottom of the history is not the file on disk
    keeper.adopt(entry.journal)
    note = f" {replayed.notes[0]}" if replayed.notes else ""
    window.statusBar().showMessage(
        f"Restored {index} unsaved edit(s) to {Path(entry.source_path).name}.{note}", 12000)
    return True
