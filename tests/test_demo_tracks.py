"""The bundled demo recordings: reproducible, valid GPX 1.1, and consistent with their truth files.

The demo files are written by ``demo_tracks/generate.py`` (numpy + pyproj only, never the editor
package), so they are an independent recording: these tests read them with lxml and pyproj alone.
"""
from __future__ import annotations

import ast
import hashlib
import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
import xmlschema
from lxml import etree
from numpy.lib.stride_tricks import sliding_window_view
from pyproj import Geod

REPO = Path(__file__).resolve().parents[1]
DEMO = REPO / "demo_tracks"
STEMS = ("demo_ride", "demo_hike", "demo_tunnel")
OUTPUTS = sorted(f"{stem}{suffix}" for stem in STEMS for suffix in (".gpx", ".truth.json", ".terrain.tif"))
# The GPX 1.1 XML Schema published with the standard (TopoGrafix, namespace
# http://www.topografix.com/GPX/1/1); size and sha256 as given in tests/reference/check-values.md.
SCHEMA_PATH = REPO / "tests" / "reference" / "gpx-1.1.xsd"
SCHEMA_SHA256 = "3bf901d17345920781ffa7b39759ca44a7f8c6ee2c7d884ca95c1bfb9a0cdc0a"
GPX_NS = "http://www.topografix.com/GPX/1/1"
PULSE_NS = "urn:x-trackwright-demo:pulse:1"
NS = {"g": GPX_NS, "pulse": PULSE_NS}
# Distances on the WGS84 ellipsoid with pyproj (Karney's geodesics), a reference library.
GEOD = Geod(ellps="WGS84")


@pytest.fixture(scope="module")
def schema() -> xmlschema.XMLSchema:
    assert hashlib.sha256(SCHEMA_PATH.read_bytes()).hexdigest() == SCHEMA_SHA256
    return xmlschema.XMLSchema(str(SCHEMA_PATH))


def load(stem: str) -> dict:
    """The recorded points of a demo file as arrays, plus its truth file."""
    root = etree.parse(str(DEMO / f"{stem}.gpx")).getroot()
    segments = [seg.findall("g:trkpt", NS) for seg in root.iterfind("g:trk/g:trkseg", NS)]
    pts = [p for seg in segments for p in seg]
    times = [p.findtext("g:time", namespaces=NS) for p in pts]
    return {
        "root": root, "truth": json.loads((DEMO / f"{stem}.truth.json").read_text(encoding="utf-8")),
        "segment_sizes": [len(seg) for seg in segments], "times": times,
        "lat": np.array([float(p.get("lat")) for p in pts]),
        "lon": np.array([float(p.get("lon")) for p in pts]),
        "ele": np.array([float(p.findtext("g:ele", namespaces=NS)) for p in pts]),
        "t": np.array([np.datetime64(s.rstrip("Z"), "ms").astype(np.int64) for s in times]) / 1000.0,
        "hr": [p.findtext("g:extensions/pulse:hr", namespaces=NS) for p in pts],
        "hdop": [p.findtext("g:hdop", namespaces=NS) for p in pts],
    }


def segment_slices(data: dict) -> list[slice]:
    ends = np.cumsum(data["segment_sizes"])
    return [slice(int(e - n), int(e)) for e, n in zip(ends, data["segment_sizes"])]


def steps_m(lat: np.ndarray, lon: np.ndarray) -> np.ndarray:
    return GEOD.inv(lon[:-1], lat[:-1], lon[1:], lat[1:])[2]


def test_generator_is_standalone():
    # The demo data must not be produced by the code it is used to test.
    tree = ast.parse((DEMO / "generate.py").read_text(encoding="utf-8"))
    imported = {a.name.split(".")[0] for n in ast.walk(tree) if isinstance(n, ast.Import) for a in n.names}
    imported |= {n.module.split(".")[0] for n in ast.walk(tree) if isinstance(n, ast.ImportFrom)}
    assert imported <= {"__future__", "argparse", "json", "math", "dataclasses", "datetime", "pathlib",
                        "xml", "numpy", "pyproj", "scenarios", "demo_terrain"}, imported
    tree = ast.parse((DEMO / "demo_terrain.py").read_text(encoding="utf-8"))
    imported = {a.name.split(".")[0] for n in ast.walk(tree) if isinstance(n, ast.Import) for a in n.names}
    imported |= {n.module.split(".")[0] for n in ast.walk(tree) if isinstance(n, ast.ImportFrom)}
    assert imported <= {"__future__", "math", "numpy", "rasterio", "scipy"}, imported


def test_generator_reproduces_the_committed_files(tmp_path):
    run = subprocess.run([sys.executable, str(DEMO / "generate.py"), "--out", str(tmp_path)],
                         capture_output=True, text=True, timeout=120)
    assert run.returncode == 0, run.stderr
    assert sorted(p.name for p in tmp_path.iterdir()) == OUTPUTS
    for name in OUTPUTS:
        assert (tmp_path / name).read_bytes() == (DEMO / name).read_bytes(), f"{name} differs"
        assert name in run.stdout
        assert (DEMO / name).stat().st_size < (3_000_000 if name.endswith(".tif") else 2_500_000)


@pytest.mark.parametrize("stem", STEMS)
def test_demo_file_is_valid_gpx_1_1(schema, stem):
    # GPX 1.1 schema (TopoGrafix): the whole file, including the lax extensions in our own namespace.
    schema.validate(str(DEMO / f"{stem}.gpx"))


def test_schema_check_is_not_vacuous(schema):
    # GPX 1.1 schema: child order inside a point is fixed, so <time> before <ele> is rejected
    # (one of the negative cases listed in check-values.md). Built from a real demo point.
    text = (DEMO / "demo_ride.gpx").read_text(encoding="utf-8")
    point = text[text.index("<trkpt "):text.index("</trkpt>") + len("</trkpt>")]
    ele = point[point.index("<ele>"):point.index("</ele>") + 6]
    time = point[point.index("<time>"):point.index("</time>") + 7]
    doc = (f'<gpx xmlns="{GPX_NS}" xmlns:pulse="{PULSE_NS}" version="1.1" creator="test">'
           f"<trk><trkseg>{{}}</trkseg></trk></gpx>")
    assert schema.is_valid(doc.format(point))
    assert not schema.is_valid(doc.format(point.replace(ele + time, time + ele)))


@pytest.mark.parametrize("stem", STEMS)
def test_counts_times_and_extensions_match_the_truth(stem):
    data = load(stem)
    truth = data["truth"]
    n = len(data["t"])
    assert n == truth["point_count"]
    assert data["segment_sizes"] == truth["segment_point_counts"]
    assert len(data["segment_sizes"]) == truth["segment_count"]
    assert data["times"][0] == truth["start_time"] and data["times"][-1] == truth["end_time"]
    dt = np.diff(data["t"])
    assert dt.min() >= 0, "times go backwards"
    # irregular sampling: duplicated times and sub-second parts exactly where the truth says
    assert np.flatnonzero(dt == 0).tolist() == [i - 1 for i in truth["duplicate_time_indices"]]
    assert np.flatnonzero(data["t"] % 1).tolist() == truth["subsecond_time_indices"]
    assert len(truth["duplicate_time_indices"]) >= 3 and len(truth["subsecond_time_indices"]) >= 3
    # heart rate in our own namespace on every point, in a human range
    assert all(h is not None and 40 <= int(h) <= 210 for h in data["hr"])
    has_hdop = [h is not None for h in data["hdop"]]
    assert all(has_hdop) or not any(has_hdop)
    assert data["root"].findtext("g:metadata/g:name", namespaces=NS) == truth["title"]
    assert "Invented" in data["root"].findtext("g:metadata/g:desc", namespaces=NS)
    assert len(data["root"].findall("g:wpt/g:name", NS)) >= 2


@pytest.mark.parametrize("stem", STEMS)
def test_gaps_stops_and_pauses_are_where_the_truth_says(stem):
    data = load(stem)
    truth, t = data["truth"], data["t"]
    long_steps = []
    for sl in segment_slices(data):
        long_steps += (sl.start + np.flatnonzero(np.diff(t[sl]) > 4)).tolist()
    assert long_steps == [g["last_index_before"] for g in truth["gaps"]]
    step_speed = steps_m(data["lat"], data["lon"]) / np.maximum(np.diff(t), 0.5)
    for gap in truth["gaps"]:
        before, after = gap["last_index_before"], gap["first_index_after"]
        assert after == before + 1
        assert data["times"][before] == gap["start_time"] and data["times"][after] == gap["end_time"]
        assert 60 <= t[after] - t[before] == gap["duration_s"] <= 120
        # false catch-up: the first fixes after the gap still move far faster than the rider did
        assert step_speed[after:after + 4].mean() > 2 * np.median(step_speed)
    starts = np.cumsum([0] + data["segment_sizes"][:-1])
    to_s = lambda stamp: np.datetime64(stamp.rstrip("Z"), "ms").astype(np.int64) / 1000.0  # noqa: E731
    for stop in truth["stops"]:
        inside = np.flatnonzero((t > to_s(stop["start_time"])) & (t < to_s(stop["end_time"])))
        if stop["logger"].startswith("paused"):
            assert len(inside) == 0
            assert np.searchsorted(t, to_s(stop["end_time"])) in starts[1:]
        else:
            assert len(inside) >= 0.8 * stop["duration_s"] / np.median(np.diff(t))
            lat, lon = data["lat"][inside], data["lon"][inside]
            spread = GEOD.inv(lon, lat, np.full_like(lon, lon.mean()), np.full_like(lat, lat.mean()))[2]
            wander = steps_m(lat, lon).sum()
            assert spread.max() < 60 and wander > 100, (spread.max(), wander)  # stands still, drifts


@pytest.mark.parametrize("stem", STEMS)
def test_spikes_stand_out_from_their_neighbours(stem):
    data = load(stem)
    lat, lon = data["lat"], data["lon"]
    off = GEOD.inv(lon[1:-1], lat[1:-1], (lon[:-2] + lon[2:]) / 2, (lat[:-2] + lat[2:]) / 2)[2]
    spikes = np.array(data["truth"]["spike_indices"])
    assert len(spikes) >= 3
    assert (off[spikes - 1] > 15).all() and np.median(off) < 3


@pytest.mark.parametrize("stem", STEMS)
def test_recorded_totals_show_the_artefacts_around_the_truth(stem):
    data = load(stem)
    truth = data["truth"]
    raw_ascent = raw_descent = decimated = 0.0
    for sl in segment_slices(data):
        rise = np.diff(data["ele"][sl])
        raw_ascent += rise[rise > 0].sum()
        raw_descent -= rise[rise < 0].sum()
        keep = np.r_[sl.start:sl.stop:20, sl.stop - 1]
        decimated += steps_m(data["lat"][keep], data["lon"][keep]).sum()
    # Noisy 1 m elevation inflates the no-threshold climb: summing every rise adds about
    # (N - 1)·σ/√π for white noise alone (check-values.md, "Climb from noisy elevation").
    assert raw_ascent > 2 * truth["true_ascent_m"] + 100
    assert raw_descent > 2 * truth["true_descent_m"] + 100
    assert raw_ascent > truth["true_ascent_through_fixes_m"] + (len(data["ele"]) - 1) * 0.1
    # ...while the recording still follows the truth: every 20th fix traces the true distance
    # closely, and a 61-point running median of elevation reaches the true extremes.
    assert decimated == pytest.approx(truth["true_distance_m"], rel=0.03)
    assert truth["true_distance_through_fixes_m"] == pytest.approx(truth["true_distance_m"], rel=1e-3)
    median = np.median(sliding_window_view(np.pad(data["ele"], 30, mode="edge"), 61), axis=1)
    assert median.max() == pytest.approx(truth["true_max_elevation_m"], abs=10)
    assert median.min() == pytest.approx(truth["true_min_elevation_m"], abs=10)
