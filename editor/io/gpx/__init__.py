"""Public GPX entry points: lossless reading of GPX 1.1/1.0, GPX 1.1 writing.

>>> doc = read_gpx("ride.gpx")          # doctest: +SKIP
>>> write_gpx(doc, "ride-cleaned.gpx")  # doctest: +SKIP

Reading keeps everything the model does not interpret in opaque payloads (see
:mod:`editor.io.payload`), so writing an unedited document gives back the same
content: every element, attribute, namespace declaration and extension, with
children in GPX 1.1 schema order. What is an error and what a warning is listed
in :mod:`editor.io.gpx.values` (values), :mod:`editor.io.gpx.parse` (the file as
a whole: size, safety, broken XML with its ``partial`` document) and
:mod:`editor.io.gpx.tree` (content GPX 1.1 has no place for). Warnings go to
``Document.warnings``, one line each.

Reading takes the fast path of :mod:`editor.io.gpx.scan` for the usual file and
reads through the tree (:mod:`editor.io.gpx.tree`) otherwise; both give the same
document. Memory: about 2.5 times the file's size while reading by the fast path.

Cleaned tracks are estimates, not surveyed data, and are not for navigation;
the original file is never overwritten without a backup by :func:`write_gpx`.
"""
from __future__ import annotations

import gc

from ...model import Document
from ..errors import TrackFileError
from . import scan as gpx_scan
from .parse import MAX_FILE_BYTES, parse_root, size_problem, validate
from .tree import TreeReader
from .write import gpx_bytes, gpx_chunks, gpx_text
from ..save import atomic_write, same_file
from ..source import read_limited

__all__ = ["read_gpx", "read_gpx_bytes", "write_gpx", "gpx_bytes", "gpx_text", "MAX_FILE_BYTES"]


def read_gpx(path) -> Document:
    """Read a GPX 1.1 or 1.0 file.

    Only regular files are read (see :func:`editor.io.source.read_limited`):
    a named pipe, a device, a folder or a symbolic-link loop is refused at once.

    Raises
    ------
    TrackFileError
        naming the file, the line and the problem. For a file that is cut off
        or broken part way, its ``partial`` attribute holds the points read
        before the break (a :class:`Document` for viewing) or ``None``.
    """
    return _read(read_limited(path, MAX_FILE_BYTES, size_problem), str(path))


def read_gpx_bytes(data: bytes, path=None) -> Document:
    """Read GPX 1.1 or 1.0 from bytes; ``path`` names the source in messages and ``source_path``."""
    problem = size_problem(len(data))
    if problem:
        raise TrackFileError(path, problem)
    return _read(data, None if path is None else str(path))


def _read(data: bytes, path: str | None) -> Document:
    # Reading builds many small objects and no reference cycles; Python's cycle collector, run
    # again and again as they pile up, doubled the time of reading 100,000 tracks. Paused meanwhile.
    paused = gc.isenabled()
    gc.disable()
    try:
        return _read_unpaused(data, path)
    finally:
        if paused:
            gc.enable()


def _read_unpaused(data: bytes, path: str | None) -> Document:
    if gpx_scan.worth_trying(data):
        validate(data, path)
        doc = _read_scanned(data, path)
        if doc is not None:
            return doc
    reader = TreeReader(parse_root(data, path), path)
    return reader.document(reader.shape())


def _read_scanned(data: bytes, path: str | None) -> Document | None:
    """Read through :mod:`editor.io.gpx.scan`; ``None`` if the file needs the tree."""
    scan = gpx_scan.scan_points(data)
    if scan is None:
        return None
    try:
        root = parse_root(scan.skeleton, path)
        reader = TreeReader(root, path, scan)
        shape = reader.shape()
    except TrackFileError:
        return None  # reading through the tree names the line of the problem
    segments = [segment for track in shape.tracks for segment in track.segments]
    if sum(sum(t.counts) for t in shape.tracks) != scan.count \
            or not gpx_scan.skeleton_matches(scan, root, segments):
        return None
    if scan.waypoints is not None and reader.root_waypoint_count() != len(scan.waypoints):
        return None  # a waypoint somewhere other than on the root (inside <extensions>, say)
    try:
        return reader.document(shape)
    except TrackFileError:
        return None


def write_gpx(doc: Document, path, *, backup: bool | None = None) -> None:
    """Write ``doc`` as GPX 1.1, atomically (see :func:`editor.io.save.atomic_write`).

    ``backup=None`` keeps a backup exactly when ``path`` is the file the
    document was read from, so the original recording is never lost.
    """
    if backup is None:
        backup = same_file(path, doc.source_path)
    atomic_write(path, gpx_chunks(doc, path), backup=backup)
