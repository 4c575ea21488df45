"""The one error type for unreadable or unwritable track files."""
from __future__ import annotations

import os


class TrackFileError(Exception):
    """A track file could not be read or written.

    Attributes
    ----------
    path : the file concerned (``str``) or ``None`` for in-memory data.
    line : 1-based line in the file where the problem was found, or ``None``.
    problem : what is wrong, in words for the user.

    ``str(error)`` is one line: ``"FILE, line N: problem"``; line breaks and
    other control characters in the file's name are shown escaped (``\\n``).
    """

    def __init__(self, path: str | os.PathLike | None, problem: str, line: int | None = None) -> None:
        self.path = None if path is None else str(path)
        self.line = line
        self.problem = problem
        where = self.path or "<data>"
        if line is not None:
            where += f", line {line}"
        super().__init__(one_line(f"{where}: {problem}"))


def one_line(text: str) -> str:
    """``text`` with control characters escaped, so a message stays on one line."""
    if text.isprintable():
        return text
    return "".join(ch if ch.isprintable() else repr(ch)[1:-1] for ch in text)
