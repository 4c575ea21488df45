"""Property tests of "nothing lost": random tool applications and hand edits undo to the exact original.

Invariants checked on every proposal of every tool, on random invented tracks:
- every proposed row that comes from an original row carries that row's payload unchanged;
- with a selection, rows outside it keep every value and payload;
- the segment structure is valid (first start 0, ordered, one payload per segment);
- inserted rows are marked as inserted (our own extension namespace);
and applying a random sequence of proposals and hand edits, then undoing all of it, gives back the
exact original arrays and payloads; redoing all gives back each edited state.
"""
from __future__ import annotations

import numpy as np
from hypothesis import HealthCheck, given, settings, strategies as st

from editor.model.payload import is_inserted, strip_gap_record
from editor.model import DeletePoints, Document, PointTable, SplitSegment, Track
from editor.model.document import check_segment_starts
from editor.model.payload import GAP_FILL_MARKER
from editor.processing.tools import TOOLS

from processing.cleaning_tracks import ORIGIN, T0
from random_tool_params import PARAMS

#: the tools that need nothing but the track (the terrain tool needs the user's rasters)
SELF_CONTAINED = {key: tool for key, tool in TOOLS.items() if not tool.requires}


def invented_track(seed: int, n: int, segments: int) -> Track:
    rng = np.random.default_rng(seed)
    dt = rng.choice([1.0, 1.0, 1.0, 2.0, 0.0], size=n)
    if n > 40 and seed % 3 == 0:
        dt[n // 2] = 90.0  # a signal-loss gap
    t = np.cumsum(dt)
    speed = np.where((t > t[-1] * 0.3) & (t < t[-1] * 0.4), 0.0, 4.0)  # a stop
    heading = np.cumsum(rng.normal(0, 0.05, n))
    x = np.cumsum(np.cos(heading) * speed * dt) + rng.normal(0, 3, n)
    y = np.cumsum(np.sin(heading) * speed * dt) + rng.normal(0, 3, n)
    if n > 10:
        x[rng.integers(1, n - 1, size=2)] += 60.0  # spikes
    ele = np.round(500 + np.cumsum(rng.normal(0, 0.3, n)) + rng.normal(0, 2, n))
    ele[rng.random(n) < 0.05] = np.nan
    lat, lon = ORIGIN.to_latlon(x, y)
    time = T0 + (t * 1e9).astype("timedelta64[ns]")
    extra = [f'<h:n xmlns:h="urn:x-test:h">{i}</h:n>' if i % 4 else None for i in range(n)]
    starts = np.unique(np.concatenate(([0], np.sort(rng.integers(1, max(n - 1, 2), size=segments - 1)))))
    starts = starts[starts < n] if n else np.array([0])
    return Track(PointTable.from_columns(lat, lon, ele=ele, time=time, extra=extra), starts,
                 name="invented", extra=None, segment_extra=[f"seg{k}" for k in range(len(starts))])


def copy_track(t: Track) -> Track:
    return Track(t.points.copy(), t.segment_starts.copy(), t.name, t.extra, list(t.segment_extra))


def check_proposal(original: Track, proposal, rows) -> None:
    source = proposal.source_rows
    kept = source >= 0
    new_extra, old_extra = proposal.points.extra, original.points.extra
    # payloads travel with their points; the only change a tool may make is the "gap as recorded"
    # marker (the spike tool adds it after a gap it lengthens, the gap tool drops it when it fills)
    assert all(strip_gap_record(new_extra[i]) == strip_gap_record(old_extra[s])
               for i, s in zip(np.flatnonzero(kept), source[kept]))
    extras = original.segment_extra if proposal.segment_extra is None else proposal.segment_extra
    check_segment_starts(np.asarray(proposal.segment_starts), len(proposal.points))
    assert len(extras) == len(proposal.segment_starts)
    assert all(is_inserted(proposal.points.extra[i]) for i in proposal.inserted)
    if rows is not None:
        outside = np.setdiff1d(np.arange(len(original.points)), rows)
        new_rows = np.flatnonzero(np.isin(source, outside))
        assert set(source[new_rows]) == set(outside)  # nothing outside the selection removed
        for key in ("lat", "lon", "ele"):
            a, b = getattr(proposal.points, key)[new_rows], getattr(original.points, key)[source[new_rows]]
            assert np.array_equal(a, b, equal_nan=True)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 10_000), n=st.integers(2, 300), segments=st.integers(1, 3),
       steps=st.lists(st.tuples(st.sampled_from(sorted(SELF_CONTAINED) + ["delete", "split"]), st.integers(0, 999),
                                st.booleans()), min_size=1, max_size=5))
def test_random_tools_and_edits_undo_to_the_exact_original(seed, n, segments, steps):
    track = invented_track(seed, n, segments)
    doc = Document(tracks=[track])
    original = copy_track(track)
    inverses, states = [], []
    for name, s, use_selection in steps:
        current = doc.tracks[0]
        m = len(current.points)
        expected = None
        if name == "delete":
            if m < 3:
                continue
            edit = DeletePoints(0, np.arange(s % (m - 1), s % (m - 1) + 2))
        elif name == "split":
            inside = [r for a, b in current.segment_bounds() for r in range(a + 1, b)]
            if not inside:
                continue
            edit = SplitSegment(0, inside[s % len(inside)])
        else:
            rows = None
            if use_selection and m > 4:
                lo = s % (m // 2)
                rows = np.arange(lo, min(m, lo + m // 2))
            tool = TOOLS[name]  # the gap filler marks the points it inserts with the payload it is given
            proposal = tool.function(current, PARAMS[name](s), rows=rows, track_index=0,
                                     **tool.optional_inputs(inserted_marker=GAP_FILL_MARKER))
            check_proposal(current, proposal, rows)
            if proposal.is_noop():
                continue
            edit = proposal.edit()
            expected = copy_track(proposal.as_track(current))
        shared = Track(current.points.shared(), current.segment_starts.copy(), current.name, current.extra,
                       list(current.segment_extra))  # what a preview worker holds: the same arrays
        before = copy_track(current)
        inverses.append(edit.apply(doc))
        states.append(copy_track(doc.tracks[0]))
        # the compact edit (deletes, inserts, changed cells) gives exactly the proposed track ...
        assert expected is None or doc.tracks[0].equals(expected)
        # ... and no edit writes into arrays that snapshots and undo steps share
        assert shared.equals(before)
    redos = [inverse.apply(doc) for inverse in reversed(inverses)]
    assert doc.tracks[0].equals(original)
    for redo, state in zip(reversed(redos), states):
        redo.apply(doc)
        assert doc.tracks[0].equals(state)


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 10_000), n=st.integers(5, 200), use_selection=st.booleans())
def test_tools_never_write_into_the_track_they_are_given(seed, n, use_selection):
    """Preview workers get a snapshot that shares the document's arrays (edits copy on write), so a
    tool writing in place would change the document behind the undo history. Frozen arrays catch it."""
    track = invented_track(seed, n, 2)
    expected = copy_track(track)
    for column in track.points.columns().values():
        column.flags.writeable = False
    rows = np.arange(n // 4, n // 2) if use_selection else None
    for name, entry in sorted(SELF_CONTAINED.items()):
        proposal = entry.function(track, PARAMS[name](seed), rows=rows, track_index=0)
        proposal.edit()
    assert track.equals(expected)
