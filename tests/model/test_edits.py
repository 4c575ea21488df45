"""Edit primitives: each apply() returns its exact inverse; do -> undo -> redo on the model itself."""
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from editor.model import (DeletePoints, Document, EditSequence, InsertPoints, MergeSegments, PointTable,
                          ReplaceTrackPoints, SetValues, SplitSegment, Track)


def make_track(n=12, starts=(0, 5, 9), rng=None):
    rng = rng or np.random.default_rng(3)
    times = np.datetime64("2026-05-01T08:00:00", "ns") + (np.arange(n) * 1_000_000_000).astype("timedelta64[ns]")
    ele = rng.normal(300, 5, n)
    ele[2] = np.nan
    pts = PointTable.from_columns(rng.uniform(45, 46, n), rng.uniform(7, 8, n), ele=ele, time=times,
                                  hdop=rng.uniform(0.8, 3, n), name=[None] * n,
                                  extra=[("payload", i) if i % 3 else None for i in range(n)])
    pts.time[4] = np.datetime64("NaT")
    return Track(pts, list(starts), name="morning", extra=("trk",), segment_extra=[None, ("seg", 1), None])


def snapshot(doc):
    t = doc.tracks[0]
    return Track(t.points.copy(), t.segment_starts.copy(), t.name, t.extra, list(t.segment_extra))


@pytest.mark.parametrize("edit", [
    SetValues(0, np.array([1, 3]), {"lat": np.array([45.5, 45.6]), "ele": np.array([1.0, np.nan])}),
    DeletePoints(0, np.array([0, 4, 5, 11])),
    DeletePoints(0, np.arange(5, 9)),  # empties segment 1 entirely
    InsertPoints(0, np.array([0, 6, 13]), PointTable.from_columns([1, 2, 3], [4, 5, 6])),
    SplitSegment(0, 2),
    MergeSegments(0, 1),
    ReplaceTrackPoints(0, PointTable.from_columns([1.0, 2.0], [3.0, 4.0]), np.array([0, 1]), [None, None]),
])
def test_do_undo_redo_is_exact(edit):
    doc = Document(tracks=[make_track()])
    original = snapshot(doc)
    inverse = edit.apply(doc)
    after = snapshot(doc)
    assert not doc.tracks[0].equals(original)
    redo = inverse.apply(doc)
    assert doc.tracks[0].equals(original)
    redo.apply(doc)
    assert doc.tracks[0].equals(after)


def test_delete_keeps_segments_and_payloads_aligned():
    doc = Document(tracks=[make_track()])
    before = doc.tracks[0].points.copy()
    DeletePoints(0, np.array([0, 5])).apply(doc)
    t = doc.tracks[0]
    assert t.segment_starts.tolist() == [0, 4, 7]
    assert t.points.extra.tolist() == [before.extra[i] for i in (1, 2, 3, 4, 6, 7, 8, 9, 10, 11)]


def test_insert_joins_segment_of_preceding_point():
    doc = Document(tracks=[make_track()])
    # result row 5 is placed before old row 5 (the first of segment 1): it extends segment 0
    InsertPoints(0, np.array([5]), PointTable.from_columns([45.0], [7.0])).apply(doc)
    assert doc.tracks[0].segment_starts.tolist() == [0, 6, 10]


def test_split_refuses_first_row_of_segment():
    doc = Document(tracks=[make_track()])
    with pytest.raises(ValueError):
        SplitSegment(0, 5).apply(doc)


def test_changed_signal_once_per_edit():
    doc = Document(tracks=[make_track()])
    seen = []
    doc.changed.connect(seen.append)
    DeletePoints(0, [1, 2]).apply(doc)
    assert seen == [0]


edit_strategy = st.sampled_from(["set", "delete", "insert", "split", "merge"])


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(edit_strategy, st.integers(0, 10_000), st.integers(1, 4)), min_size=1, max_size=12))
def test_random_edit_sequences_undo_to_the_original(ops):
    doc = Document(tracks=[make_track(rng=np.random.default_rng(7))])
    original = snapshot(doc)
    inverses, states = [], []
    for kind, seed, count in ops:
        t = doc.tracks[0]
        n = len(t.points)
        if kind == "set" and n:
            rows = np.unique(np.array([seed % n, (seed * 7) % n]))
            edit = SetValues(0, rows, {"ele": np.full(len(rows), float(seed))})
        elif kind == "delete" and n > count:
            edit = DeletePoints(0, np.arange(seed % (n - count + 1), seed % (n - count + 1) + count))
        elif kind == "insert":
            pos = seed % (n + 1)
            edit = InsertPoints(0, np.arange(pos, pos + count), PointTable.from_columns(
                np.full(count, 45.0), np.full(count, 7.0), extra=[("new", seed)] * count))
        elif kind == "split":
            inside = [r for a, b in t.segment_bounds() for r in range(a + 1, b)]
            if not inside:
                continue
            edit = SplitSegment(0, inside[seed % len(inside)])
        elif kind == "merge" and t.segment_count > 1:
            edit = MergeSegments(0, seed % (t.segment_count - 1))
        else:
            continue
        inverses.append(edit.apply(doc))
        states.append(snapshot(doc))
    redos = []
    for inverse in reversed(inverses):
        redos.append(inverse.apply(doc))
    assert doc.tracks[0].equals(original)
    for redo, state in zip(reversed(redos), states):
        redo.apply(doc)
        assert doc.tracks[0].equals(state)


def test_edit_sequence_is_one_reversible_step():
    doc = Document(tracks=[make_track()])
    original = snapshot(doc)
    seq = EditSequence((DeletePoints(0, [3]), SplitSegment(0, 2), SetValues(0, [0], {"lon": [7.25]})))
    inverse = seq.apply(doc)
    inverse.apply(doc)
    assert doc.tracks[0].equals(original)
