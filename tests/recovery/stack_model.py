"""A Qt-free undo stack with QUndoStack's rules, to drive the journal recorder in core tests.

Rules copied from Qt's documented behaviour (QUndoStack: push drops the commands above
the index and, if the clean state was among them, makes it unreachable; setIndex undoes
or redoes step by step and announces the index once).
"""
from __future__ import annotations

from editor.recovery import Command, JournalRecorder


class StackModel:
    def __init__(self, doc, recorder: JournalRecorder | None = None) -> None:
        self.doc = doc
        self.commands: list[Command] = []
        self.index = 0
        self.clean = 0
        self.recorder = recorder

    def _announce(self) -> None:
        if self.recorder is not None:
            self.recorder.sync(self.index, len(self.commands), lambda i: self.commands[i],
                               lambda i: self.commands[i].label)

    def push(self, edit, label: str) -> None:
        command = Command(edit, label)
        command.redo(self.doc)
        if self.clean > self.index:
            self.clean = -1
        del self.commands[self.index:]
        self.commands.append(command)
        self.index += 1
        self._announce()

    def set_index(self, index: int) -> None:
        index = max(0, min(index, len(self.commands)))
        while self.index > index:
            self.index -= 1
            self.commands[self.index].undo(self.doc)
        while self.index < index:
            self.commands[self.index].redo(self.doc)
            self.index += 1
        self._announce()

    def set_clean(self) -> None:
        self.clean = self.index
