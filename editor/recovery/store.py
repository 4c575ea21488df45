"""One journal on disk: a folder holding a SQLite database, a copy of the original and a lock.

Layout (``NAME.twj/`` inside the journals folder, mode 0700)::

    journal.sqlite3   meta(key, value) + steps(seq, kind, position, label, edit) + blobs(step, n, data)
    original.gpx      the file the edits apply to (a hard link when possible, else a copy)
    lock              locked (flock / msvcrt) by the editor that writes the journal, for as long as it runs

The database runs in WAL mode with ``synchronous=FULL``: every appended step is
one committed transaction, on disk before :meth:`Journal.append` returns. Files
are created readable by the user only (0600; SQLite gives its ``-wal``/``-shm``
files the database's mode).
"""
from __future__ import annotations

import hashlib
import os
import secrets
import shutil
import sqlite3
import time
from pathlib import Path
from typing import Sequence

FORMAT = "trackwright-journal-2"
SUFFIX = ".twj"
DATABASE = "journal.sqlite3"
ORIGINAL = "original.gpx"
LOCK = "lock"
#: Largest blob a journal row may hold (bytes): a million points' column is 8 MB.
MAX_BLOB_BYTES = 800_000_000

_SCHEMA = """
CREATE TABLE meta(key TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE steps(seq INTEGER PRIMARY KEY, kind TEXT NOT NULL, position INTEGER NOT NULL,
                   label TEXT NOT NULL DEFAULT '', edit TEXT);
CREATE TABLE blobs(step INTEGER NOT NULL, n INTEGER NOT NULL, data BLOB NOT NULL, PRIMARY KEY(step, n));
"""


class JournalLockedError(OSError):
    """Another running editor holds the journal."""


def file_digest(path: str | os.PathLike) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


class FolderLock:
    """An exclusive, non-blocking lock on ``folder/lock`` held until :meth:`release`.

    BSD ``flock`` on POSIX (per open file, so two journals in one process exclude each other
    too, and the kernel drops it when the process dies, however it dies); ``msvcrt.locking``
    on Windows. Process ids are never consulted: after a reboot they are reused.
    """

    def __init__(self, folder: Path) -> None:
        self.path = folder / LOCK
        fd = os.open(self.path, os.O_RDWR | os.O_CREAT, 0o600)
        try:
            _lock(fd)
        except OSError:
            os.close(fd)
            raise JournalLockedError(f"{folder} is in use by a running editor") from None
        self.fd: int | None = fd

    def release(self) -> None:
        if self.fd is not None:
            try:
                _unlock(self.fd)
            finally:
                os.close(self.fd)
                self.fd = None


if os.name == "nt":  # pragma: no cover - exercised on Windows only
    import msvcrt

    def _lock(fd: int) -> None:
        msvcrt.locking(fd, msvcrt.LK_NBLCK, 1)

    def _unlock(fd: int) -> None:
        os.lseek(fd, 0, os.SEEK_SET)
        msvcrt.locking(fd, msvcrt.LK_UNLCK, 1)
else:
    import fcntl

    def _lock(fd: int) -> None:
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)

    def _unlock(fd: int) -> None:
        fcntl.flock(fd, fcntl.LOCK_UN)


def _connect(path: Path, create: bool) -> sqlite3.Connection:
    if create:
        os.close(os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600))
    elif not path.is_file():
        raise sqlite3.DatabaseError(f"{path.name} is missing")
    # isolation_level=None: transactions are explicit; check_same_thread: one writer per window
    connection = sqlite3.connect(f"{path.as_uri()}?mode={'rwc' if create else 'rw'}", uri=True,
                                 isolation_level=None, check_same_thread=False)
    try:
        if create:
            connection.execute("PRAGMA page_size=65536")  # a million-point column is 128 pages, not 2,000
        mode = connection.execute("PRAGMA journal_mode=WAL").fetchone()[0]
        if str(mode).lower() != "wal":
            raise sqlite3.DatabaseError(f"journal mode {mode} instead of WAL")
        connection.execute("PRAGMA synchronous=FULL")
        connection.execute("PRAGMA trusted_schema=OFF")
        # Blobs are never checkpointed while editing: the journal is a log that is read once.
        connection.execute("PRAGMA wal_autocheckpoint=0")
        if hasattr(connection, "setlimit"):  # Python 3.11+: SQLite itself refuses longer values
            connection.setlimit(sqlite3.SQLITE_LIMIT_LENGTH, MAX_BLOB_BYTES)
    except BaseException:
        connection.close()
        raise
    return connection


def _keep_original(source: Path, target: Path) -> str:
    """Hard-link ``source`` as ``target`` (same file system), else copy it; returns how."""
    try:
        os.link(source, target)
        return "link"
    except OSError:
        shutil.copyfile(source, target)
        os.chmod(target, 0o600)
        return "copy"


class Journal:
    """An open journal, locked by this process; :meth:`create` one or :meth:`open` a found one."""

    def __init__(self, folder: Path, connection: sqlite3.Connection, lock: FolderLock) -> None:
        self.folder = folder
        self.connection = connection
        self.lock = lock
        self.meta = dict(connection.execute("SELECT key, value FROM meta").fetchall())
        row = connection.execute("SELECT max(seq) FROM steps").fetchone()
        self._next = (row[0] or 0) + 1

    @property
    def database(self) -> Path:
        return self.folder / DATABASE

    @property
    def source_path(self) -> str:
        return self.meta.get("source_path", "")

    @classmethod
    def create(cls, directory: str | os.PathLike, source_path: str | os.PathLike,
               digest: str | None = None) -> "Journal":
        """A new journal for edits of the file ``source_path`` (its copy is kept beside the journal)."""
        directory = Path(directory)
        directory.mkdir(parents=True, exist_ok=True, mode=0o700)
        source = Path(source_path).resolve()
        stamp = time.strftime("%Y%m%d-%H%M%S", time.gmtime())
        folder = directory / f"{stamp}-{secrets.token_hex(4)}{SUFFIX}"
        folder.mkdir(mode=0o700)
        lock = FolderLock(folder)
        try:
            kept = _keep_original(source, folder / ORIGINAL)
            digest = digest or file_digest(folder / ORIGINAL)
            connection = _connect(folder / DATABASE, create=True)
            with connection:
                connection.execute("BEGIN")
                for statement in _SCHEMA.strip().split(";"):
                    if statement.strip():
                        connection.execute(statement)
                connection.executemany("INSERT INTO meta VALUES (?, ?)", [
                    ("format", FORMAT), ("source_path", str(source)), ("source_sha256", digest),
                    ("original", kept), ("created", repr(time.time()))])
                connection.execute("COMMIT")
        except BaseException:
            lock.release()
            shutil.rmtree(folder, ignore_errors=True)
            raise
        return cls(folder, connection, lock)

    @classmethod
    def open(cls, folder: Path, lock: FolderLock) -> "Journal":
        """Open a journal found on disk whose lock the caller already holds (raises on damage)."""
        connection = _connect(folder / DATABASE, create=False)
        try:
            journal = cls(folder, connection, lock)
        except BaseException:
            connection.close()
            raise
        if journal.meta.get("format") != FORMAT:
            connection.close()
            raise sqlite3.DatabaseError(f"not a journal of this program ({journal.meta.get('format')!r})")
        return journal

    def append(self, kind: str, position: int, label: str = "", edit: str | None = None,
               blobs: Sequence = ()) -> None:
        """Add one step and commit it to the disk before returning."""
        seq = self._next
        c = self.connection
        c.execute("BEGIN IMMEDIATE")
        try:
            c.execute("INSERT INTO steps VALUES (?, ?, ?, ?, ?)", (seq, kind, int(position), label, edit))
            c.executemany("INSERT INTO blobs VALUES (?, ?, ?)", ((seq, n, data) for n, data in enumerate(blobs)))
            c.execute("COMMIT")
        except BaseException:
            c.execute("ROLLBACK")
            raise
        self._next = seq + 1

    def steps(self) -> list[tuple[int, str, int, str, bool]]:
        """``(seq, kind, position, label, has_edit)`` of every step, oldest first (no blobs read)."""
        return [(s, k, p, lab, e) for s, k, p, lab, e in self.connection.execute(
            "SELECT seq, kind, position, label, edit IS NOT NULL FROM steps ORDER BY seq")]

    def edit_text(self, seq: int) -> str:
        row = self.connection.execute("SELECT edit FROM steps WHERE seq = ?", (seq,)).fetchone()
        if row is None or not isinstance(row[0], str):
            raise sqlite3.DatabaseError(f"step {seq} has no edit")
        return row[0]

    def blob(self, seq: int, n: int) -> bytes:
        """Blob ``n`` of step ``seq``; its size is checked before it is read."""
        row = self.connection.execute("SELECT length(data) FROM blobs WHERE step = ? AND n = ?", (seq, n)).fetchone()
        if row is None:
            raise sqlite3.DatabaseError(f"step {seq} has no blob {n}")
        if row[0] is None or not 0 <= row[0] <= MAX_BLOB_BYTES:
            raise sqlite3.DatabaseError(f"step {seq} blob {n} has an absurd size ({row[0]})")
        data = self.connection.execute("SELECT data FROM blobs WHERE step = ? AND n = ?", (seq, n)).fetchone()[0]
        if not isinstance(data, bytes):
            raise sqlite3.DatabaseError(f"step {seq} blob {n} is not binary data")
        return data

    def close(self) -> None:
        """Close the database and release the lock (the journal stays on disk)."""
        try:
            self.connection.close()
        finally:
            self.lock.release()

    def discard(self) -> None:
        """Close and remove the journal with its copy of the original."""
        self.close()
        shutil.rmtree(self.folder, ignore_errors=True)


def move_aside(path: Path, directory: Path) -> Path:
    """Move a journal that cannot be restored into ``directory/could-not-restore`` (returns the new path)."""
    aside = directory / "could-not-restore"
    aside.mkdir(parents=True, exist_ok=True, mode=0o700)
    target = aside / path.name
    while target.exists():
        target = aside / f"{path.stem}-{secrets.token_hex(2)}{path.suffix}"
    os.replace(path, target)
    return target
