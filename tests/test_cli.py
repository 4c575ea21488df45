"""The batch command: stats and export, exit codes and error lines."""
import json
import subprocess
import sys
from pathlib import Path

import pytest

from editor.cli import main
from editor.io.gpx import read_gpx

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = """<?xml version="1.0" encoding="UTF-8"?>
<gpx version="1.1" creator="test" xmlns="http://www.topografix.com/GPX/1/1"
     xmlns:pulse="urn:x-test:pulse"><trk><name>climb</name><trkseg>
<trkpt lat="46.0" lon="7.0"><ele>500</ele><time>2026-05-01T08:00:00Z</time><extensions><pulse:hr>120</pulse:hr></extensions></trkpt>
<trkpt lat="46.001" lon="7.0"><ele>520</ele><time>2026-05-01T08:00:40Z</time><extensions><pulse:hr>130</pulse:hr></extensions></trkpt>
<trkpt lat="46.002" lon="7.0"><ele>540</ele><time>2026-05-01T08:01:20Z</time><extensions><pulse:hr>140</pulse:hr></extensions></trkpt>
</trkseg></trk></gpx>
"""
REQUIRED_KEYS = {"points", "segments", "distance_m", "ascent_m", "descent_m", "duration_s", "moving_time_s",
                 "max_speed_mps"}


@pytest.fixture
def sample(tmp_path):
    path = tmp_path / "climb.gpx"
    path.write_text(SAMPLE)
    return path


def test_stats_json_is_one_object_with_the_promised_keys(sample, capsys):
    assert main(["stats", str(sample), "--json"]) == 0
    out = capsys.readouterr().out
    data = json.loads(out)  # exactly one JSON object: json.loads fails on trailing content
    assert REQUIRED_KEYS <= data.keys()
    assert data["points"] == 3 and data["segments"] == 1
    assert data["ascent_m"] == pytest.approx(40.0)
    assert data["duration_s"] == pytest.approx(80.0)
    # two meridian steps of 0.001 degree at 46 N: about 111.2 m each (WGS84 meridian arc, pyproj Geod)
    from pyproj import Geod
    ref = Geod(ellps="WGS84").inv([7.0, 7.0], [46.0, 46.001], [7.0, 7.0], [46.001, 46.002])[2]
    ref = sum(ref)
    assert data["distance_m"] == pytest.approx(ref, rel=1e-9)


def test_stats_text(sample, capsys):
    assert main(["stats", str(sample)]) == 0
    out = capsys.readouterr().out
    assert "ascent" in out and "40 m" in out


def test_bad_input_exits_2_with_one_line(tmp_path, capsys):
    bad = tmp_path / "broken.gpx"
    bad.write_text(SAMPLE.replace('lat="46.001"', 'lat="146.001"'))
    assert main(["stats", str(bad)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "broken.gpx" in err and "line" in err and "Traceback" not in err


def test_missing_file_exits_2(tmp_path, capsys):
    assert main(["stats", str(tmp_path / "nope.gpx")]) == 2
    assert "nope.gpx" in capsys.readouterr().err


def test_export_refuses_to_overwrite_the_input(sample, capsys):
    before = sample.read_bytes()
    assert main(["export", str(sample), "-o", str(sample)]) == 2
    assert "overwrite" in capsys.readouterr().err
    assert sample.read_bytes() == before


@pytest.mark.parametrize("suffix", [".gpx", ".geojson", ".csv"])
def test_export_formats(sample, tmp_path, suffix):
    out = tmp_path / f"copy{suffix}"
    assert main(["export", str(sample), "-o", str(out)]) == 0
    assert out.stat().st_size > 0
    if suffix == ".gpx":
        assert read_gpx(out).equals(read_gpx(sample))  # the lossless round trip
    elif suffix == ".geojson":
        assert json.loads(out.read_text())["type"] == "FeatureCollection"


def test_python_dash_m_editor_is_the_same_command(sample):
    result = subprocess.run([sys.executable, "-m", "editor", "stats", str(sample), "--json"], cwd=ROOT,
                            capture_output=True, text=True, timeout=60)
    assert result.returncode == 0
    assert json.loads(result.stdout)["points"] == 3


def test_one_word_for_the_climb_threshold_and_one_suffix_for_a_cleaned_copy(capsys):
    # the option is --climb-threshold: the output, its help and the README say "climb threshold" too
    demo = Path(__file__).resolve().parents[1] / "demo_tracks" / "demo_tunnel.gpx"
    assert main(["stats", str(demo)]) == 0
    out = capsys.readouterr().out
    assert "climb threshold 5 m" in out and "dead band" not in out
    with pytest.raises(SystemExit):
        main(["stats", "--help"])
    assert "climb threshold" in capsys.readouterr().out
    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text()
    assert "dead band" not in readme and "climb threshold" in readme
    # the window's default copy name and clean -d's output name share one suffix
    from editor.cli.clean import plan_outputs
    from editor.io.provenance import (
        cleaned_copy_name as window_name,  # editor.app.files uses this one
    )

    planned = plan_outputs([demo], None, Path("/nonexistent-out"), overwrite=False)
    assert planned[0].name == window_name(demo).name == "demo_tunnel-cleaned.gpx"
