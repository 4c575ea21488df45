"""Undo commands: each holds one model edit value and applies it or its inverse, nothing else.

The edit values themselves come from :mod:`editor.model.edits` (built for hand
edits by :mod:`editor.commands.hand_edits`, for tools by ``Proposal.edit()``).
"""
from __future__ import annotations

from PySide6.QtGui import QUndoCommand

from ..model.document import Document


class EditCommand(QUndoCommand):
    """One undo step: ``redo()`` applies ``edit`` to ``doc``, ``undo()`` applies what that returned.

    Parameters
    ----------
    doc : the document the edit applies to.
    edit : a reversible edit value (``apply(doc) -> inverse``).
    label : the readable name shown in the history list ("Move point", "Smooth track").
    """

    def __init__(self, doc: Document, edit, label: str) -> None:
        super().__init__(label)
        self.doc = doc
        self.forward = edit
        self.inverse = None

    def redo(self) -> None:
        self.inverse = self.forward.apply(self.doc)

    def undo(self) -> None:
        self.forward = self.inverse.apply(self.doc)


__all__ = ["EditCommand"]
