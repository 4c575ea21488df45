"""``trackwright clean --dem ... --elevation ...`` on the demo tunnel ride and its invented terrain."""
from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from editor.cli import main
from editor.io.gpx import read_gpx
from editor.processing.stats import track_totals

DEMO = Path(__file__).resolve().parents[2] / "demo_tracks"


@pytest.fixture
def tunnel(tmp_path):
    shutil.copy(DEMO / "demo_tunnel.gpx", tmp_path / "in.gpx")
    (tmp_path / "tiles").mkdir()
    shutil.copy(DEMO / "demo_tunnel.terrain.tif", tmp_path / "tiles" / "a.tif")
    return tmp_path


@pytest.mark.parametrize("mode", ["combine", "replace"])
def test_clean_with_terrain_gets_the_true_climb(tunnel, capsys, mode):
    truth = json.loads((DEMO / "demo_tunnel.truth.json").read_text(encoding="utf-8"))["true_ascent_m"]
    out = tunnel / f"out-{mode}.gpx"
    assert main(["clean", str(tunnel / "in.gpx"), "-o", str(out), "--dem", str(tunnel / "tiles"),
                 "--elevation", mode]) == 0
    text = capsys.readouterr().out
    assert f"elevation ({mode})" in text and "mean sea level" in text
    ascent = track_totals(read_gpx(out).tracks[0]).ascent_m
    if mode == "combine":
        # the recording's shape is kept through the tunnel (reported), the terrain fixes the rest;
        # the raw recording says 214 m
        assert "where the terrain is off the recording" in text
        assert ascent == pytest.approx(truth, rel=0.05)
    else:
        # terrain only: the points filled through the tunnel get the ground above it, a ridge of up
        # to 140 m (demo_tracks/generate.py TUNNEL_COVER_M) -- terrain is the ground, not the tunnel
        assert truth + 100 < ascent < truth + 160


def test_elevation_without_dem_is_refused(tunnel, capsys):
    assert main(["clean", str(tunnel / "in.gpx"), "-o", str(tunnel / "o.gpx"), "--elevation", "fill"]) == 2
    assert "--dem" in capsys.readouterr().err


def test_bad_dem_is_named(tunnel, capsys):
    bad = tunnel / "broken.tif"
    bad.write_bytes(b"no raster")
    assert main(["clean", str(tunnel / "in.gpx"), "-o", str(tunnel / "o.gpx"), "--dem", str(bad)]) == 2
    assert "broken.tif" in capsys.readouterr().err
    assert not (tunnel / "o.gpx").exists()
