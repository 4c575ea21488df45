"""Crash recovery: a journal of every applied edit, restored after the editor stops unexpectedly.

Qt-free. :mod:`.store` keeps one journal on disk (SQLite, a copy of the original,
a lock), :mod:`.codec` turns edits into plain data and back, :mod:`.replay`
writes an undo stack into a journal as it changes and replays it, :mod:`.scan`
finds journals left behind, :mod:`.leftovers` removes files of killed saves.
The window's side is :mod:`editor.app.recovery_keeper`.
"""
from __future__ import annotations

from typing import Callable

from ..model.document import Document
from .codec import JournalDataError, decode_edit, encode_edit
from .leftovers import describe_freed, leftover_saves, remove_leftover_saves
from .replay import (
    Command,
    JournalRecorder,
    Replayed,
    RestoreError,
    Summary,
    replay,
    summarize,
)
from .scan import (
    DATA_DIR_VARIABLE,
    FoundJournal,
    UnreadableJournal,
    data_dir,
    find_journals,
    journal_dir,
    set_aside,
)
from .store import FORMAT, SUFFIX, Journal, JournalLockedError, file_digest


def restore(found: FoundJournal, read: Callable[[str], Document] | None = None) -> Document:
    """The document a found journal ends at (raises :class:`RestoreError`)."""
    return replay(found.journal, read).doc


__all__ = ["Journal", "JournalRecorder", "JournalLockedError", "JournalDataError", "FoundJournal",
           "UnreadableJournal", "RestoreError", "Replayed", "Summary", "Command", "find_journals", "replay",
           "restore", "summarize", "set_aside", "encode_edit", "decode_edit", "data_dir", "journal_dir",
           "DATA_DIR_VARIABLE", "leftover_saves", "remove_leftover_saves", "describe_freed", "file_digest",
           "FORMAT", "SUFFIX", "Path"]
