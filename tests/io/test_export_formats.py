"""GeoJSON (RFC 7946) and CSV (RFC 4180) exports, read back with Python's json and csv modules."""
import csv
import io
import json

import pytest

from editor.io.errors import TrackFileError
from editor.io.export import CSV_COLUMNS, csv_bytes, geojson_bytes, write_document
from editor.io.gpx import read_gpx, read_gpx_bytes
from tests.io.samples import FULL_11


@pytest.fixture(scope="module")
def doc():
    return read_gpx_bytes(FULL_11.encode())


def test_geojson_structure_follows_rfc_7946(doc):
    data = json.loads(geojson_bytes(doc))
    # RFC 7946 §3.3: a FeatureCollection has "features", an array of Feature objects
    assert data["type"] == "FeatureCollection"
    kinds = [f["properties"]["kind"] for f in data["features"]]
    assert kinds == ["track", "track", "route", "waypoint", "waypoint"]
    for feature in data["features"]:
        assert feature["type"] == "Feature" and set(feature) == {"type", "geometry", "properties"}
    first = data["features"][0]
    # §3.1.5: MultiLineString coordinates are an array of LineString coordinate arrays (>= 2 positions, §3.1.4)
    assert first["geometry"]["type"] == "MultiLineString"
    lines = first["geometry"]["coordinates"]
    assert [len(line) for line in lines] == [4]  # segment 2 is empty, segment 3 has one point: not lines
    assert first["properties"]["segments"] == [1]
    # §3.1.1: positions are [longitude, latitude(, elevation)] -- the input had lat=45.00012, lon=7.00031
    assert lines[0][1] == [7.00031, 45.00012]
    # one position length per geometry: point 3 lacks ele, so elevations move to a property
    assert {len(p) for p in lines[0]} == {2}
    assert first["properties"]["elevations"] == [[850.2, 851.0, None, 852.5]]
    assert first["properties"]["times"] == [["2024-05-01T06:00:00Z", "2024-05-01T06:00:01.25Z",
                                             "2024-05-01T06:00:02.5Z", None]]
    assert first["properties"]["name"] == "Morning & climb"
    second = data["features"][1]
    assert second["geometry"]["coordinates"] == [[[7.3, 45.2, 1500.0], [7.2998, 45.1999, 1498.25]]]
    assert "elevations" not in second["properties"]
    route = data["features"][2]
    assert route["geometry"] == {"type": "LineString", "coordinates": [[7.0, 45.0], [7.1, 45.05], [7.2, 45.1]]}
    assert route["properties"]["elevations"] == [None, 900.0, None]
    hut = data["features"][3]
    assert hut["geometry"] == {"type": "Point", "coordinates": [7.2, 45.1, 1203.5]}
    assert hut["properties"] == {"kind": "waypoint", "name": 'Refuge "Étoile" <north>',
                                 "time": "2024-05-01T06:30:00Z"}
    assert data["features"][4]["geometry"]["coordinates"] == [-70.25, -33.5]


def test_track_without_drawable_segment_has_null_geometry():
    text = ('<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="t"><trk><trkseg>'
            '<trkpt lat="1" lon="2"/></trkseg></trk></gpx>')
    feature = json.loads(geojson_bytes(read_gpx_bytes(text.encode())))["features"][0]
    assert feature["geometry"] is None and feature["properties"]["times"] == []  # RFC 7946 §3.2


def test_csv_rows_read_back_with_the_csv_module(doc):
    rows = list(csv.reader(io.StringIO(csv_bytes(doc).decode("utf-8"))))
    assert tuple(rows[0]) == CSV_COLUMNS
    body = rows[1:]
    assert len(body) == doc.point_count == 7
    assert body[0] == ["1", "1", "1", "45.0", "7.0", "850.2", "2024-05-01T06:00:00Z", "", "", "", ""]
    assert body[2][:7] == ["1", "1", "3", "45.00025", "7.00066", "", "2024-05-01T06:00:02.5Z"]
    assert body[3][6] == ""  # no time
    # the point after an empty segment is segment 3, point 1, with every field
    assert body[4] == ["1", "3", "1", "45.01", "7.01", "860.0", "2024-05-01T06:10:00Z", "1.1", "1.9", "2.2", "7"]
    assert body[5][:3] == ["2", "1", "1"] and body[6][:3] == ["2", "1", "2"]
    assert [float(r[3]) for r in body] == [45.0, 45.00012, 45.00025, 45.0004, 45.01, 45.2, 45.1999]


def test_write_document_picks_the_format_by_extension(tmp_path, doc):
    for name in ("out.gpx", "out.GeoJSON", "out.json", "out.csv"):
        write_document(doc, tmp_path / name)
    assert read_gpx(tmp_path / "out.gpx").equals(doc)
    assert json.loads((tmp_path / "out.GeoJSON").read_text())["type"] == "FeatureCollection"
    assert (tmp_path / "out.json").read_bytes() == (tmp_path / "out.GeoJSON").read_bytes()
    assert (tmp_path / "out.csv").read_text().startswith("track,segment,point,lat,lon")
    with pytest.raises(TrackFileError, match="unknown file type '.kml'; save as .gpx, .geojson or .csv"):
        write_document(doc, tmp_path / "out.kml")
    assert not (tmp_path / "out.kml").exists()
