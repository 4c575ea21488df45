"""Saving so that nothing is lost: atomic replacement and non-destructive backups.

:func:`atomic_write` writes the new content to a temporary file in the target's
own folder (same file system, so the final rename is atomic), flushes it to the
disk (``fsync``), then renames it over the target with ``os.replace``. At every
moment the target is either the complete old file or the complete new one. On
any failure the old file is untouched, the temporary file is removed and a
:class:`~editor.io.errors.TrackFileError` says which step failed. (A process
killed mid-write cannot clean up: it leaves the old file intact and a hidden
``.NAME.XXXXXXXX.tmp`` next to it; :func:`leftover_temp_files` finds those.)

Backups: with ``backup=True`` the file being replaced is kept under the first
free name of ``NAME.bak``, ``NAME.bak.1``, ``NAME.bak.2``, ... An existing backup
is never overwritten, so ``NAME.bak`` always holds the oldest version (usually
the original recording) and the highest number the most recent one. The backup
is a hard link to the old file where the file system allows (instant, no extra
space), otherwise a copy.

A symbolic link as target is followed: the file it points to is replaced and
the link stays. A replaced file keeps its permission bits. A target that is
write-protected (no write bit, or not writable by this user), a folder, a
device or a named pipe is refused (:func:`refuse_target`): a rename would
replace it whatever its mode.
"""
from __future__ import annotations

import errno
import os
import secrets
import shutil
import stat
from pathlib import Path
from typing import Iterable

from .errors import TrackFileError

_MAX_BACKUPS = 10_000


def _describe(error: OSError) -> str:
    return error.strerror or str(error) or type(error).__name__


def _write_all(fd: int, data: bytes | Iterable[bytes]) -> None:
    for piece in [data] if isinstance(data, (bytes, bytearray, memoryview)) else data:
        view = memoryview(piece)
        while view:
            written = os.write(fd, view)
            view = view[written:]


def _create_temp(folder: Path, name: str) -> tuple[int, Path]:
    while True:
        temp = folder / f".{name}.{secrets.token_hex(4)}.tmp"
        try:
            # 0o666 lets the user's umask decide a new file's permissions, as for any other save
            return os.open(temp, os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0), 0o666), temp
        except FileExistsError:
            continue


def backup_names(path: str | os.PathLike) -> list[Path]:
    """Existing backups of ``path``, oldest first (``NAME.bak``, ``NAME.bak.1``, ...)."""
    path = Path(path)
    found = []
    for i in range(_MAX_BACKUPS):
        candidate = path.with_name(path.name + (".bak" if i == 0 else f".bak.{i}"))
        if not candidate.exists():
            break
        found.append(candidate)
    return found


def _make_backup(target: Path) -> Path:
    for i in range(_MAX_BACKUPS):
        candidate = target.with_name(target.name + (".bak" if i == 0 else f".bak.{i}"))
        try:
            os.link(target, candidate)
            return candidate
        except FileExistsError:
            continue
        except OSError:  # no hard links here (some network or FAT file systems): copy instead
            try:
                with open(target, "rb") as source, open(candidate, "xb") as copy:
                    shutil.copyfileobj(source, copy)
                    copy.flush()
                    os.fsync(copy.fileno())
                return candidate
            except FileExistsError:
                continue
    raise OSError(errno.EEXIST, f"{_MAX_BACKUPS} backups exist already")


def _sync_folder(folder: Path) -> None:
    """Make the rename itself durable (POSIX); not possible or needed everywhere."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def atomic_write(path: str | os.PathLike, data: bytes | Iterable[bytes], backup: bool = False) -> Path | None:
    """Replace the file at ``path`` with ``data`` atomically.

    Parameters
    ----------
    path : target file; created if missing.
    data : the complete new content, as ``bytes`` or an iterable of ``bytes``
        pieces (streamed, so a large file need not be held in memory; an
        exception raised while producing the pieces aborts the save like any
        other failure).
    backup : keep the replaced file as a backup (see the module notes for names).

    Returns
    -------
    The backup's path, or ``None`` when no backup was made.

    Raises
    ------
    TrackFileError
        naming the step that failed; the previous file is then unchanged.
    """
    target = Path(os.path.realpath(path))
    folder = target.parent
    refuse_target(path, target)
    step = f"could not create a temporary file in {folder}"
    temp = made_backup = None
    try:
        fd, temp = _create_temp(folder, target.name)
        try:
            step = "could not write the new content"
            _write_all(fd, data)
            step = "could not flush the new content to the disk"
            os.fsync(fd)
        finally:
            os.close(fd)
        if target.exists():
            step = "could not give the new file the old file's permissions"
            os.chmod(temp, stat.S_IMODE(target.stat().st_mode))
            if backup:
                step = "could not keep a backup of the old file"
                made_backup = _make_backup(target)
        step = "could not replace the old file with the new one"
        os.replace(temp, target)
        temp = None
    except BaseException as error:
        _remove_quietly(temp)
        _remove_quietly(made_backup)
        if isinstance(error, OSError):
            raise TrackFileError(path, f"{step}: {_describe(error)}; the previous file is unchanged") from error
        raise
    _sync_folder(folder)
    return made_backup


def _remove_quietly(path: Path | None) -> None:
    if path is not None:
        try:
            os.unlink(path)
        except OSError:
            pass


def same_file(a: str | os.PathLike | None, b: str | os.PathLike | None) -> bool:
    """Do ``a`` and ``b`` name one file: the same path once links are followed, or one existing file
    under two names (a hard link)? Either may be ``None`` (never the same). Never raises: a
    symbolic-link loop is simply not the other file. The one check used before any write."""
    if a is None or b is None:
        return False
    try:
        return os.path.realpath(a) == os.path.realpath(b) or os.path.samefile(a, b)
    except (OSError, ValueError):
        return False


def write_protected(mode: int) -> bool:
    """No write permission bit at all (which even the superuser should respect for a save)."""
    return not mode & (stat.S_IWUSR | stat.S_IWGRP | stat.S_IWOTH)


def refuse_target(path: str | os.PathLike, target: Path | None = None) -> None:
    """Raise :class:`TrackFileError` if ``path`` exists and is not an ordinary, writable file.

    A rename replaces whatever the name points to, ignoring its mode bits, so
    a write-protected file or a device would otherwise be replaced silently.
    """
    target = Path(os.path.realpath(path)) if target is None else target
    try:
        info = os.stat(target)
    except OSError:
        return  # missing (it will be created); other problems surface when writing
    if stat.S_ISDIR(info.st_mode):
        raise TrackFileError(path, "is a folder, not a file; nothing was written")
    if not stat.S_ISREG(info.st_mode):
        from .source import kind_of

        raise TrackFileError(path, f"is {kind_of(info.st_mode)}, not an ordinary file; nothing was written")
    if write_protected(info.st_mode) or not os.access(target, os.W_OK):
        raise TrackFileError(path, "is write-protected; nothing was written (remove the protection "
                                   "or choose another name)")


def check_target(path: str | os.PathLike, overwrite: bool) -> None:
    """The command line's rule for an output: an existing file is replaced only with ``overwrite``."""
    if os.path.lexists(path) and not overwrite:
        raise TrackFileError(path, "already exists; pass --overwrite to replace it (the old file is then "
                                   "kept as a .bak)")
    refuse_target(path)


def next_backup_name(path: str | os.PathLike) -> Path:
    """The name the next backup of ``path`` will get (see the module notes)."""
    target = Path(os.path.realpath(path))
    return target.with_name(target.name + (f".bak.{len(backup_names(target))}" if backup_names(target)
                                           else ".bak"))


def leftover_temp_files(path: str | os.PathLike) -> list[Path]:
    """Temporary files an interrupted save of ``path`` left behind."""
    target = Path(os.path.realpath(path))
    return sorted(target.parent.glob(f".{target.name}.*.tmp"))
