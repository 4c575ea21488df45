"""Lossless GPX reading and GPX 1.1 writing, checked against the GPX 1.1 schema and lxml.

Outside references: the GPX 1.1 XML Schema (tests/reference/gpx-1.1.xsd, validated with
xmlschema), lxml's own parse of what we write, and Python's datetime for ISO 8601 instants.
"""
import numpy as np
import pytest
from lxml import etree

from editor.io.gpx import gpx_bytes, read_gpx, read_gpx_bytes, write_gpx
from editor.model.payload import DocumentExtra, ElementExtra, PointExtra
from tests.io.samples import FULL_10, FULL_11, GPX11, LOGGER_11, MISPLACED_11, canonical, parse


def roundtrip(text: str, gpx_schema):
    doc = read_gpx_bytes(text.encode(), "sample.gpx")
    written = gpx_bytes(doc)
    gpx_schema.validate(written.decode())  # source: the GPX 1.1 schema
    again = read_gpx_bytes(written)
    assert again.equals(doc)
    assert gpx_bytes(again) == written  # writing is stable
    return doc, written


@pytest.mark.parametrize("text", [FULL_11, LOGGER_11, FULL_10, MISPLACED_11],
                         ids=["full-1.1", "logger-1.1", "full-1.0", "misplaced-1.1"])
def test_written_files_validate_and_read_back_equal(text, gpx_schema, read_path):
    roundtrip(text, gpx_schema)


def test_unedited_full_file_is_semantically_identical(gpx_schema, read_path):
    doc, written = roundtrip(FULL_11, gpx_schema)
    original, copy = parse(FULL_11.encode()), parse(written)
    # every element, attribute, text and extension, in order (numbers and instants compared by value)
    assert canonical(copy) == canonical(original)
    # every namespace declaration of the root
    assert copy.nsmap == original.nsmap
    assert copy.get("creator") == "Hand & Pen 2.0"


def test_full_file_values(read_path):
    doc = read_gpx_bytes(FULL_11.encode())
    assert [t.name for t in doc.tracks] == ["Morning & climb", "Descent"]
    first = doc.tracks[0]
    assert first.segment_starts.tolist() == [0, 4, 4]
    assert first.points.lat.tolist() == [45.0, 45.00012, 45.00025, 45.0004, 45.01]
    assert np.isnan(first.points.ele[2]) and first.points.ele[4] == 860.0
    # "+02:00" offsets become UTC; sub-second parts kept (ISO 8601)
    assert str(first.points.time[2]) == "2024-05-01T06:00:02.500000000"
    assert str(first.points.time[1]) == "2024-05-01T06:00:01.250000000"
    assert np.isnat(first.points.time[3])
    assert first.points.name.tolist() == [None, None, None, None, "Bridge"]
    assert first.points.sat[4] == 7 and first.points.hdop[4] == 1.1 and first.points.pdop[4] == 2.2
    assert first.points.extra[1] == "<hr:hr>103</hr:hr><pw:watts>180</pw:watts>"
    assert first.points.extra[3] is None
    assert first.segment_extra == [ElementExtra("", "<pw:lap>1</pw:lap>"), None, None]
    assert first.extra.after_name.startswith("<cmt>cold</cmt><desc>first part</desc><src>logger</src><link")
    assert first.extra.extensions == '<pw:summary avg="212"/>'
    waypoint = doc.waypoints
    assert waypoint.name.tolist() == ['Refuge "Étoile" <north>', "Cerro Ñandú"]
    assert str(waypoint.time[0]) == "2024-05-01T06:30:00.000000000"
    assert isinstance(waypoint.extra[0], PointExtra)
    assert waypoint.extra[0].after_time == "<magvar>2.5</magvar><geoidheight>48.1</geoidheight>"
    assert waypoint.extra[0].after_pdop == "<ageofdgpsdata>3.5</ageofdgpsdata><dgpsid>17</dgpsid>"
    assert doc.routes[0].name == "Planned loop" and len(doc.routes[0].points) == 3
    extra = doc.extra
    assert isinstance(extra, DocumentExtra)
    assert extra.namespaces == (("hr", "urn:example:heart-rate"), ("pw", "urn:example:power"),
                                ("xsi", "http://www.w3.org/2001/XMLSchema-instance"))
    assert extra.metadata.startswith("<metadata>") and "<bounds" in extra.metadata
    assert extra.extensions == "<pw:file-note>kept</pw:file-note>"
    assert doc.warnings == []


def test_gpx_10_maps_into_gpx_11(gpx_schema, read_path):
    doc, written = roundtrip(FULL_10, gpx_schema)
    assert doc.extra.source_version == "1.0"
    meta = parse(doc.extra.metadata.replace("<metadata>", f'<metadata xmlns="{GPX11}">', 1).encode())
    ns = {"g": GPX11}
    assert meta.findtext("g:name", namespaces=ns) == "Lake tour"
    assert meta.find("g:author/g:email", ns).attrib == {"id": "bea", "domain": "example.net"}
    assert meta.find("g:link", ns).get("href") == "https://example.net/lake"
    assert meta.findtext("g:link/g:text", namespaces=ns) == "Lake page"
    assert meta.find("g:bounds", ns).get("maxlat") == "44.1"
    track = doc.tracks[0]
    assert track.points.ele.tolist() == [305.5, 306.0]
    first = track.points.extra[0]
    # course and speed have no place in 1.1: kept in our extension namespace, with the 1.0 foreign element
    assert 'tw:course xmlns:tw="urn:x-trackwright:gpx:1">87.5<' in first.extensions
    assert ">4.25</tw:speed>" in first.extensions and "<ext:temp>18.5</ext:temp>" in first.extensions
    assert first.after_name == "<fix>3d</fix>"
    assert track.extra.after_name == '<link href="https://example.net/lap"/>'
    assert doc.waypoints.extra[0].after_name == ('<link href="https://example.net/pier"><text>Pier info</text>'
                                                 "</link><sym>Anchor</sym>")
    root = parse(written)
    assert root.get("version") == "1.1" and etree.QName(root).namespace == GPX11
    assert "http://www.topografix.com/GPX/1/1/gpx.xsd" in root.get(
        "{http://www.w3.org/2001/XMLSchema-instance}schemaLocation")
    assert GPX11 in root.nsmap.values() and "http://www.topografix.com/GPX/1/0" not in root.nsmap.values()


def test_misplaced_content_moves_into_extensions_with_warnings(read_path):
    doc = read_gpx_bytes(MISPLACED_11.encode())
    point_extra = doc.tracks[0].points.extra[0]
    assert point_extra == ('<tw:speed xmlns:tw="urn:x-trackwright:gpx:1">3.5</tw:speed><x:temp>20</x:temp>')
    assert "<x:loose>free</x:loose>" in doc.extra.extensions
    assert any("moved into <extensions>" in w for w in doc.warnings)
    assert any("unknown attribute" in w for w in doc.warnings)


def test_scan_and_tree_read_the_same(monkeypatch):
    from editor.io.gpx import scan as gpx_scan

    for text in (FULL_11, LOGGER_11):
        fast = read_gpx_bytes(text.encode())
        with monkeypatch.context() as patch:
            patch.setattr(gpx_scan, "worth_trying", lambda data: False)
            slow = read_gpx_bytes(text.encode())
        assert fast.equals(slow) and fast.warnings == slow.warnings


def test_scan_is_used_for_a_plain_logger_file(monkeypatch):
    from editor.io import gpx as gpx_module

    used = []
    original = gpx_module._read_scanned
    monkeypatch.setattr(gpx_module, "_read_scanned", lambda *a: used.append(original(*a)) or used[-1])
    read_gpx_bytes(LOGGER_11.encode())
    read_gpx_bytes(FULL_11.encode())
    assert all(doc is not None for doc in used) and len(used) == 2


def test_file_reading_sets_source_and_writes_atomically(tmp_path, gpx_schema):
    source = tmp_path / "ride.gpx"
    source.write_bytes(FULL_11.encode())
    doc = read_gpx(source)
    assert doc.source_path == str(source)
    target = tmp_path / "ride-copy.gpx"
    write_gpx(doc, target)
    gpx_schema.validate(str(target))
    assert read_gpx(target).equals(doc)
    assert not list(tmp_path.glob("*.bak*"))  # a new file needs no backup


def test_writing_over_the_source_keeps_a_backup(tmp_path):
    source = tmp_path / "ride.gpx"
    source.write_bytes(LOGGER_11.encode())
    doc = read_gpx(source)
    write_gpx(doc, source)
    assert (tmp_path / "ride.gpx.bak").read_bytes() == LOGGER_11.encode()
    assert read_gpx(source).equals(doc)


@pytest.mark.parametrize("variant", ["bom", "crlf", "latin-1", "single-point", "empty-track", "no-points",
                                     "lon-first", "entities"])
def test_encodings_line_ends_and_small_files(variant, read_path):
    latin = ('<?xml version="1.0" encoding="ISO-8859-1"?>\n<gpx xmlns="http://www.topografix.com/GPX/1/1" '
             'version="1.1" creator="t"><wpt lat="1" lon="2"><name>Café Münster</name></wpt>'
             '<trk><trkseg><trkpt lat="1" lon="2"><name>Gîte</name></trkpt></trkseg></trk></gpx>')
    texts = {
        "bom": b"\xef\xbb\xbf" + LOGGER_11.encode(),
        "crlf": LOGGER_11.replace("\n", "\r\n").encode(),
        "latin-1": latin.encode("latin-1"),
        "single-point": LOGGER_11.replace(LOGGER_11[LOGGER_11.index("<trkpt lat=\"46.0001"):
                                                    LOGGER_11.index("</trkseg>")], "").encode(),
        "empty-track": b'<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="t">'
                       b"<trk><name>x</name></trk><trk><trkseg/><trkseg></trkseg></trk></gpx>",
        "no-points": b'<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="t"/>',
        "lon-first": LOGGER_11.replace('lat="46.0001" lon="8.0001"', 'lon="8.0001" lat="46.0001"').encode(),
        "entities": LOGGER_11.replace("<ele>401.0</ele>", "<ele>4&#48;1.0</ele>").replace(
            "<name>Evening</name>", "<name>Eve &amp; &#x263C;</name>").encode(),
    }
    doc = read_gpx_bytes(texts[variant], f"{variant}.gpx")
    again = read_gpx_bytes(gpx_bytes(doc))
    assert again.equals(doc)
    if variant == "latin-1":
        assert doc.waypoints.name[0] == "Café Münster" and doc.tracks[0].points.name[0] == "Gîte"
    elif variant == "empty-track":
        assert [t.segment_starts.tolist() for t in doc.tracks] == [[0], [0, 0]]
    elif variant == "no-points":
        assert doc.tracks == [] and len(doc.waypoints) == 0
    elif variant == "single-point":
        assert len(doc.tracks[0].points) == 1
    elif variant == "entities":
        assert doc.tracks[0].points.ele[1] == 401.0 and doc.tracks[0].name == "Eve & \u263c"
    else:
        assert doc.tracks[0].points.lat.tolist() == [46.0, 46.0001, 46.0002]
        assert doc.tracks[0].points.extra.tolist() == ["<hr:hr>90</hr:hr>", "<hr:hr>91</hr:hr>",
                                                       "<hr:hr>93</hr:hr>"]


def test_out_of_order_and_repeated_times_are_warnings(read_path):
    text = LOGGER_11.replace("2024-06-01T18:00:01Z", "2024-06-01T17:59:59Z")
    text = text.replace("2024-06-01T18:00:02Z", "2024-06-01T17:59:59Z")
    doc = read_gpx_bytes(text.encode())
    assert doc.warnings == [
        "track 1 segment 1: 1 point has a time earlier than the point before (first at line 5)",
        "track 1 segment 1: 1 point repeats the time of the point before (first at line 6)"]


def test_times_without_zone_are_utc_with_a_warning(read_path):
    doc = read_gpx_bytes(LOGGER_11.replace("18:00:01Z", "18:00:01").encode())
    assert str(doc.tracks[0].points.time[1]) == "2024-06-01T18:00:01.000000000"
    assert doc.warnings == ["1 time had no time zone and was read as UTC"]


def test_new_coordinates_are_written_to_a_centimetre_and_times_in_full(gpx_schema):
    """Values made in memory (not read from a file) are written compactly (issue 9, item 15):
    1e-7 degree (<= 1.1 cm, common practice) and 0.01 m; times keep every nanosecond."""
    from editor.model import Document, PointTable, Track

    lat = np.array([45.123456789012345, -0.00001, 89.99999999, 1e-300])
    lon = np.array([7.1, -179.999999999, 179.9999999999, -0.0])
    times = np.array(["2024-01-01T00:00:00.123456789", "2024-01-01T00:00:01", "NaT",
                      "1969-12-31T23:59:59.5"], dtype="datetime64[ns]")
    ele = np.array([1e17, np.nan, -0.5, 123.456789012])
    doc = Document(tracks=[Track(PointTable.from_columns(lat, lon, ele=ele, time=times))],
                   extra=DocumentExtra(creator="precision test"))
    written = gpx_bytes(doc)
    gpx_schema.validate(written.decode())
    assert b"e-" not in written and b"e+" not in written  # xsd:decimal has no exponent
    back = read_gpx_bytes(written).tracks[0].points
    assert np.array_equal(back.lat, np.round(lat, 7)) and np.array_equal(back.ele, np.round(ele, 2), equal_nan=True)
    assert back.lon.tolist() == [7.1, -180.0, -180.0, 0.0]  # 179.9999999999 rounds to 180, written as -180
    assert np.array_equal(back.time, times, equal_nan=True)
    assert b'lat="45.1234568" lon="7.1"' in written and b'lat="0" lon="0"' in written
    assert b"<time>2024-01-01T00:00:00.123456789Z</time>" in written
    assert b"<time>1969-12-31T23:59:59.5Z</time>" in written


def test_new_document_is_written_with_our_creator(gpx_schema):
    from editor.model import Document, PointTable

    doc = Document(waypoints=PointTable.from_columns([1.0], [2.0]))
    written = gpx_bytes(doc)
    gpx_schema.validate(written.decode())
    assert parse(written).get("creator") == "Trackwright"
    assert read_gpx_bytes(written).extra == DocumentExtra(creator="Trackwright")


def test_longitude_180_is_written_as_minus_180(gpx_schema):
    from editor.model import Document, PointTable

    doc = Document(waypoints=PointTable.from_columns([10.0], [180.0]))
    written = gpx_bytes(doc)
    gpx_schema.validate(written.decode())  # the schema allows [-180, 180)
    assert read_gpx_bytes(written).waypoints.lon.tolist() == [-180.0]


def test_opaque_children_are_put_in_schema_order(gpx_schema, read_path):
    text = ('<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="t">'
            '<wpt lat="1" lon="2"><dgpsid>4</dgpsid><sym>Flag</sym><name>W</name><cmt>c</cmt><magvar>3</magvar>'
            '<ele>5</ele></wpt></gpx>')
    doc = read_gpx_bytes(text.encode())
    assert doc.waypoints.extra[0] == PointExtra("<magvar>3</magvar>", "<cmt>c</cmt><sym>Flag</sym>",
                                                "<dgpsid>4</dgpsid>", None)
    gpx_schema.validate(gpx_bytes(doc).decode())  # the input's order was not valid GPX 1.1; ours is


def test_comments_inside_extensions_are_kept_and_others_dropped(gpx_schema):
    text = LOGGER_11.replace("<extensions><hr:hr>91</hr:hr>", "<!-- a pause --><extensions><hr:hr>91</hr:hr>"
                             "<!-- sensor reconnected -->")
    doc = read_gpx_bytes(text.encode())
    assert doc.tracks[0].points.extra[1] == "<hr:hr>91</hr:hr><!-- sensor reconnected -->"
    written = gpx_bytes(doc)
    gpx_schema.validate(written.decode())
    assert b"a pause" not in written and read_gpx_bytes(written).equals(doc)
