"""The smallest reversible edit that turns a track into a proposed new state.

A tool's proposal is a whole new point table plus, for every proposed row, the
original row it came from (``source_rows``, -1 for an inserted point). Applying
it as "replace the whole table" would keep the whole previous table in the undo
history (about 190 MB per apply at a million points). Instead the step is
spelled out as what changed:

1. delete the original rows the proposal drops,
2. insert the proposal's new rows (and set its segment boundaries),
3. write the values that differ in the kept rows, column by column.

Each part's inverse stores only the rows or cells it replaced; a column that
changes everywhere (smoothing) is swapped whole, so the document and the undo
step share one array instead of copying it. Proposals that cannot be spelled
this way (reordered rows, a changed number of segments) fall back to
:class:`ReplaceTrackPoints`, which shares the unchanged columns.
"""
from __future__ import annotations

from typing import Any

import numpy as np

from .document import Track
from .edits import (
    DeletePoints,
    EditSequence,
    InsertPoints,
    ReplaceTrackPoints,
    SetValues,
)
from .points import ALL_COLUMNS, PointTable

#: When more than this share of a column's rows change, the column is replaced whole (no copy).
WHOLE_COLUMN_SHARE = 0.5


def differs(new: np.ndarray, old: np.ndarray) -> np.ndarray:
    """Per row: do two columns of one kind hold different values? (NaN equals NaN, NaT equals NaT.)"""
    if new is old:
        return np.zeros(len(new), dtype=bool)
    if new.dtype.kind == "f":
        return ~((new == old) | (np.isnan(new) & np.isnan(old)))
    if new.dtype.kind == "M":
        return new.view("int64") != old.view("int64")
    try:  # numpy compares object cells in C (payloads are strings, tuples and plain values)
        result = np.asarray(new != old)
        if result.dtype == bool and result.shape == new.shape:
            return result
    except (TypeError, ValueError):
        pass
    return np.fromiter((a is not b and bool(a != b) for a, b in zip(new.tolist(), old.tolist())),
                       dtype=bool, count=len(new))


def share_unchanged(points: PointTable, original: PointTable) -> PointTable:
    """``points`` (same rows as ``original``) with every column whose values did not change taken
    from ``original``, so that the two tables share those arrays."""
    if len(points) != len(original):
        raise ValueError("share_unchanged needs tables with the same rows")
    columns = points.columns()
    for key in ALL_COLUMNS:
        old = getattr(original, key)
        if columns[key] is not old and columns[key].dtype == old.dtype and not differs(columns[key], old).any():
            columns[key] = old
    return PointTable(**columns)


def transition_edit(track_index: int, original: Track, points: PointTable, segment_starts: np.ndarray,
                    source_rows: np.ndarray, segment_extra: list | None = None) -> Any:
    """The edit that turns ``original`` into ``points`` / ``segment_starts`` / ``segment_extra``.

    ``source_rows[i]`` is the row of ``original`` that proposed row ``i`` comes from, -1 when it
    is new. Applying the result to a document whose track ``track_index`` equals ``original``
    gives exactly the proposed track; its inverse restores exactly ``original``.
    """
    old = original.points
    source_rows = np.asarray(source_rows, dtype=np.int64)
    segment_starts = np.asarray(segment_starts, dtype=np.int64)
    kept_at = np.flatnonzero(source_rows >= 0)
    kept = source_rows[kept_at]
    same_segments = (len(segment_starts) == original.segment_count
                     and (segment_extra is None or list(segment_extra) == list(original.segment_extra)))
    if len(source_rows) != len(points) or not same_segments or np.any(np.diff(kept) <= 0) \
            or (len(kept) and (kept[0] < 0 or kept[-1] >= len(old))):
        return ReplaceTrackPoints(track_index, points, segment_starts, segment_extra)

    steps: list[Any] = []
    removed = np.setdiff1d(np.arange(len(old), dtype=np.int64), kept, assume_unique=True)
    if len(removed):
        steps.append(DeletePoints(track_index, removed))
    starts_after_delete = original.segment_starts - np.searchsorted(removed, original.segment_starts, side="left")
    inserted_at = np.flatnonzero(source_rows < 0)
    if len(inserted_at) or not np.array_equal(segment_starts, starts_after_delete):
        steps.append(InsertPoints(track_index, inserted_at, points.take(inserted_at), segment_starts))

    identity = len(kept) == len(old) == len(points)
    changes = {}
    for key in ALL_COLUMNS:
        new_col, old_col = getattr(points, key), getattr(old, key)
        if identity and new_col is old_col:
            continue
        mask = differs(new_col if len(inserted_at) == 0 else new_col[kept_at],
                       old_col if identity else old_col[kept])
        if mask.any():
            changes[key] = mask
    if changes:
        any_row = np.logical_or.reduce(list(changes.values()))
        if identity and any_row.mean() > WHOLE_COLUMN_SHARE:
            # whole columns: the document will hold these very arrays (see SetValues)
            rows = np.arange(len(points), dtype=np.int64)
            values = {key: getattr(points, key) for key in changes}
        else:
            rows = kept_at[any_row]
            values = {key: getattr(points, key)[rows] for key in changes}
        steps.append(SetValues(track_index, rows, values))
    if len(steps) == 1:
        return steps[0]
    return EditSequence(tuple(steps))


__all__ = ["WHOLE_COLUMN_SHARE", "differs", "share_unchanged", "transition_edit"]
