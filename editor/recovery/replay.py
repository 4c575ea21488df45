"""Writing an undo stack into a journal as it changes, and replaying a journal.

A journal describes an undo stack, not only a document, so undo and redo come
back too. Its steps are:

``push``
    a new command at the stack's current index (commands above it are dropped,
    as an undo stack does); its edit is stored, applied on replay.
``index``
    the stack moved to this index by undo/redo (``position``).
``below``
    the stack was undone below the first command the journal knows (after a save
    over the original the journal starts from the saved file, but the window keeps
    the older history): the stored edit is the one that undo applied; on replay it
    is applied and becomes a new bottom command.
``clean``
    the document at this index was saved (``-1``: no saved state is reachable).

Indexes count from the journal's bottom. Nothing is lost when the final index
equals the clean one; such journals are not offered.
"""
from __future__ import annotations

import sqlite3
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable

from ..model.document import Document
from .codec import JournalDataError, decode_edit, encode_edit, reference_table
from .store import ORIGINAL, Journal, file_digest


class RestoreError(Exception):
    """A journal cannot be restored; ``str()`` is one sentence for the user."""


@dataclass
class Command:
    """What an undo command holds (as :class:`editor.commands.EditCommand`, without Qt)."""

    forward: Any
    label: str
    inverse: Any = None

    def redo(self, doc: Document) -> None:
        self.inverse = self.forward.apply(doc)

    def undo(self, doc: Document) -> None:
        self.forward = self.inverse.apply(doc)


@dataclass
class Summary:
    """Where a journal's stack ends, read without touching any edit."""

    index: int = 0
    clean: int = 0
    labels: list[str] = field(default_factory=list)

    @property
    def unsaved(self) -> bool:
        return self.index != self.clean


def _walk(steps, on_push=None, on_below=None, on_move=None) -> Summary:
    s = Summary()
    for seq, kind, position, label, has_edit in steps:
        if kind == "push":
            if position != s.index or not has_edit:
                raise JournalDataError(f"step {seq}: a new command at {position} while the stack is at {s.index}")
            if on_push:
                on_push(seq, label, s.index)
            del s.labels[s.index:]
            s.labels.append(label)
            s.clean = -1 if s.clean > s.index else s.clean
            s.index += 1
        elif kind == "below":
            if s.index != 0 or not has_edit:
                raise JournalDataError(f"step {seq}: an undo below the journal while the stack is at {s.index}")
            if on_below:
                on_below(seq, label)
            s.labels.insert(0, label)
            s.clean = s.clean + 1 if s.clean >= 0 else -1
        elif kind == "index":
            if not 0 <= position <= len(s.labels):
                raise JournalDataError(f"step {seq}: index {position} outside the stack of {len(s.labels)}")
            if on_move:
                on_move(position)
            s.index = position
        elif kind == "clean":
            if not -1 <= position <= len(s.labels):
                raise JournalDataError(f"step {seq}: clean index {position} outside the stack")
            s.clean = position
        else:
            raise JournalDataError(f"step {seq}: unknown kind {str(kind)[:20]!r}")
    return s


def summarize(journal: Journal) -> Summary:
    """Final index, clean index and command labels of ``journal`` (raises on an inconsistent journal)."""
    return _walk(journal.steps())


@dataclass
class Replayed:
    """A replayed journal: ``doc`` at ``index`` of ``commands`` (each holding its current edit pair)."""

    doc: Document
    commands: list[Command]
    index: int
    clean: int
    notes: list[str]
    #: commands put below the journal's start (undo past a save over the original)
    below: int = 0

    @property
    def starts_at_original(self) -> bool:
        """Is the bottom of the stack the original file as it still is on disk?"""
        return self.below == 0 and not self.notes

    def rewind(self) -> Document:
        """Undo every command in place and return the document at the bottom of the stack.

        The commands' ``forward`` edits then rebuild the stack from there, in order.
        """
        while self.index > 0:
            self.index -= 1
            self.commands[self.index].undo(self.doc)
        return self.doc


def original_to_read(journal: Journal) -> tuple[Path, list[str]]:
    """The intact original the journal's edits apply to, and notes for the user."""
    digest = journal.meta.get("source_sha256")
    kept = journal.folder / ORIGINAL
    source = Path(journal.source_path)
    try:
        if kept.is_file() and file_digest(kept) == digest:
            changed = not source.is_file() or file_digest(source) != digest
            notes = [f"{source.name} changed or disappeared since; the edits were replayed on the copy "
                     "kept with the journal."] if changed else []
            return kept, notes
        if source.is_file() and file_digest(source) == digest:
            return source, []
    except OSError as err:
        raise RestoreError(f"the original could not be read ({err.strerror or err})") from None
    raise RestoreError(f"{source.name} changed since the edits were made and no intact copy was kept")


def replay(journal: Journal, read: Callable[[str], Document] | None = None) -> Replayed:
    """Read the original again and replay every step of ``journal`` (raises :class:`RestoreError`)."""
    if read is None:
        from ..io.gpx import read_gpx as read
    path, notes = original_to_read(journal)
    try:
        doc = read(str(path))
    except Exception as err:  # noqa: BLE001 - any failure means "cannot restore", said in one line
        raise RestoreError(f"the original could not be read again ({err})") from None
    doc.source_path = journal.source_path
    commands: list[Command] = []
    state = {"index": 0, "below": 0}

    def edit_of(seq: int):
        return decode_edit(journal.edit_text(seq), lambda n: journal.blob(seq, n), doc)

    def push(seq, label, index):
        del commands[index:]
        command = Command(edit_of(seq), label)
        command.redo(doc)
        commands.append(command)
        state["index"] = index + 1

    def below(seq, label):
        undone = edit_of(seq)
        command = Command(undone.apply(doc), label, inverse=undone)
        commands.insert(0, command)
        state["below"] += 1

    def move(position):
        while state["index"] > position:
            state["index"] -= 1
            commands[state["index"]].undo(doc)
        while state["index"] < position:
            commands[state["index"]].redo(doc)
            state["index"] += 1

    try:
        summary = _walk(journal.steps(), push, below, move)
    except RestoreError:
        raise
    except (JournalDataError, sqlite3.Error) as err:
        raise RestoreError(f"the journal is damaged ({err})") from None
    except Exception as err:  # noqa: BLE001 - an edit that does not fit the original: damaged, not a crash
        raise RestoreError(f"a journaled edit does not fit the original ({type(err).__name__}: {err})") from None
    return Replayed(doc, commands, summary.index, summary.clean, notes, state["below"])


class JournalRecorder:
    """Keeps a journal in step with a live undo stack.

    Call :meth:`sync` whenever the stack's index changes (Qt: ``indexChanged``). Commands
    are compared by identity, so a new command at the top is told apart from a redo; each
    change costs one appended step, whatever the size of the document.
    """

    def __init__(self, journal: Journal, commands: list | None = None, offset: int = 0,
                 index: int | None = None) -> None:
        self.journal = journal
        #: (command, label) of the live stack's commands up to the journal's knowledge, bottom first
        self.live: list[tuple[Any, str]] = list(commands or [])
        #: live index of the journal's bottom, and the live index the journal is at
        self.offset = offset
        self.index = len(self.live) if index is None else index
        if not offset <= self.index <= len(self.live):
            raise ValueError("the journal's bottom lies above the commands it knows")

    def sync(self, index: int, count: int, command_at: Callable[[int], Any], label_at: Callable[[int], str]) -> None:
        """Record what changed since the last call: new commands, or a move by undo/redo."""
        if count == 0 and self.live:
            return  # the stack was cleared: a new document follows, with a new journal
        if 0 < index <= len(self.live) and command_at(index - 1) is not self.live[index - 1][0]:
            self._move(index - 1)  # a new command replaced the one the journal knew there
            del self.live[index - 1:]
        if index > len(self.live):
            # Commands the journal has not seen were applied (pushed, or redone after a save over
            # the original started this journal): each is stored with the edit it applied.
            self._move(len(self.live))
            for j in range(len(self.live), index):
                command, label = command_at(j), label_at(j)
                text, blobs = encode_edit(command.forward, reference_table(command.forward, command.inverse))
                self.journal.append("push", j - self.offset, label, text, blobs)
                self.live.append((command, label))
            self.index = index
        elif index != self.index:
            self._move(index)

    def _move(self, index: int) -> None:
        if index == self.index:
            return
        if index < self.offset:
            if self.index != self.offset:
                self.journal.append("index", 0)
            for j in range(self.offset - 1, index - 1, -1):
                command, label = self.live[j]
                text, blobs = encode_edit(command.inverse, reference_table(command.inverse, command.forward))
                self.journal.append("below", 0, label, text, blobs)
            self.offset = index
        else:
            self.journal.append("index", index - self.offset)
        self.index = index

    def clean_at(self, live_clean_index: int) -> None:
        """The document at this live index was saved somewhere (``-1``: no saved state reachable)."""
        clean = live_clean_index - self.offset if live_clean_index >= self.offset else -1
        self.journal.append("clean", clean)
