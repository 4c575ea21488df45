"""Crash recovery: a journal of the edits applied since a file was opened.

The editor writes the journal at a bounded interval and after every applied
tool. It holds the path and SHA-256 of the file as opened plus the list of
forward edits (the model's edit values, see :mod:`editor.model.edits`) in the
order they were applied. Restoring reads the original file again, checks it is
unchanged, and replays the edits, which reproduces the document exactly.

The journal is written atomically (temporary file, fsync, rename), so a crash
while writing leaves the previous journal. It is a pickle, read back with an
unpickler that only accepts the model's own classes and numpy arrays, so a
planted file cannot run code. Journals are removed after a clean save or close.
"""
from __future__ import annotations

import hashlib
import io
import os
import pickle
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Callable, Sequence

from .io.errors import TrackFileError
from .model.document import Document

FORMAT = "trackwright-recovery-1"
SUFFIX = ".twjournal"

_ALLOWED_MODULES = ("editor.model.", "numpy")
_ALLOWED_BUILTINS = {"set", "frozenset", "tuple", "list", "dict", "slice", "complex", "bytearray"}


def file_digest(path: str | os.PathLike) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


class _ModelUnpickler(pickle.Unpickler):
    def find_class(self, module: str, name: str):
        if module == "builtins" and name in _ALLOWED_BUILTINS:
            return super().find_class(module, name)
        if module.startswith(_ALLOWED_MODULES) or module in ("numpy", "copyreg", "collections"):
            if module == "copyreg" and name != "_reconstructor":
                raise pickle.UnpicklingError(f"refusing {module}.{name}")
            if module == "collections" and name != "OrderedDict":
                raise pickle.UnpicklingError(f"refusing {module}.{name}")
            return super().find_class(module, name)
        raise pickle.UnpicklingError(f"a recovery journal may not contain {module}.{name}")


@dataclass(frozen=True)
class JournalEntry:
    """What a journal file says, without the edits loaded."""

    journal_path: Path
    source_path: str | None
    source_sha256: str | None
    labels: tuple[str, ...]
    saved_at: float
    pid: int


def _write_atomically(path: Path, data: bytes) -> None:
    tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    try:
        with open(tmp, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    finally:
        if tmp.exists():
            tmp.unlink()


class RecoveryJournal:
    """The journal of one open document.

    Parameters
    ----------
    directory : folder for journals (the editor uses its per-user data folder).
    source_path : the file the document was read from, or ``None`` for a new document.
    """

    def __init__(self, directory: str | os.PathLike, source_path: str | os.PathLike | None):
        self.directory = Path(directory)
        self.source_path = None if source_path is None else str(Path(source_path).resolve())
        self.source_sha256 = None if source_path is None else file_digest(source_path)
        stamp = hashlib.sha256(f"{self.source_path}|{os.getpid()}|{time.time_ns()}".encode()).hexdigest()[:16]
        self.path = self.directory / f"{stamp}{SUFFIX}"

    def record(self, edits: Sequence, labels: Sequence[str]) -> None:
        """Write the forward edits applied so far (oldest first) with their labels."""
        self.directory.mkdir(parents=True, exist_ok=True)
        payload = {"format": FORMAT, "source_path": self.source_path, "source_sha256": self.source_sha256,
                   "labels": tuple(labels), "saved_at": time.time(), "pid": os.getpid(),
                   "edits": list(edits)}
        _write_atomically(self.path, pickle.dumps(payload, protocol=pickle.HIGHEST_PROTOCOL))

    def discard(self) -> None:
        """Remove the journal (after a clean save or close)."""
        try:
            self.path.unlink()
        except FileNotFoundError:
            pass


def _load(path: Path) -> dict:
    try:
        data = _ModelUnpickler(io.BytesIO(path.read_bytes())).load()
    except (pickle.UnpicklingError, EOFError, AttributeError, ImportError, ValueError, TypeError) as err:
        raise TrackFileError(path, f"the recovery journal is damaged or not ours ({err})") from None
    if not isinstance(data, dict) or data.get("format") != FORMAT:
        raise TrackFileError(path, "not a recovery journal of this program")
    return data


def _pid_alive(pid: int) -> bool:
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def find_journals(directory: str | os.PathLike, include_live: bool = False) -> list[JournalEntry]:
    """Journals left behind by editors that are no longer running (newest first).

    Damaged journals are skipped; ``include_live`` also lists those of running editors.
    """
    folder = Path(directory)
    if not folder.is_dir():
        return []
    entries = []
    for path in folder.glob(f"*{SUFFIX}"):
        try:
            data = _load(path)
        except (TrackFileError, OSError):
            continue
        if not include_live and _pid_alive(int(data.get("pid", -1))):
            continue
        entries.append(JournalEntry(path, data["source_path"], data["source_sha256"], tuple(data["labels"]),
                                    float(data["saved_at"]), int(data["pid"])))
    return sorted(entries, key=lambda e: e.saved_at, reverse=True)


def load_edits(entry: JournalEntry) -> list:
    """The journal's forward edits, oldest first (raises :class:`TrackFileError` if damaged)."""
    return list(_load(entry.journal_path)["edits"])


def original_document(entry: JournalEntry, read: Callable[[str], Document] | None = None) -> Document:
    """Read the file the journal's edits belong to, checking it is unchanged since they were made."""
    if read is None:
        from .io.gpx import read_gpx as read
    source = entry.source_path
    if source is None:
        return Document()
    if not Path(source).exists():
        raise TrackFileError(source, "the file these unsaved edits belong to no longer exists")
    if file_digest(source) != entry.source_sha256:
        raise TrackFileError(source, "the file changed since the edits were made; they cannot be replayed")
    return read(source)


def restore(entry: JournalEntry, read: Callable[[str], Document] | None = None) -> Document:
    """Read the original file again and replay the journal's edits on it.

    Raises :class:`TrackFileError` when the journal is damaged, or the original is
    gone or has changed since it was opened (the edits' row numbers would no
    longer fit it).
    """
    edits = load_edits(entry)
    doc = original_document(entry, read)
    for edit in edits:
        edit.apply(doc)
    return doc
