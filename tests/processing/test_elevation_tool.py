"""The elevation tool on small invented terrain: modes, a bridge, coverage gaps, the selection."""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "terrain"))
from terrain_rasters import write_raster

from editor.model.document import Track
from editor.model.points import PointTable
from editor.processing.elevation import ElevationParams, terrain_elevation
from editor.terrain import Terrain

RES = 1.0 / 3600  # 1 arc-second
LAT0, LON0 = 46.0, 7.0
M_LAT = 111_195.0
M_LON = M_LAT * np.cos(np.radians(LAT0 + 0.01))


def ground(north_m, east_m):
    """An invented valley: a 40 m deep trough across the east axis at 1500 m, and a gentle slope."""
    return 600 + 0.02 * north_m - 40 * np.exp(-((east_m - 1500) / 150) ** 2)


@pytest.fixture
def terrain(tmp_path):
    n = 150  # 150 arc-seconds: about 4.6 km north-south, 3.2 km east-west
    north = (n - np.arange(n) - 0.5) * RES * M_LAT * 1.0
    east = (np.arange(n) + 0.5) * RES * M_LON
    data = ground(north[:, None], east[None, :])
    write_raster(tmp_path / "v.tif", data, west=LON0, north=LAT0 + n * RES, xres=RES, yres=RES, dtype="float32")
    return Terrain.open([tmp_path / "v.tif"]), n * RES * M_LAT


def _track(east_m, north_m, ele, t=None):
    lat = LAT0 + north_m / M_LAT
    lon = LON0 + east_m / M_LON
    t = np.arange(len(east_m), dtype=float) if t is None else t
    time = np.datetime64("2026-06-01T08:00:00", "ns") + (t * 1e9).astype("timedelta64[ns]")
    return Track(PointTable.from_columns(lat, lon, ele=ele, time=time), [0], segment_extra=[None])


def test_replace_follows_the_ground_and_reports_outside(terrain):
    terr, _ = terrain
    rng = np.random.default_rng(0)
    east = np.linspace(100, 3600, 700) + rng.normal(0, 2, 700)   # the raster ends about 3.2 km east
    north = np.full(700, 1000.0) + rng.normal(0, 2, 700)
    track = _track(east, north, None)
    prop = terrain_elevation(track, ElevationParams(mode="replace"), terrain=terr)
    inside = east < 3100
    # within 6 m everywhere: the smoother rounds the 40 m deep, 150 m wide trough's bottom by ~5 m
    assert np.abs(prop.points.ele[inside] - ground(1000.0, east[inside])).max() < 6.0
    out = prop.reasons["outside terrain"]
    assert len(out) > 40 and east[out].min() > 3150
    assert np.isnan(prop.points.ele[out]).all()               # nothing made up outside the terrain
    assert f"{len(out)} outside the terrain files" in prop.info["terrain_report"]


def test_combine_trusts_the_recording_on_a_bridge(terrain):
    # A barometric recording crosses the valley on a level bridge (600 + 20 m = 620 m) with a
    # +25 m calibration offset; the terrain dips 40 m under the bridge. The combine mode keeps the
    # bridge level, removes the offset, and reports the stretch.
    terr, _ = terrain
    rng = np.random.default_rng(1)
    east = np.linspace(100, 2900, 700)
    true_ele = ground(1000.0, east)
    bridge = (east > 1200) & (east < 1800)
    true_ele[bridge] = 620.0
    rec = true_ele + 25 + rng.normal(0, 0.3, 700)
    prop = terrain_elevation(_track(east, np.full(700, 1000.0), rec), ElevationParams(), terrain=terr)
    assert prop.info["mode"] == "combine"
    assert prop.info["disagreements"], "the bridge is reported"
    first, last, worst = prop.info["disagreements"][0]
    assert east[first] < 1400 and east[last] > 1600 and worst > 15
    assert np.abs(prop.points.ele[bridge] - 620.0).max() < 4.0   # offset carried over from both banks
    assert np.abs(prop.points.ele[~bridge] - true_ele[~bridge]).max() < 4.0


def test_fill_only_changes_rows_without_elevation(terrain):
    terr, _ = terrain
    east = np.linspace(100, 2000, 400)
    true_ele = ground(800.0, east)
    rec = true_ele + 10.0
    rec[150:200] = np.nan
    prop = terrain_elevation(_track(east, np.full(400, 800.0), rec), ElevationParams(mode="fill"), terrain=terr)
    keep = np.isfinite(rec)
    np.testing.assert_array_equal(prop.points.ele[keep], rec[keep])
    # the filled rows continue the recording's own reference (its +10 m offset)
    assert np.abs(prop.points.ele[150:200] - (true_ele[150:200] + 10.0)).max() < 3.0


def test_selection_limits_the_change(terrain):
    terr, _ = terrain
    east = np.linspace(100, 2000, 300)
    rec = ground(800.0, east) + 5
    prop = terrain_elevation(_track(east, np.full(300, 800.0), rec), ElevationParams(mode="replace"),
                             terrain=terr, rows=np.arange(100, 150))
    changed = np.flatnonzero(prop.changed)
    assert changed.min() >= 100 and changed.max() < 150


def test_a_track_beside_the_terrain_is_smoothed_and_reported(terrain):
    # No terrain under the track: nothing is made up; the recorded heights are smoothed instead (the
    # batch clean leaves elevation to this step when terrain is given), and fill changes nothing.
    terr, _ = terrain
    rng = np.random.default_rng(5)
    east = np.arange(300.0) * 5
    rec = 500 + 0.05 * east + rng.normal(0, 3, 300)
    track = _track(east, np.full(300, 90_000.0), rec)
    prop = terrain_elevation(track, ElevationParams(mode="replace"), terrain=terr)
    assert "terrain height found for 0 of 300 points" in prop.info["terrain_report"]
    assert "smoothed instead" in prop.info["terrain_report"]
    assert len(prop.reasons["outside terrain"]) == 300
    assert np.std(prop.points.ele - (500 + 0.05 * east)) < 0.5 * np.std(rec - (500 + 0.05 * east))
    assert terrain_elevation(track, ElevationParams(mode="fill"), terrain=terr).is_noop()


def test_unknown_mode_is_refused(terrain):
    with pytest.raises(ValueError, match="mode"):
        terrain_elevation(_track(np.arange(5.0), np.zeros(5), None), ElevationParams(mode="x"), terrain=terrain[0])
