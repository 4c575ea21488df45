"""Reversible edit primitives on a document.

Every edit is a small immutable value with ``apply(doc) -> Edit``: applying it
changes the document and returns the edit that reverts it exactly, so an undo
command only has to keep the pair::

    inverse = edit.apply(doc)   # do / redo
    edit = inverse.apply(doc)   # undo

Each ``apply`` emits ``doc.changed`` once with the track index it touched.
Row indices always refer to the track's concatenated point table.

Edits never write into the arrays of a document's point tables: they build new
tables that share every column they leave alone (copy on write). Undo steps,
previews and worker snapshots can therefore hold the same arrays as the document,
and an undo step costs only what its edit changed.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping

import numpy as np

from .document import Document, check_segment_starts
from .points import PointTable, replace_values


def _rows(index) -> np.ndarray:
    rows = np.unique(np.asarray(index, dtype=np.int64))
    return rows


@dataclass(frozen=True)
class SetValues:
    """Overwrite some columns of some rows (moving a point, smoothing)."""

    track: int
    rows: np.ndarray
    values: Mapping[str, np.ndarray]

    def apply(self, doc: Document) -> "SetValues":
        t = doc.tracks[self.track]
        # Copy on write: the previous table (and every column this edit leaves alone) may be
        # held by other undo steps, previews and worker snapshots.
        t.points, old = replace_values(t.points, self.rows, self.values)
        doc.changed.emit(self.track)
        return SetValues(self.track, self.rows, old)


@dataclass(frozen=True)
class DeletePoints:
    """Remove rows; segments that lose all points stay as empty segments."""

    track: int
    rows: np.ndarray
    #: segment starts after the deletion; computed when ``None``
    segment_starts: np.ndarray | None = None

    def apply(self, doc: Document) -> "InsertPoints":
        t = doc.tracks[self.track]
        rows = _rows(self.rows)
        removed = t.points.take(rows)
        old_starts = t.segment_starts.copy()
        keep = np.ones(len(t.points), dtype=bool)
        keep[rows] = False
        if self.segment_starts is None:
            new_starts = old_starts - np.searchsorted(rows, old_starts, side="left")
        else:
            new_starts = np.asarray(self.segment_starts, dtype=np.int64)
        t.points = t.points.take(keep)
        check_segment_starts(new_starts, len(t.points))
        t.segment_starts = new_starts
        doc.changed.emit(self.track)
        # The deleted rows' old indices are exactly their positions once re-inserted.
        return InsertPoints(self.track, rows, removed, old_starts)


@dataclass(frozen=True)
class InsertPoints:
    """Insert ``points`` so that they end up at rows ``positions`` (sorted).

    When ``segment_starts`` is ``None`` an inserted point joins the segment of
    the point before it (or the first segment when inserted at row 0).
    """

    track: int
    positions: np.ndarray
    points: PointTable
    segment_starts: np.ndarray | None = None

    def apply(self, doc: Document) -> DeletePoints:
        t = doc.tracks[self.track]
        positions = np.asarray(self.positions, dtype=np.int64)
        if len(positions) != len(self.points):
            raise ValueError("one position per inserted point is required")
        total = len(t.points) + len(positions)
        if len(positions) and (np.any(np.diff(positions) <= 0) or positions[0] < 0 or positions[-1] >= total):
            raise ValueError("insert positions must be increasing and inside the result")
        is_new = np.zeros(total, dtype=bool)
        is_new[positions] = True
        old_starts = t.segment_starts.copy()
        if self.segment_starts is None:
            # anchor = old row the new point is placed before
            anchors = positions - np.arange(len(positions))
            new_starts = old_starts + np.searchsorted(anchors, old_starts, side="right")
            new_starts[0] = 0
        else:
            new_starts = np.asarray(self.segment_starts, dtype=np.int64)
        merged = {}
        for key, old_col in t.points.columns().items():
            col = np.empty(total, dtype=old_col.dtype)
            col[~is_new] = old_col
            col[is_new] = getattr(self.points, key)
            merged[key] = col
        t.points = PointTable(**merged)
        check_segment_starts(new_starts, total)
        t.segment_starts = new_starts
        doc.changed.emit(self.track)
        return DeletePoints(self.track, positions, old_starts)


@dataclass(frozen=True)
class SplitSegment:
    """Start a new segment at ``row`` (which must be inside a segment, not its first row)."""

    track: int
    row: int
    #: payload for the new (second) segment's extensions
    new_segment_extra: Any = None

    def apply(self, doc: Document) -> "MergeSegments":
        t = doc.tracks[self.track]
        seg = int(t.segment_of(self.row))
        start, stop = t.segment_bounds()[seg]
        if not start < self.row < stop:
            raise ValueError(f"row {self.row} is not inside segment {seg} ({start}..{stop - 1})")
        t.segment_starts = np.insert(t.segment_starts, seg + 1, self.row)
        t.segment_extra = t.segment_extra[:seg + 1] + [self.new_segment_extra] + t.segment_extra[seg + 1:]
        doc.changed.emit(self.track)
        return MergeSegments(self.track, seg)


@dataclass(frozen=True)
class MergeSegments:
    """Join segment ``segment`` with the one after it (the first one's extensions are kept)."""

    track: int
    segment: int

    def apply(self, doc: Document) -> "RestoreBoundary":
        t = doc.tracks[self.track]
        if not 0 <= self.segment < t.segment_count - 1:
            raise ValueError(f"segment {self.segment} has no following segment to merge with")
        row = int(t.segment_starts[self.segment + 1])
        removed_extra = t.segment_extra[self.segment + 1]
        t.segment_starts = np.delete(t.segment_starts, self.segment + 1)
        t.segment_extra = t.segment_extra[:self.segment + 1] + t.segment_extra[self.segment + 2:]
        doc.changed.emit(self.track)
        return RestoreBoundary(self.track, self.segment, row, removed_extra)


@dataclass(frozen=True)
class RestoreBoundary:
    """Inverse of a merge: puts a segment boundary back exactly, even next to an empty segment."""

    track: int
    segment: int
    row: int
    segment_extra: Any = None

    def apply(self, doc: Document) -> MergeSegments:
        t = doc.tracks[self.track]
        t.segment_starts = np.insert(t.segment_starts, self.segment + 1, self.row)
        t.segment_extra = t.segment_extra[:self.segment + 1] + [self.segment_extra] + t.segment_extra[self.segment + 1:]
        doc.changed.emit(self.track)
        return MergeSegments(self.track, self.segment)


@dataclass(frozen=True)
class ReplaceTrackPoints:
    """Swap a track's whole point table and segmentation (how tool proposals are applied)."""

    track: int
    points: PointTable
    segment_starts: np.ndarray
    segment_extra: list | None = None  # None keeps the current per-segment payloads

    def apply(self, doc: Document) -> "ReplaceTrackPoints":
        t = doc.tracks[self.track]
        old = ReplaceTrackPoints(self.track, t.points, t.segment_starts.copy(), list(t.segment_extra))
        extra = list(t.segment_extra) if self.segment_extra is None else list(self.segment_extra)
        starts = np.asarray(self.segment_starts, dtype=np.int64)
        if len(extra) != len(starts):
            raise ValueError("segment_extra must have one entry per segment")
        check_segment_starts(starts, len(self.points))
        # Shared, not copied: edits never write into a document's arrays (they copy on write), so
        # the undo history and the document can hold the same columns.
        t.points = self.points.shared()
        t.segment_starts = starts
        t.segment_extra = extra
        doc.changed.emit(self.track)
        return old


@dataclass(frozen=True)
class EditSequence:
    """Several edits applied as one step (e.g. delete spikes then insert gap points)."""

    edits: tuple

    def apply(self, doc: Document) -> "EditSequence":
        inverses = [e.apply(doc) for e in self.edits]
        return EditSequence(tuple(reversed(inverses)))


def apply_all(doc: Document, edits) -> list:
    """Apply edits in order; return their inverses in undo order."""
    return [e.apply(doc) for e in edits][::-1]


__all__ = ["SetValues", "DeletePoints", "InsertPoints", "SplitSegment", "MergeSegments",
           "RestoreBoundary", "ReplaceTrackPoints", "EditSequence", "apply_all"]
