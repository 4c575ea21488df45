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


# --- undo steps keep only what an edit changed -------------------------------------------------------

def held_arrays(value, seen=None) -> list:
    """Every numpy array an edit value keeps alive (through dataclass fields, tables, dicts, tuples)."""
    import dataclasses
    seen = {} if seen is None else seen
    if isinstance(value, np.ndarray):
        seen.setdefault(id(value), value)
    elif isinstance(value, PointTable):
        for column in value.columns().values():
            held_arrays(column, seen)
    elif dataclasses.is_dataclass(value):
        for f in dataclasses.fields(value):
            held_arrays(getattr(value, f.name), seen)
    elif isinstance(value, dict):
        for v in value.values():
            held_arrays(v, seen)
    elif isinstance(value, (list, tuple)):
        for v in value:
            held_arrays(v, seen)
    return list(seen.values())


def big_track(n=5000):
    rng = np.random.default_rng(11)
    t0 = np.datetime64("2026-05-01T08:00:00", "ns")
    pts = PointTable.from_columns(45 + np.cumsum(rng.normal(0, 2e-5, n)), 7 + np.cumsum(rng.normal(0, 2e-5, n)),
                                  ele=300 + np.cumsum(rng.normal(0, 0.5, n)),
                                  time=t0 + (np.arange(n) * 1_000_000_000).astype("timedelta64[ns]"),
                                  extra=[("payload", i) if i % 3 else None for i in range(n)])
    return Track(pts, [0, n // 2], name="long", segment_extra=[None, None])


def test_elevation_edit_shares_lat_lon_time_with_the_previous_state():
    doc = Document(tracks=[big_track()])
    previous = doc.tracks[0].points
    previous_ele = previous.ele.copy()
    inverse = SetValues(0, np.array([10]), {"ele": np.array([1234.0])}).apply(doc)
    now = doc.tracks[0].points
    for key in ("lat", "lon", "time", "extra"):
        assert getattr(now, key) is getattr(previous, key)
    assert now.ele[10] == 1234.0
    # copy on write: the previous state (held by snapshots and other undo steps) is intact
    assert not np.shares_memory(now.ele, previous.ele)
    assert np.array_equal(previous.ele, previous_ele)
    assert set(inverse.values) == {"ele"} and inverse.values["ele"].tolist() == [previous_ele[10]]


def test_elevation_smoothing_undo_step_holds_only_elevation():
    from editor.processing.smoothing import SmoothParams, smooth

    doc = Document(tracks=[big_track()])
    previous = doc.tracks[0].points
    original = snapshot(doc)
    proposal = smooth(doc.tracks[0], SmoothParams(vertical_strength=40.0, smooth_horizontal=False), track_index=0)
    expected = proposal.as_track(doc.tracks[0])
    edit = proposal.edit()
    inverse = edit.apply(doc)
    now = doc.tracks[0].points
    assert doc.tracks[0].equals(expected)
    for key in ("lat", "lon", "time", "hdop", "name", "extra"):
        assert getattr(now, key) is getattr(previous, key), key
    # the inverse keeps the old elevations (the very array the document held) and nothing else of size
    kept = held_arrays(inverse)
    assert any(a is previous.ele for a in kept)
    assert not any(np.shares_memory(a, getattr(now, key)) for a in kept for key in ("lat", "lon", "time"))
    assert not any(np.shares_memory(a, getattr(previous, key)) for a in kept for key in ("lat", "lon"))
    # the forward step shares the new elevations with the document instead of holding a copy
    assert any(a is now.ele for a in held_arrays(edit))
    inverse.apply(doc)
    assert doc.tracks[0].equals(original)


def test_removing_rows_keeps_only_the_removed_rows_in_the_undo_step():
    from editor.processing.simplify import SimplifyParams, simplify

    doc = Document(tracks=[big_track()])
    original = snapshot(doc)
    proposal = simplify(doc.tracks[0], SimplifyParams(method="vw", target_points=4500), track_index=0)
    assert len(proposal.removed) == 500
    inverse = proposal.edit().apply(doc)
    assert len(doc.tracks[0].points) == 4500
    held = sum(a.nbytes for a in held_arrays(inverse))
    # 500 removed rows of 10 columns (8 bytes each) plus their row numbers, not 5000 rows
    assert held <= 500 * 11 * 8 + 1000
    inverse.apply(doc)
    assert doc.tracks[0].equals(original)


row_maps = st.lists(st.sampled_from(["keep", "drop", "change", "insert"]), min_size=1, max_size=40)


@settings(max_examples=80, deadline=None)
@given(plan=row_maps, seed=st.integers(0, 1000), columns=st.sets(st.sampled_from(["lat", "ele", "time", "extra"])))
def test_transition_edit_gives_the_proposed_track_and_undoes_exactly(plan, seed, columns):
    from editor.model.transition import transition_edit

    rng = np.random.default_rng(seed)
    if all(op == "insert" for op in plan):
        plan = ["keep"] + plan
    n = sum(op != "insert" for op in plan)
    base = big_track(n)
    base = Track(base.points, [0], name=base.name, extra=base.extra, segment_extra=[None])
    source, old_row = [], 0
    for op in plan:
        if op == "insert":
            source.append(-1)
            continue
        if op != "drop":
            source.append(old_row)
        old_row += 1
    source = np.array(source, dtype=np.int64)
    old = base.points
    take = np.where(source >= 0, source, 0)
    new = old.take(take)
    inserted = source < 0
    new.lat[inserted] = rng.uniform(40, 41, inserted.sum())
    for i in np.flatnonzero(inserted):
        new.extra[i] = ("inserted", int(i))
    changed = np.flatnonzero(np.array([op for op in plan if op != "drop"]) == "change")
    for key in columns:
        col = getattr(new, key)
        if key == "time":
            col[changed] = col[changed] + np.timedelta64(5, "s")
        elif key == "extra":
            for i in changed:
                col[i] = ("changed", int(i))
        else:
            col[changed] = rng.normal(size=len(changed))
    starts = np.array([0])
    doc = Document(tracks=[base])
    original = snapshot(doc)
    edit = transition_edit(0, original, new, starts, source)
    inverse = edit.apply(doc)
    assert doc.tracks[0].points.equals(new)
    assert doc.tracks[0].segment_starts.tolist() == [0]
    redo = inverse.apply(doc)
    assert doc.tracks[0].equals(original)
    redo.apply(doc)
    assert doc.tracks[0].points.equals(new)
