"""The document: tracks of segments, routes, waypoints and file-level data.

A track keeps the points of all its segments in one :class:`PointTable`;
``segment_starts[k]`` is the row where segment ``k`` begins (the first is
always 0, empty segments repeat the next start). Views and tools address
points of a track by row index, which keeps selections and proposals plain
integer arrays.

Everything the model does not interpret (metadata, root attributes and
namespace declarations, track/segment/route extensions, unknown elements) is
kept in ``extra`` fields as opaque values owned by :mod:`editor.io`.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Callable

import numpy as np
from numpy.typing import ArrayLike

from .points import PointTable


class Signal:
    """A minimal callback list: ``connect``, ``disconnect``, ``emit``.

    Deliberately tiny and Qt-free so the core runs in the command line and in
    tests without an event loop.
    """

    def __init__(self) -> None:
        self._slots: list[Callable[..., Any]] = []

    def connect(self, slot: Callable[..., Any]) -> None:
        if slot not in self._slots:
            self._slots.append(slot)

    def disconnect(self, slot: Callable[..., Any]) -> None:
        if slot in self._slots:
            self._slots.remove(slot)

    def emit(self, *args: Any) -> None:
        for slot in list(self._slots):
            slot(*args)


@dataclass(eq=False)
class Track:
    """One ``<trk>``.

    Attributes
    ----------
    points : all points of all segments, in file order.
    segment_starts : int64 array, row of each segment's first point.
    name : the track's ``<name>`` or ``None``.
    extra : opaque payload for the other track children.
    segment_extra : list, one opaque payload per segment (its ``<extensions>``).
    """

    points: PointTable = field(default_factory=PointTable.empty)
    segment_starts: np.ndarray = field(default_factory=lambda: np.zeros(1, dtype=np.int64))
    name: str | None = None
    extra: Any = None
    segment_extra: list = field(default_factory=lambda: [None])

    def __post_init__(self) -> None:
        self.segment_starts = np.asarray(self.segment_starts, dtype=np.int64)
        if len(self.segment_extra) != len(self.segment_starts):
            raise ValueError("segment_extra must have one entry per segment")
        check_segment_starts(self.segment_starts, len(self.points))

    @property
    def segment_count(self) -> int:
        return len(self.segment_starts)

    def segment_bounds(self) -> list[tuple[int, int]]:
        """``(start, stop)`` row range of every segment."""
        stops = np.append(self.segment_starts[1:], len(self.points))
        return list(zip(self.segment_starts.tolist(), stops.tolist()))

    def segment_of(self, rows: ArrayLike) -> np.ndarray:
        """Segment number of each row."""
        return np.searchsorted(self.segment_starts, np.asarray(rows), side="right") - 1

    def copy(self) -> "Track":
        """An independent copy that later edits cannot reach: new point table and segment lists
        (the opaque payloads are immutable and shared)."""
        return Track(points=self.points.copy(), segment_starts=self.segment_starts.copy(), name=self.name,
                     extra=self.extra, segment_extra=list(self.segment_extra))

    def snapshot(self) -> "Track":
        """A copy that later edits cannot reach, made in no time: the point columns are shared, which is
        safe because edits never write into a document's arrays (they copy on write)."""
        return Track(points=self.points.shared(), segment_starts=self.segment_starts.copy(), name=self.name,
                     extra=self.extra, segment_extra=list(self.segment_extra))

    def equals(self, other: "Track") -> bool:
        return (self.points.equals(other.points)
                and np.array_equal(self.segment_starts, other.segment_starts)
                and self.name == other.name and self.extra == other.extra
                and list(self.segment_extra) == list(other.segment_extra))


def check_segment_starts(starts: np.ndarray, n_points: int) -> None:
    if len(starts) == 0 or starts[0] != 0:
        raise ValueError("a track needs at least one segment and the first starts at row 0")
    if np.any(np.diff(starts) < 0) or starts[-1] > n_points:
        raise ValueError(f"segment starts {starts.tolist()} are not ordered within {n_points} points")


@dataclass(eq=False)
class Route:
    """One ``<rte>``: an ordered list of route points, no segments."""

    points: PointTable = field(default_factory=PointTable.empty)
    name: str | None = None
    extra: Any = None

    def copy(self) -> "Route":
        """An independent copy (new point table; the opaque payload is shared)."""
        return Route(points=self.points.copy(), name=self.name, extra=self.extra)

    def snapshot(self) -> "Route":
        """Like :meth:`Track.snapshot`: the columns are shared."""
        return Route(points=self.points.shared(), name=self.name, extra=self.extra)

    def equals(self, other: "Route") -> bool:
        return self.points.equals(other.points) and self.name == other.name and self.extra == other.extra


@dataclass(eq=False)
class Document:
    """A whole GPX file as the editor sees it.

    ``changed`` is emitted once per applied edit with the index of the track
    it touched (``None`` for document-wide changes).
    """

    tracks: list[Track] = field(default_factory=list)
    routes: list[Route] = field(default_factory=list)
    waypoints: PointTable = field(default_factory=PointTable.empty)
    #: opaque file-level payload (root attributes, namespaces, metadata, root extensions)
    extra: Any = None
    #: where the document was read from, if anywhere
    source_path: str | None = None
    #: problems found while reading that did not stop it (unsorted times, ...), one line each
    warnings: list[str] = field(default_factory=list)
    changed: Signal = field(default_factory=Signal, repr=False)

    def copy(self) -> "Document":
        """An independent copy of the content, not tied to a file (``source_path`` is ``None``)."""
        return Document(tracks=[t.copy() for t in self.tracks], routes=[r.copy() for r in self.routes],
                        waypoints=self.waypoints.copy(), extra=self.extra, source_path=None,
                        warnings=list(self.warnings))

    def snapshot(self) -> "Document":
        """A copy for another thread (a writer), made in no time (see :meth:`Track.snapshot`); it keeps
        ``source_path``."""
        return Document(tracks=[t.snapshot() for t in self.tracks], routes=[r.snapshot() for r in self.routes],
                        waypoints=self.waypoints.shared(), extra=self.extra, source_path=self.source_path,
                        warnings=list(self.warnings))

    def equals(self, other: "Document") -> bool:
        return (len(self.tracks) == len(other.tracks)
                and all(a.equals(b) for a, b in zip(self.tracks, other.tracks))
                and len(self.routes) == len(other.routes)
                and all(a.equals(b) for a, b in zip(self.routes, other.routes))
                and self.waypoints.equals(other.waypoints)
                and self.extra == other.extra)

    @property
    def point_count(self) -> int:
        return sum(len(t.points) for t in self.tracks)
