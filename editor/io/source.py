"""Reading a track file's bytes without hanging or running out of memory on odd inputs.

A path may name something that is not an ordinary file: a named pipe (opening
it for reading waits for a writer, forever if there is none), a device such as
``/dev/zero`` or ``/dev/urandom`` (reported size 0, endless content), a folder
or a symbolic-link loop. Each is refused with one line naming what it is.

The file is opened without blocking (``O_NONBLOCK``, so opening a pipe returns
at once) and checked with ``fstat`` on the open descriptor (no race between a
check and the open). Reading stops one byte past the size limit whatever size
the file system reported, so a file that grows while being read, or lies about
its size, still cannot exhaust memory.
"""
from __future__ import annotations

import errno
import os
import stat
from collections.abc import Callable

from .errors import TrackFileError

_KINDS = ((stat.S_ISDIR, "a folder"), (stat.S_ISFIFO, "a named pipe"), (stat.S_ISCHR, "a device"),
          (stat.S_ISBLK, "a disk device"), (stat.S_ISSOCK, "a socket"))


def kind_of(mode: int) -> str:
    """What a non-regular file is, in words."""
    for test, words in _KINDS:
        if test(mode):
            return words
    return "not an ordinary file"


def not_regular(path: str | os.PathLike, mode: int) -> TrackFileError:
    return TrackFileError(path, f"is {kind_of(mode)}, not an ordinary file; only ordinary track files are read")


def read_limited(path: str | os.PathLike, limit: int, too_large: Callable[[int], str | None]) -> bytes:
    """The bytes of the regular file ``path``, at most ``limit`` of them.

    ``too_large(size)`` words the refusal of a file over ``limit`` (it is asked
    with the reported size first, then with the size actually read).
    """
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_BINARY", 0)
    try:
        fd = os.open(path, flags)
    except OSError as error:
        if error.errno == errno.ELOOP:
            raise TrackFileError(path, "is a symbolic link that leads back to itself (a link loop)") from None
        raise TrackFileError(path, f"cannot read the file: {error.strerror or error}") from None
    try:
        info = os.fstat(fd)
        if not stat.S_ISREG(info.st_mode):
            raise not_regular(path, info.st_mode)
        problem = too_large(info.st_size)
        if problem:
            raise TrackFileError(path, problem)
        if hasattr(os, "set_blocking"):
            os.set_blocking(fd, True)
        with os.fdopen(fd, "rb", closefd=True) as file:
            fd = -1
            data = file.read(limit + 1)  # a regular file's read stops at its end or here
        if len(data) > limit:
            raise TrackFileError(path, too_large(len(data)) or "the file is too large to read")
        return data
    except OSError as error:
        raise TrackFileError(path, f"cannot read the file: {error.strerror or error}") from None
    finally:
        if fd >= 0:
            os.close(fd)
