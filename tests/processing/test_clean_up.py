"""Clean up: the batch clean's steps on one track as one proposal, one undo step, equal to ``trackwright clean``.

Outside references: the demo generator's truth file (``demo_tracks/demo_tunnel.truth.json``, totals of the
noise-free invented ride and its ``cleaned_tolerance``) and the GPX 1.1 writer/reader round trip of the CLI's
own output. The row-map composition is checked against following labelled rows through the edits by hand
(hypothesis draws the edits).
"""
import json
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from editor.cli.entry import main
from editor.io.gpx import gpx_bytes, read_gpx, read_gpx_bytes
from editor.model import Document
from editor.model.payload import GAP_FILL_MARKER, is_inserted
from editor.processing.clean_up import (
    CLEAN_UP_KEY,
    chain_source_rows,
    clean_up_params,
    clean_up_track,
    offered_steps,
)
from editor.processing.pipeline import CleanParams, clean_document
from editor.processing.stats import track_totals
from editor.processing.step_words import describe, duration_words
from editor.units import IMPERIAL

DEMO = Path(__file__).resolve().parents[2] / "demo_tracks"


@pytest.fixture(scope="module")
def tunnel():
    return read_gpx(DEMO / "demo_tunnel.gpx")


def applied(doc: Document, proposal) -> Document:
    out = doc.copy()
    proposal.edit().apply(out)
    return out


def same_points(a, b) -> None:
    for key in ("lat", "lon", "ele"):
        assert np.array_equal(getattr(a, key), getattr(b, key), equal_nan=True), key
    assert np.array_equal(a.time.view("int64"), b.time.view("int64"))


def test_clean_up_equals_the_batch_clean_and_undo_restores_the_ride(tunnel):
    cleaned, report = clean_document(tunnel, inserted_marker=GAP_FILL_MARKER)
    as_read = tunnel.tracks[0].copy()
    result = clean_up_track(tunnel.tracks[0], 0, inserted_marker=GAP_FILL_MARKER)
    assert tunnel.tracks[0].equals(as_read)  # the track it was given is left as it was
    proposal = result.proposal
    assert proposal.tool == CLEAN_UP_KEY and proposal.track == 0
    work = tunnel.copy()
    undo = proposal.edit().apply(work)
    same_points(work.tracks[0].points, cleaned.tracks[0].points)
    assert work.tracks[0].equals(cleaned.tracks[0])  # payloads (the added points' marks) and segments too
    assert proposal.after == report.after and proposal.before == report.before
    assert proposal.after == track_totals(work.tracks[0])
    undo.apply(work)
    assert work.tracks[0].equals(tunnel.tracks[0])
    # the combined row map: every added point is new, every kept point comes from its original row
    assert int((proposal.source_rows < 0).sum()) == 124 == sum(is_inserted(e) for e in cleaned.tracks[0].points.extra)
    kept = proposal.source_rows[proposal.source_rows >= 0]
    assert np.all(np.diff(kept) > 0)
    assert len(proposal.removed) == len(tunnel.tracks[0].points) - len(kept) == 15
    assert np.array_equal(np.sort(np.concatenate([kept, proposal.removed])), np.arange(len(tunnel.tracks[0].points)))


def test_the_cleaned_tunnel_ride_is_within_the_truth_files_tolerance(tunnel):
    truth = json.loads((DEMO / "demo_tunnel.truth.json").read_text())
    after = clean_up_track(tunnel.tracks[0], 0).proposal.after
    tol = truth["cleaned_tolerance"]
    # outside reference: the noise-free scenario's totals written by demo_tracks/generate.py
    assert abs(after.distance_m - truth["true_distance_m"]) <= tol["distance_m"]
    assert abs(after.ascent_m - truth["true_ascent_m"]) <= tol["ascent_m"]
    assert abs(after.descent_m - truth["true_descent_m"]) <= tol["descent_m"]


def test_clean_up_equals_what_the_command_writes(tunnel, tmp_path, capsys):
    out = tmp_path / "tunnel-cleaned.gpx"
    assert main(["clean", str(DEMO / "demo_tunnel.gpx"), "-o", str(out)]) == 0
    written = read_gpx(out)
    result = clean_up_track(tunnel.tracks[0], 0, inserted_marker=GAP_FILL_MARKER)
    ours = read_gpx_bytes(gpx_bytes(applied(tunnel, result.proposal)))  # the same writer's text of our values
    same_points(ours.tracks[0].points, written.tracks[0].points)
    assert np.array_equal(ours.tracks[0].segment_starts, written.tracks[0].segment_starts)
    assert "distance 13.93 -> 13.01 km" in capsys.readouterr().out  # the command's summary line of the same totals
    assert f"{result.proposal.after.distance_m / 1000:.2f}" == "13.01"


@pytest.mark.parametrize("off", [("smooth",), ("despike",), ("fill_gaps", "collapse_stops")])
def test_a_step_switched_off_equals_the_batch_clean_without_it(tunnel, off):
    params = clean_up_params(off)
    cleaned, report = clean_document(tunnel, CleanParams(**{key: None for key in off}))
    result = clean_up_track(tunnel.tracks[0], 0, params)
    same_points(applied(tunnel, result.proposal).tracks[0].points, cleaned.tracks[0].points)
    assert result.proposal.after == report.after
    assert [o.tool.key for o in result.steps if not o.on] == list(off)
    assert all(o.proposal is None for o in result.steps if not o.on)


def test_every_step_off_proposes_nothing(tunnel):
    result = clean_up_track(tunnel.tracks[0], 0, clean_up_params([t.key for t in offered_steps()]))
    assert result.proposal.is_noop()
    assert [describe(o).text for o in result.steps] == ["switched off"] * 4


def test_offered_steps_follow_the_batch_defaults_and_requirements():
    assert [t.key for t in offered_steps()] == ["despike", "fill_gaps", "collapse_stops", "smooth"]
    # the terrain step is offered only with terrain; simplify is off in the batch clean, so not offered
    assert [t.key for t in offered_steps(terrain=object())] == ["despike", "fill_gaps", "collapse_stops", "smooth",
                                                                "elevation"]
    with pytest.raises(KeyError):
        clean_up_params(["no_such_step"])


def test_the_shown_track_of_a_file_with_several_is_cleaned_like_the_batch(tunnel):
    doc = Document(tracks=[tunnel.tracks[0].copy(), tunnel.tracks[0].copy()])
    doc.tracks[0].points = doc.tracks[0].points.take(np.arange(300))
    doc.tracks[0].segment_starts = np.array([0])
    cleaned, _report = clean_document(doc)
    proposal = clean_up_track(doc.tracks[1], 1).proposal
    assert proposal.track == 1
    out = applied(doc, proposal)
    assert out.tracks[0].equals(doc.tracks[0])
    same_points(out.tracks[1].points, cleaned.tracks[1].points)


def test_the_step_list_says_what_each_step_did(tunnel):
    result = clean_up_track(tunnel.tracks[0], 0, inserted_marker=GAP_FILL_MARKER)
    words = {o.tool.key: describe(o) for o in result.steps}
    assert words["despike"].text == "removed 15 points"
    assert "12 after signal loss" in words["despike"].detail
    assert words["fill_gaps"].text == "filled 1 gap (124 points added)"
    assert words["collapse_stops"].text == "found no stop"
    smooth = next(o for o in result.steps if o.tool.key == "smooth").proposal.info
    assert words["smooth"].text == (f"strength {smooth['horizontal_strength']:.0f} position, "
                                    f"{smooth['vertical_strength']:.0f} elevation (estimated)")
    assert "maximum likelihood" in words["smooth"].detail  # method names go to the secondary text
    assert "Kalman" not in words["smooth"].text
    # imperial: 350 m of wander on the demo ride's stop is 1,149 ft (1 ft = 0.3048 m, international foot)
    ride = read_gpx(DEMO / "demo_ride.gpx")
    stops = next(o for o in clean_up_track(ride.tracks[0]).steps if o.tool.key == "collapse_stops")
    metres = stops.proposal.info["distance_removed_m"]
    assert f"({metres / 0.3048:,.0f} ft of wander removed)" in describe(stops, IMPERIAL).text
    assert duration_words(144) == "2 min 24 s" and duration_words(3900) == "1 h 5 min" and duration_words(40) == "40 s"


@st.composite
def edit_chains(draw):
    """A row count and a list of steps, each deleting some rows and inserting some new ones."""
    n = draw(st.integers(0, 30))
    steps, size = [], n
    for _ in range(draw(st.integers(0, 4))):
        keep = draw(st.lists(st.booleans(), min_size=size, max_size=size))
        kept = [i for i, k in enumerate(keep) if k]
        inserts = draw(st.lists(st.integers(0, len(kept)), max_size=5))
        rows = list(kept)
        for at in sorted(inserts, reverse=True):
            rows.insert(at, -1)
        steps.append(np.array(rows, dtype=np.int64))
        size = len(rows)
    return n, steps


@settings(max_examples=150, deadline=None)
@given(edit_chains())
def test_chained_row_maps_follow_every_row_through_the_steps(chain):
    n, steps = chain
    labels = list(range(n))  # each original row carries its own number; added rows carry -1
    for step in steps:
        labels = [labels[s] if s >= 0 else -1 for s in step]
    assert chain_source_rows(steps, n).tolist() == labels


def test_a_row_map_past_its_input_is_refused():
    with pytest.raises(ValueError, match="row 3"):
        chain_source_rows([np.array([0, 3])], 3)


def test_with_terrain_the_elevation_step_runs_and_smoothing_leaves_heights_to_it(tunnel):
    from editor.terrain import Terrain

    terrain = Terrain.open([DEMO / "demo_tunnel.terrain.tif"])
    cleaned, report = clean_document(tunnel, terrain=terrain)
    result = clean_up_track(tunnel.tracks[0], 0, terrain=terrain)
    assert [o.tool.key for o in result.steps] == ["despike", "fill_gaps", "collapse_stops", "smooth", "elevation"]
    smooth = next(o for o in result.steps if o.tool.key == "smooth")
    assert smooth.params.smooth_elevation is False  # the batch's override, declared by the terrain step
    assert describe(smooth).text.startswith("position strength")
    same_points(applied(tunnel, result.proposal).tracks[0].points, cleaned.tracks[0].points)
    assert result.proposal.after == report.after
    elevation = next(o for o in result.steps if o.tool.key == "elevation")
    assert describe(elevation).text == "terrain combined with the recorded heights"
