"""Finding the journals left by editors that stopped, and the folder they live in."""
from __future__ import annotations

import os
import sqlite3
from dataclasses import dataclass
from pathlib import Path

from .codec import JournalDataError
from .replay import Summary, summarize
from .store import SUFFIX, FolderLock, Journal, JournalLockedError, move_aside

#: Environment variable that moves the per-user data folder (tests, portable use).
DATA_DIR_VARIABLE = "TRACKWRIGHT_DATA_DIR"
#: Journals of the format before this one (a pickle): never read, only reported and moved aside.
OLD_SUFFIX = ".twjournal"


def data_dir() -> Path:
    """The per-user data folder (``$TRACKWRIGHT_DATA_DIR`` when set, else the platform's own)."""
    configured = os.environ.get(DATA_DIR_VARIABLE)
    if configured:
        return Path(configured)
    import platformdirs

    return Path(platformdirs.user_data_dir("trackwright", appauthor=False))


def journal_dir() -> Path:
    """Where crash-recovery journals are kept."""
    return data_dir() / "journals"


@dataclass
class FoundJournal:
    """A journal left by an editor that stopped; this process holds its lock until it is closed."""

    journal: Journal
    summary: Summary

    @property
    def path(self) -> Path:
        return self.journal.folder

    @property
    def source_path(self) -> str:
        return self.journal.source_path

    @property
    def labels(self) -> list[str]:
        """Labels of the commands up to the journal's final index (the unsaved edits' names)."""
        return self.summary.labels[:self.summary.index]


@dataclass(frozen=True)
class UnreadableJournal:
    """A journal that cannot be read; it was moved to ``moved_to`` (its contents are never run)."""

    path: Path
    moved_to: Path | None
    reason: str


def find_journals(directory: str | os.PathLike) -> tuple[list[FoundJournal], list[UnreadableJournal]]:
    """Journals in ``directory`` that no running editor holds.

    Returns the restorable ones (newest first; each keeps its lock until closed or discarded)
    and the unreadable ones, already moved aside so that they are reported once and kept for
    inspection. Readable journals with nothing unsaved are removed quietly.
    """
    folder = Path(directory)
    found: list[FoundJournal] = []
    unreadable: list[UnreadableJournal] = []
    if not folder.is_dir():
        return found, unreadable
    for path in sorted(folder.iterdir()):
        if path.name.endswith(OLD_SUFFIX):
            unreadable.append(_aside(path, folder, "it was written by an older version in a format that is "
                                                   "no longer read"))
            continue
        if not path.name.endswith(SUFFIX):
            continue
        if not path.is_dir():
            unreadable.append(_aside(path, folder, "it is not a journal folder"))
            continue
        try:
            lock = FolderLock(path)
        except JournalLockedError:
            continue  # a running editor writes it
        except OSError as err:
            unreadable.append(UnreadableJournal(path, None, f"it cannot be opened ({err.strerror or err})"))
            continue
        try:
            journal = Journal.open(path, lock)
        except (sqlite3.Error, OSError) as err:
            lock.release()
            unreadable.append(_aside(path, folder, f"its database cannot be read ({err})"))
            continue
        try:
            summary = summarize(journal)
        except (sqlite3.Error, JournalDataError) as err:
            journal.close()
            unreadable.append(_aside(path, folder, f"its steps are damaged ({err})"))
            continue
        if not summary.unsaved:
            journal.discard()  # everything in it was saved or undone: nothing to offer
            continue
        found.append(FoundJournal(journal, summary))
    found.sort(key=lambda f: f.journal.meta.get("created", ""), reverse=True)
    return found, unreadable


def _aside(path: Path, folder: Path, reason: str) -> UnreadableJournal:
    try:
        return UnreadableJournal(path, move_aside(path, folder), reason)
    except OSError as err:
        return UnreadableJournal(path, None, f"{reason}; it could not be moved aside ({err.strerror or err})")


def set_aside(found: FoundJournal, reason: str) -> UnreadableJournal:
    """Close a found journal that could not be restored and move it aside."""
    found.journal.close()
    return _aside(found.path, found.path.parent, reason)
