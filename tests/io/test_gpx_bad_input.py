"""Bad input: every failure is a TrackFileError naming the file, the line and the problem.

Limits and rules checked here come from the GPX 1.1 schema (lat in [-90, 90], lon in [-180, 180),
xsd:dateTime, xsd:decimal), the XML 1.0 specification (well-formedness) and lxml's documented
parser options (resolve_entities, no_network, load_dtd, huge_tree).
"""
import numpy as np
import pytest
from lxml import etree

from editor.io.gpx import parse as gpx_parse
from editor.io.errors import TrackFileError
from editor.io.gpx import read_gpx, read_gpx_bytes
from tests.io.samples import LOGGER_11

HEAD = ('<?xml version="1.0" encoding="UTF-8"?>\n'
        '<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="t">\n')


def track(*points: str) -> str:
    return HEAD + "<trk><trkseg>\n" + "\n".join(points) + "\n</trkseg></trk>\n</gpx>\n"


GOOD = '<trkpt lat="45.0" lon="7.0"><ele>100</ele><time>2024-05-01T10:00:00Z</time></trkpt>'

# (case, file text, problem expected in the message, line)
CASES = [
    ("lat above 90", track(GOOD, '<trkpt lat="91" lon="7"/>'),
     "track 1, segment 1, point 2: latitude '91' is outside [-90, 90] degrees", 5),
    ("lon below -180", track(GOOD, '<trkpt lat="45" lon="-180.5"/>'),
     "track 1, segment 1, point 2: longitude '-180.5' is outside [-180, 180] degrees", 5),
    ("non-numeric lat", track(GOOD, GOOD, '<trkpt lat="north" lon="7"/>'),
     "track 1, segment 1, point 3: latitude 'north' is not a number", 6),
    ("NaN lon", track('<trkpt lat="45" lon="NaN"/>'),
     "track 1, segment 1, point 1: longitude 'NaN' is not a finite number", 4),
    ("infinite lat", track('<trkpt lat="-INF" lon="7"/>'),
     "track 1, segment 1, point 1: latitude '-INF' is not a finite number", 4),
    ("missing lat", track(GOOD, '<trkpt lon="7"/>'),
     "track 1, segment 1, point 2: the point has no lat attribute (latitude)", 5),
    ("unparsable time", track(GOOD, '<trkpt lat="45" lon="7">\n<time>yesterday</time></trkpt>'),
     "track 1, segment 1, point 2: time 'yesterday' is not an ISO 8601 date and time", 6),
    ("impossible date", track('<trkpt lat="45" lon="7"><time>2024-02-30T10:00:00Z</time></trkpt>'),
     "track 1, segment 1, point 1: time '2024-02-30T10:00:00Z' is not a valid date and time", 4),
    ("time out of range", track('<trkpt lat="45" lon="7"><time>1500-01-01T00:00:00Z</time></trkpt>'),
     "time '1500-01-01T00:00:00Z' is outside the supported years 1678-2261", 4),
    ("unparsable ele", track(GOOD, '<trkpt lat="45" lon="7">\n\n<ele>high</ele></trkpt>'),
     "track 1, segment 1, point 2: elevation 'high' is not a number", 7),
    ("NaN ele", track('<trkpt lat="45" lon="7"><ele>nan</ele></trkpt>'),
     "track 1, segment 1, point 1: elevation 'nan' is not a finite number", 4),
    ("negative sat", track('<trkpt lat="45" lon="7"><sat>-2</sat></trkpt>'),
     "satellite count '-2' is not a whole number >= 0", 4),
    ("bad hdop", track('<trkpt lat="45" lon="7"><hdop>x</hdop></trkpt>'), "hdop 'x' is not a number", 4),
    ("two ele in a point", track('<trkpt lat="45" lon="7"><ele>1</ele><ele>2</ele></trkpt>'),
     "track 1, segment 1, point 1: the point has more than one <ele>", 4),
    ("bad waypoint", HEAD + '<wpt lat="45" lon="7"/>\n<wpt lat="45" lon="700"/>\n</gpx>',
     "waypoint 2: longitude '700' is outside [-180, 180] degrees", 4),
    ("bad route point", HEAD + '<rte><rtept lat="1" lon="1"/>\n<rtept lat="x" lon="1"/></rte>\n</gpx>',
     "route 1, point 2: latitude 'x' is not a number", 4),
    ("second segment", track(GOOD, "</trkseg><trkseg>", GOOD, '<trkpt lat="45" lon="7"><ele>?</ele></trkpt>'),
     "track 1, segment 2, point 2: elevation '?' is not a number", 7),
    ("not XML", "this is a note, not a track\n", "this is not an XML file: Start tag expected", 1),
    ("JSON", '{"type": "FeatureCollection"}', "this is not an XML file", 1),
    ("truncated", LOGGER_11[:LOGGER_11.index("<trkpt lat=\"46.0002") + 40],
     "the file ends before the XML is complete (cut off?)", 6),
    ("broken mid-file", track(GOOD, "<trkpt lat='1' lon='2'><ele>1</trkpt>", GOOD),
     "broken XML: Opening and ending tag mismatch: ele line 5 and trkpt", 5),
    ("undeclared prefix in an extension",
     track(GOOD, '<trkpt lat="1" lon="2"><extensions><hr:hr>1</hr:hr></extensions></trkpt>'),
     "broken XML: Namespace prefix hr on hr is not defined", 5),
    ("wrong root", '<?xml version="1.0"?>\n<kml xmlns="http://www.opengis.net/kml/2.2"/>',
     "this is not a GPX file: its root element is <kml> in namespace http://www.opengis.net/kml/2.2", 2),
    ("wrong namespace", '<gpx xmlns="http://example.com/gpx/2" version="2"/>',
     "the <gpx> element has namespace 'http://example.com/gpx/2'; expected GPX 1.1", 1),
    ("no namespace", '<gpx version="1.1" creator="x"><trk/></gpx>',
     "the <gpx> element has no namespace; expected GPX 1.1 (http://www.topografix.com/GPX/1/1)", 1),
]


@pytest.mark.parametrize("case, text, problem, line", CASES, ids=[c[0] for c in CASES])
def test_bad_input_names_file_line_and_problem(case, text, problem, line, tmp_path, read_path):
    path = tmp_path / "my ride.gpx"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(TrackFileError) as caught:
        read_gpx(path)
    error = caught.value
    assert error.path == str(path) and error.line == line
    assert problem in error.problem
    assert str(error).startswith(f"{path}, line {line}: ")


def test_empty_files(tmp_path):
    for name, content in (("empty.gpx", b""), ("blank.gpx", b"  \n\t\r\n")):
        path = tmp_path / name
        path.write_bytes(content)
        with pytest.raises(TrackFileError, match="the file is empty") as caught:
            read_gpx(path)
        assert caught.value.path == str(path)


def test_missing_file_names_the_file(tmp_path):
    with pytest.raises(TrackFileError, match="cannot read the file: No such file") as caught:
        read_gpx(tmp_path / "nowhere.gpx")
    assert "nowhere.gpx" in str(caught.value)


def test_a_bad_value_never_moves_data_between_points(read_path):
    # points with and without ele/time: each value stays with its own point
    text = track('<trkpt lat="1" lon="1"><time>2024-05-01T10:00:00Z</time></trkpt>',
                 '<trkpt lat="2" lon="2"><ele>20</ele></trkpt>',
                 '<trkpt lat="3" lon="3"><ele/><time>2024-05-01T10:00:03Z</time></trkpt>',
                 '<trkpt lat="4" lon="4"><ele>40</ele><time>2024-05-01T10:00:04Z</time></trkpt>')
    points = read_gpx_bytes(text.encode()).tracks[0].points
    assert np.array_equal(points.ele, [np.nan, 20, np.nan, 40], equal_nan=True)
    assert np.isnat(points.time[1]) and str(points.time[2]) == "2024-05-01T10:00:03.000000000"


def test_truncated_file_offers_the_points_before_the_cut(tmp_path):
    path = tmp_path / "cut.gpx"
    path.write_text(LOGGER_11[:LOGGER_11.index("<trkpt lat=\"46.0002") + 40])
    with pytest.raises(TrackFileError) as caught:
        read_gpx(path)
    partial = caught.value.partial
    # the two complete points; the cut one is left out
    assert partial.tracks[0].points.lat.tolist() == [46.0, 46.0001]
    assert partial.tracks[0].points.extra.tolist() == ["<hr:hr>90</hr:hr>", "<hr:hr>91</hr:hr>"]
    assert partial.warnings[0].startswith("only the part before line 6 could be read")


def test_cut_inside_a_multi_line_point_drops_that_point():
    text = track(GOOD, '<trkpt lat="45.1" lon="7.1">\n<ele>101</ele>\n<time>2024-05-01T10:00:01Z</time>\n</trkpt>')
    cut = text[:text.index("<time>2024-05-01T10:00:01")]
    with pytest.raises(TrackFileError) as caught:
        read_gpx_bytes(cut.encode(), "cut.gpx")
    assert caught.value.partial.tracks[0].points.lat.tolist() == [45.0]


def test_file_with_nothing_before_the_cut_has_no_partial():
    with pytest.raises(TrackFileError) as caught:
        read_gpx_bytes(HEAD.encode(), "head.gpx")
    assert caught.value.partial is None


BILLION_LAUGHS = ('<?xml version="1.0"?>\n<!DOCTYPE gpx [\n <!ENTITY a "ha">\n'
                  + "".join(f' <!ENTITY {chr(98 + i)} "{("&" + chr(97 + i) + ";") * 10}">\n' for i in range(9))
                  + ']>\n<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="x">'
                  '<metadata><name>&j;</name></metadata></gpx>')


@pytest.mark.parametrize("text", [
    BILLION_LAUGHS,
    '<?xml version="1.0"?>\n<!DOCTYPE gpx [<!ENTITY secret SYSTEM "file:///etc/hostname">]>\n'
    '<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="x"><wpt lat="1" lon="1">'
    "<name>&secret;</name></wpt></gpx>",
    '<?xml version="1.0"?>\n<!DOCTYPE gpx SYSTEM "http://192.0.2.1/evil.dtd">\n'
    '<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="x"/>',
], ids=["billion-laughs", "external-file-entity", "external-dtd-url"])
def test_entity_tricks_are_refused_before_parsing(text, monkeypatch):
    def no_parsing(*args, **kwargs):
        raise AssertionError("the file must be refused before lxml parses it")

    monkeypatch.setattr(gpx_parse.etree, "fromstring", no_parsing)
    with pytest.raises(TrackFileError, match="declares a document type .* refused for safety") as caught:
        read_gpx_bytes(text.encode(), "trick.gpx")
    assert caught.value.line == 2


@pytest.mark.parametrize("encoding", ["utf-16", "utf-16-be"])
def test_entity_tricks_in_utf16_are_refused_too(encoding, monkeypatch):
    monkeypatch.setattr(gpx_parse.etree, "fromstring", lambda *a, **k: pytest.fail("parsed"))
    text = BILLION_LAUGHS.replace('<?xml version="1.0"?>', '<?xml version="1.0" encoding="UTF-16"?>')
    with pytest.raises(TrackFileError, match="declares a document type .* refused for safety"):
        read_gpx_bytes(text.encode(encoding), "trick16.gpx")


def test_a_plain_doctype_is_harmless_and_read():
    # no entities and no outside reference: nothing to expand or fetch
    text = '<?xml version="1.0"?>\n<!DOCTYPE gpx>\n' + HEAD.split("\n", 1)[1] + "<wpt lat='1' lon='2'/></gpx>"
    assert read_gpx_bytes(text.encode(), "plain.gpx").waypoints.lon.tolist() == [2.0]


def test_huge_text_node_is_refused_with_a_clear_message():
    text = HEAD + "<wpt lat='1' lon='1'><name>" + "x" * 10_500_000 + "</name></wpt></gpx>"
    with pytest.raises(TrackFileError, match="too large .*over 10,000,000 characters.* refused for safety"):
        read_gpx_bytes(text.encode(), "huge.gpx")


def test_oversized_file_is_refused_before_reading(tmp_path, monkeypatch):
    path = tmp_path / "enormous.gpx"
    with open(path, "wb") as file:
        file.truncate(gpx_parse.MAX_FILE_BYTES + 1)  # sparse: no disk space used

    def no_reading(*args, **kwargs):
        raise AssertionError("the file must be refused before it is parsed")

    monkeypatch.setattr(gpx_parse.etree, "fromstring", no_reading)
    with pytest.raises(TrackFileError, match=r"the file is 1\.50 GB; files over 1\.5 GB are not read"):
        read_gpx(path)


def test_parser_is_configured_safely():
    options = gpx_parse._PARSER_OPTIONS
    assert options["resolve_entities"] is False and options["no_network"] is True
    assert options["load_dtd"] is False and options["huge_tree"] is False
    # an undefined entity is a well-formedness error, not an expansion
    with pytest.raises(TrackFileError, match="Entity 'nbsp' not defined"):
        read_gpx_bytes((HEAD + "<wpt lat='1' lon='1'><name>&nbsp;</name></wpt></gpx>").encode(), "e.gpx")
    assert isinstance(etree.XMLParser(**options), etree.XMLParser)
