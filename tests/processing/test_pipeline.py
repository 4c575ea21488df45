"""The full clean of a document on an invented hike with known truth; output against the GPX 1.1 schema."""
from dataclasses import replace

import numpy as np
import pytest
import xmlschema
from cleaning_tracks import hill_profile, track_from_xy, wandering_path

from editor.geo.distance import geodesic_steps
from editor.io.gpx import gpx_bytes, read_gpx_bytes
from editor.model.payload import GAP_FILL_MARKER, is_inserted
from editor.model import Document, PointTable
from editor.processing.cleaning_base import planar, replan
from editor.processing.pipeline import CleanParams, clean_document, summary_line
from editor.processing.stats import climb
from editor.processing.gaps import GapParams, fill_gaps
from editor.processing.simplify import SimplifyParams
from editor.processing.smoothing import SmoothParams, smooth
from editor.processing.spikes import SpikeParams, despike
from editor.processing.stops import StopParams, collapse_stops
from editor.processing.tools import TOOLS

from shared_files import GPX_XSD as SCHEMA  # noqa: E402


def invented_hike(seed=21):
    """40 minutes of hiking over rolling hills with the usual faults, and the truth behind it."""
    rng = np.random.default_rng(seed)
    n = 2400
    t, x, y = wandering_path(n, 1.3, seed=seed)
    along = np.concatenate(([0.0], np.cumsum(np.hypot(np.diff(x), np.diff(y)))))
    ele = hill_profile(along, height=40.0, length=1500.0)
    # a five-minute rest: the truth stands still
    rest = slice(1200, 1500)
    x[rest], y[rest], ele[rest] = x[1200], y[1200], ele[1200]
    x[1500:] += x[1200] - x[1500]
    y[1500:] += y[1200] - y[1500]
    ele[1500:] += ele[1200] - ele[1500]
    truth = {"x": x.copy(), "y": y.copy(), "ele": ele.copy(), "t": t}
    mx, my = x + rng.normal(0, 3, n), y + rng.normal(0, 3, n)
    me = np.round(ele + rng.normal(0, 3, n))  # GNSS elevation, several times noisier, 1 m steps
    spikes = np.arange(150, 1150, 100)
    mx[spikes] += rng.choice([-1, 1], len(spikes)) * rng.uniform(40, 80, len(spikes))
    keep = np.ones(n, dtype=bool)
    keep[1800:1830] = False  # thirty seconds without signal
    track = track_from_xy(mx[keep], my[keep], me[keep], t[keep])
    return track, truth


def truth_totals(truth):
    d = np.hypot(np.diff(truth["x"]), np.diff(truth["y"])).sum()
    return d, climb(truth["ele"], 0.0)[0]


def test_cleaned_hike_is_much_closer_to_the_truth():
    track, truth = invented_hike()
    doc = Document(tracks=[track])
    cleaned, report = clean_document(doc, CleanParams())
    true_distance, true_ascent = truth_totals(truth)
    raw, done = report.before, report.after
    assert raw.ascent_m - true_ascent > 100  # the noise adds a lot of climbing, even with the climb threshold
    # measured: raw ascent ~2,800 m and distance ~13.7 km against a true 150 m and 2.73 km;
    # cleaned within a few metres of both
    assert abs(done.ascent_m - true_ascent) < 0.05 * abs(raw.ascent_m - true_ascent)
    assert abs(done.distance_m - true_distance) < 0.02 * true_distance
    # the totals in the report are the statistics of the cleaned track (one source of numbers)
    p = cleaned.tracks[0].points
    assert done.distance_m == pytest.approx(geodesic_steps(p.lat, p.lon).sum(), rel=1e-6)
    assert [s.tool for s in report.steps] == ["despike", "fill_gaps", "collapse_stops", "smooth"]
    by_tool = {s.tool: s for s in report.steps}
    assert by_tool["despike"].removed >= 10
    assert by_tool["fill_gaps"].inserted >= 25
    assert by_tool["collapse_stops"].changed > 200
    assert report.activities == ["walk"]
    assert "distance" in summary_line(report) and "->" in summary_line(report)
    # the input document is untouched
    assert doc.tracks[0].points.equals(track.points)


def test_output_validates_against_the_gpx_11_schema():
    # The GPX 1.1 schema as published (tests/reference/gpx-1.1.xsd), loaded with xmlschema.
    track, _ = invented_hike(seed=22)
    cleaned, _ = clean_document(Document(tracks=[track]), CleanParams(simplify=SimplifyParams(tolerance_m=2.0)),
                                inserted_marker=GAP_FILL_MARKER)
    data = gpx_bytes(cleaned)
    xmlschema.XMLSchema(str(SCHEMA)).validate(data)
    again = read_gpx_bytes(data)
    marked = [is_inserted(e) for e in again.tracks[0].points.extra]
    assert 0 < sum(marked) < len(marked)


def test_steps_equal_applying_each_proposal_in_turn():
    # clean_document must be exactly the editor's path: tool -> proposal -> edit().apply(doc). The batch
    # projects the track once (centred on the track as read) and reprojects only the rows a step moved;
    # given that same projection, each tool gives the very same result.
    track, _ = invented_hike(seed=23)
    doc = Document(tracks=[track])
    params = CleanParams(activity="walk", smooth=SmoothParams(horizontal_strength=60, vertical_strength=60))
    cleaned, _ = clean_document(doc, params)
    projection = planar(track).projection
    steps = ((despike, SpikeParams(activity="walk")), (fill_gaps, GapParams(activity="walk")),
             (collapse_stops, StopParams(activity="walk")),
             (smooth, SmoothParams(horizontal_strength=60, vertical_strength=60)))
    manual, own = doc.copy(), doc.copy()
    for fn, p in steps:
        fn(manual.tracks[0], p, plane=planar(manual.tracks[0], projection)).edit().apply(manual)
        fn(own.tracks[0], p).edit().apply(own)  # each tool centring its own projection
    assert cleaned.tracks[0].equals(manual.tracks[0])
    # the choice of projection centre moves results by micrometres only (measured: 2e-6 m)
    a, b = cleaned.tracks[0].points, own.tracks[0].points
    assert len(a) == len(b)
    assert np.abs(a.lat - b.lat).max() * 111e3 < 1e-4 and np.abs(a.lon - b.lon).max() * 77e3 < 1e-4
    assert np.allclose(a.ele, b.ele, rtol=0, atol=1e-6, equal_nan=True)


def test_plane_kept_up_to_date_equals_projecting_again():
    track, _ = invented_hike(seed=26)
    plane = planar(track)
    proposal = despike(track, SpikeParams(activity="walk"), plane=plane)
    after = proposal.as_track(track)
    again = planar(after, plane.projection)
    updated = replan(plane, after, proposal.source_rows, proposal.changed)
    assert np.array_equal(updated.x, again.x) and np.array_equal(updated.y, again.y)
    assert updated.bounds == again.bounds and np.array_equal(updated.t_s, again.t_s, equal_nan=True)
    filled = fill_gaps(after, GapParams(activity="walk"), plane=updated)
    moved = filled.as_track(after)
    assert np.array_equal(replan(updated, moved, filled.source_rows, filled.changed).x,
                          planar(moved, plane.projection).x)
    with pytest.raises(ValueError):
        despike(track, SpikeParams(activity="walk"), plane=updated)  # a plane of another track


def test_known_totals_are_reused_not_recomputed():
    track, _ = invented_hike(seed=27)
    before = despike(track, SpikeParams(activity="walk")).before
    marker = replace(before, ascent_m=-1.0)  # a value track_totals can never give
    for fn, p in ((despike, SpikeParams(activity="walk")), (fill_gaps, GapParams(activity="walk")),
                  (collapse_stops, StopParams(activity="walk")), (smooth, SmoothParams())):
        assert fn(track, p, before=marker).before is marker
    # smoothing without the posterior standard deviations gives the same points
    fast = smooth(track, SmoothParams(horizontal_strength=50, vertical_strength=50), want_std=False)
    full = smooth(track, SmoothParams(horizontal_strength=50, vertical_strength=50))
    assert fast.points.equals(full.points) and fast.sigma_h_m is None and full.sigma_h_m is not None


def test_skipped_steps_and_untouched_content():
    track, _ = invented_hike(seed=24)
    waypoints = PointTable.from_columns([46.5], [7.5], ele=[900.0], name=["hut"])
    other = track_from_xy(np.arange(5.0), np.zeros(5), None, None)  # no timestamps at all
    doc = Document(tracks=[track, other], waypoints=waypoints, extra="opaque file data")
    cleaned, report = clean_document(doc, CleanParams(despike=None, fill_gaps=None, collapse_stops=None, smooth=None,
                                                      simplify=SimplifyParams(tolerance_m=1.0)))
    assert [s.tool for s in report.steps] == ["simplify", "simplify"]
    assert cleaned.waypoints.equals(waypoints) and cleaned.extra == "opaque file data"
    assert cleaned.tracks[1].points.equals(other.points.take([0, 4]))  # a straight line keeps its ends
    nothing, rep = clean_document(doc, CleanParams(despike=None, fill_gaps=None, collapse_stops=None, smooth=None))
    assert nothing.equals(doc) and rep.steps == [] and rep.before == rep.after


def test_progress_is_reported_in_order():
    track, _ = invented_hike(seed=25)
    seen = []
    clean_document(Document(tracks=[track]), CleanParams(smooth=None), progress=lambda f, what: seen.append(f))
    assert seen == sorted(seen) and seen[0] == 0.0 and seen[-1] == 1.0


def test_registry_names_every_tool():
    assert set(TOOLS) == {"smooth", "despike", "fill_gaps", "collapse_stops", "elevation", "simplify"}
    for key, tool in TOOLS.items():
        assert callable(tool.function) and tool.label and tool.key == key
        tool.params()  # every parameter class has documented defaults


def test_a_broken_tool_module_fails_loudly():
    # no fallback list: a tool module that cannot be imported stops the registry (and the window) from loading
    import subprocess
    import sys
    from pathlib import Path

    code = ("import sys\n"
            "class Broken:\n"
            "    def find_spec(self, name, path=None, target=None):\n"
            "        if name == 'editor.processing.stops':\n"
            "            raise ImportError('broken on purpose')\n"
            "sys.meta_path.insert(0, Broken())\n"
            "import editor.processing.tools\n")
    run = subprocess.run([sys.executable, "-c", code], cwd=Path(__file__).resolve().parents[2],
                         capture_output=True, text=True, timeout=60)
    assert run.returncode != 0 and "broken on purpose" in run.stderr
