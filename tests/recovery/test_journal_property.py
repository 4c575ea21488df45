"""Property: a journal replays random edit sequences (hand edits, tool applies, undo/redo, saves)
on rich files into exactly the live document, with the same undo history."""
from __future__ import annotations

import tempfile
from pathlib import Path

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from editor.model import hand_edits
from editor.geo.projection import LocalProjection
from editor.io.gpx import gpx_bytes, read_gpx, read_gpx_bytes, write_gpx
from editor.model.payload import ElementExtra, PointExtra, mark_inserted
from editor.model import DeletePoints, InsertPoints, PointTable, SetValues, SplitSegment
from editor.model.edits import EditSequence, MergeSegments
from editor.processing.tools import TOOLS
from editor.recovery import Journal, JournalRecorder, find_journals, replay
from tests.recovery.rich_gpx import rich_gpx
from tests.recovery.stack_model import StackModel
from random_tool_params import PARAMS

PAYLOADS = [None, "", "<hr:hr>77</hr:hr>",  # as the reader gives it: hr is declared on the root
            PointExtra("<magvar>1.5</magvar>", "<sym>Pin</sym><fix>2d</fix>", "<dgpsid>3</dgpsid>", None),
            PointExtra("", "<desc>a\u00e9</desc>", "", "<x:y xmlns:x=\"urn:x\"/>"), mark_inserted(None)]
OPS = ["move", "ele", "delete", "trim_before", "trim_after", "split", "merge", "insert", "sort", "payload",
       "insert_rich", "split_extra", "sequence", "tool", "undo", "redo", "save_copy", "save_over"]


def _edit(op: str, doc, s: int):
    track_index = s % len(doc.tracks)
    track = doc.tracks[track_index]
    m = len(track.points)
    rows = np.unique([s % max(m, 1), (s * 7) % max(m, 1)]) if m else np.array([], dtype=np.int64)
    projection = LocalProjection.centred_on(track.points.lat, track.points.lon) if m else None
    try:
        if op == "move" and m:
            x, y = projection.to_xy(track.points.lat[rows[:1]], track.points.lon[rows[:1]])
            return hand_edits.move_point(track, track_index, int(rows[0]), float(x[0]) + 3.0, float(y[0]) - 2.0,
                                         projection)
        if op == "ele" and m:
            return hand_edits.set_elevation(track_index, int(rows[0]), 100.0 + s % 50)
        if op == "delete" and m > 2:
            return hand_edits.delete_points(track, track_index, rows)
        if op == "trim_before":
            return hand_edits.trim_before(track, track_index, rows)
        if op == "trim_after":
            return hand_edits.trim_after(track, track_index, rows)
        if op == "split":
            return hand_edits.split_segment(track, track_index, rows)
        if op == "merge":
            return hand_edits.merge_segments(track, track_index, rows)
        if op == "insert" and m:
            return hand_edits.insert_point_after(track, track_index, rows, projection)
        if op == "sort":
            return hand_edits.sort_by_time(track, track_index)
        if op == "payload" and m:
            extra = np.empty(len(rows), dtype=object)
            extra[:] = [PAYLOADS[(s + k) % len(PAYLOADS)] for k in range(len(rows))]
            name = np.array([None if s % 2 else f"n{s}\u00e9"] * len(rows), dtype=object)
            return SetValues(track_index, rows, {"extra": extra, "name": name,
                                                 "time": np.full(len(rows), np.datetime64(1_700_000_000 + s, "s"))
                                                 .astype("datetime64[ns]"), "hdop": np.full(len(rows), 0.5)})
        if op == "insert_rich":
            new = PointTable.from_columns([46.0, 46.001], [7.0, 7.001], ele=[1.0, np.nan], sat=[4, np.nan],
                                          name=["a", None], extra=[PAYLOADS[s % 6], PAYLOADS[(s + 3) % 6]])
            return InsertPoints(track_index, np.array([0, min(m + 1, 1 + s % (m + 1))]), new)
        if op == "split_extra" and m > 2:
            inside = [r for a, b in track.segment_bounds() for r in range(a + 1, b)]
            if inside:
                return SplitSegment(track_index, inside[s % len(inside)], ElementExtra("", f'<x:s xmlns:x="urn:x">{s}</x:s>'))
        if op == "sequence" and m > 3:
            return EditSequence((SetValues(track_index, rows, {"lat": track.points.lat[rows] + 1e-5}),
                                 DeletePoints(track_index, rows[:1])))
        if op == "tool" and m > 2:
            name = sorted(PARAMS)[s % len(PARAMS)]
            proposal = TOOLS[name].function(track, PARAMS[name](s), track_index=track_index)
            return None if proposal.is_noop() else proposal.edit()
    except hand_edits.HandEditError:
        return None
    if op == "merge_direct" and track.segment_count > 1:
        return MergeSegments(track_index, 0)
    return None


def same(restored, live, saved_over: bool) -> bool:
    """Exactly equal; after a save over the original, the journal starts from the file as written,
    whose edited values are rounded to about 1 cm (editor.io.gpx.source_texts), so both must then
    hold the same values once written and read back."""
    if not saved_over:
        return restored.equals(live)
    return read_gpx_bytes(gpx_bytes(restored)).equals(read_gpx_bytes(gpx_bytes(live)))


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 1000), n=st.integers(6, 60),
       ops=st.lists(st.tuples(st.sampled_from(OPS), st.integers(0, 10_000)), min_size=1, max_size=14))
def test_restored_journal_equals_the_live_document(seed, n, ops):
    with tempfile.TemporaryDirectory() as tmp:
        source = Path(tmp) / "rich.gpx"
        source.write_text(rich_gpx(seed, n), encoding="utf-8")
        folder = Path(tmp) / "journals"
        doc = read_gpx(source)
        recorder = JournalRecorder(Journal.create(folder, source))
        stack = StackModel(doc, recorder)
        saved_over = False
        for op, s in ops:
            if op == "undo":
                stack.set_index(stack.index - 1 - s % 3)
            elif op == "redo":
                stack.set_index(stack.index + 1 + s % 3)
            elif op == "save_copy":
                stack.set_clean()
                recorder.clean_at(stack.clean)
            elif op == "save_over":  # what the window's keeper does after a save over the original
                write_gpx(doc, source)
                saved_over = True
                stack.set_clean()
                fresh = JournalRecorder(Journal.create(folder, source), recorder.live[:stack.index],
                                        offset=stack.index)
                recorder.journal.discard()
                recorder = stack.recorder = fresh
            else:
                edit = _edit(op, doc, s)
                if edit is not None:
                    stack.push(edit, f"{op} {s}")
        recorder.journal.close()  # the editor stops here
        stack.recorder = None
        found, unreadable = find_journals(folder)
        assert unreadable == []
        if stack.index - recorder.offset == (stack.clean - recorder.offset if stack.clean >= recorder.offset else -1):
            assert found == []  # nothing unsaved: nothing offered
            return
        assert len(found) == 1
        restored = replay(found[0].journal)
        assert same(restored.doc, doc, saved_over)
        assert restored.index == stack.index - recorder.offset
        labels = [c.label for c in stack.commands]
        assert [c.label for c in restored.commands] == labels[recorder.offset:len(recorder.live)]
        # Undo reaches the same states in both: the journal's bottom and the live stack there.
        stack.set_index(recorder.offset)
        assert same(restored.rewind(), doc, saved_over)
        found[0].journal.discard()
