"""Property: any document the model can hold is written as valid GPX 1.1 and read back equal
(coordinates and elevations to the 1 cm the writer keeps for values made in memory).

Outside reference: the GPX 1.1 XML Schema (xmlschema validates every written file). Random
documents have several tracks and segments (some empty), routes, waypoints, missing values,
names with XML special characters and non-ASCII text, and random extension payloads in a
custom namespace; they are read back both through the fast scan and through the tree.
"""
from unittest import mock

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from editor.io.gpx import scan as gpx_scan
from editor.io.gpx import gpx_bytes, read_gpx_bytes
from editor.io.gpx.xml_parts import escape_attribute, escape_text
from editor.model.payload import DocumentExtra, ElementExtra, mark_inserted, point_extra
from editor.model import Document, PointTable, Route, Track

EXT = "urn:example:random-extension"

# characters XML 1.0 can hold, weighted towards the ones that need escaping
text = st.text(st.characters(min_codepoint=0x20, max_codepoint=0x2FFF, blacklist_categories=("Cs", "Cc"))
               | st.sampled_from('<>&"\'\t\n\r \u00e9\u00df\u65e5\U0001F6B2'), min_size=1, max_size=12)
no_value = st.just(np.nan)


@st.composite
def extension_xml(draw, depth=0):
    """Canonical XML (as lxml writes it) of one element of the custom namespace."""
    name = draw(st.sampled_from(["hr", "cad", "note", "power"]))
    attributes = "".join(f' {key}="{escape_attribute(draw(text))}"'
                         for key in draw(st.lists(st.sampled_from(["a", "unit"]), unique=True, max_size=2)))
    children = draw(st.lists(extension_xml(depth + 1), max_size=2)) if depth < 2 else []
    content = draw(st.one_of(st.just(""), text.map(escape_text))) + "".join(children)
    if not content:
        return f"<ex:{name}{attributes}/>"
    return f"<ex:{name}{attributes}>{content}</ex:{name}>"


extensions = st.lists(extension_xml(), min_size=1, max_size=3).map("".join)


@st.composite
def payloads(draw):
    kind = draw(st.sampled_from(["none", "none", "extensions", "slots", "marked"]))
    if kind == "none":
        return None
    if kind == "extensions":
        return draw(extensions)
    if kind == "marked":
        return mark_inserted(draw(st.one_of(st.none(), extensions)))
    after_time = draw(st.sampled_from(["", "<magvar>12.5</magvar>", "<geoidheight>47.25</geoidheight>"]))
    after_name = "".join(f"<{tag}>{escape_text(draw(text))}</{tag}>"
                         for tag in ("cmt", "desc", "sym") if draw(st.booleans()))
    after_pdop = draw(st.sampled_from(["", "<ageofdgpsdata>2.5</ageofdgpsdata><dgpsid>17</dgpsid>"]))
    return point_extra(after_time, after_name, after_pdop, draw(st.one_of(st.none(), extensions)))


def optional(strategy):
    return st.one_of(no_value, strategy)


@st.composite
def point_tables(draw, max_size=6, names=False):
    n = draw(st.integers(0, max_size))

    def column(strategy):
        return [draw(strategy) for _ in range(n)]

    times = column(st.one_of(st.none(), st.integers(0, 4_102_444_800 * 10**9)))  # 1970 .. 2100
    return PointTable.from_columns(
        column(st.floats(-90, 90)), column(st.floats(-180, 180, exclude_max=True)),
        ele=column(optional(st.floats(-500, 9000))),
        time=np.array([np.datetime64("NaT", "ns") if t is None else np.datetime64(t, "ns") for t in times],
                      dtype="datetime64[ns]"),
        hdop=column(optional(st.floats(0, 50))), vdop=column(optional(st.floats(0, 50))),
        pdop=column(optional(st.floats(0, 50))), sat=column(optional(st.integers(0, 40).map(float))),
        name=column(st.one_of(st.none(), text)) if names else None, extra=column(payloads()))


element_extras = st.one_of(st.none(), st.builds(
    ElementExtra, st.sampled_from(["", "<cmt>c</cmt><number>3</number>", "<type>ride &amp; run</type>"]),
    st.one_of(st.none(), extensions)).map(lambda e: None if e == ElementExtra() else e))  # canonical form


@st.composite
def tracks(draw):
    segments = draw(st.lists(point_tables(), min_size=1, max_size=3))
    starts = np.cumsum([0] + [len(s) for s in segments[:-1]])
    return Track(PointTable.concat(segments), starts, draw(st.one_of(st.none(), text)), draw(element_extras),
                 [draw(st.one_of(st.none(), extensions.map(lambda e: ElementExtra("", e))))
                  for _ in segments])


@st.composite
def documents(draw):
    metadata = draw(st.one_of(st.none(), text.map(lambda t: f"<metadata><name>{escape_text(t)}</name></metadata>")))
    extra = DocumentExtra(namespaces=(("ex", EXT),), creator=draw(text), metadata=metadata,
                          extensions=draw(st.one_of(st.none(), extensions)))
    routes = [Route(draw(point_tables(names=True)), draw(st.one_of(st.none(), text)), draw(element_extras))
              for _ in range(draw(st.integers(0, 2)))]
    return Document(tracks=draw(st.lists(tracks(), max_size=3)), routes=routes,
                    waypoints=draw(point_tables(names=True)), extra=extra)


def rounded(doc: Document) -> Document:
    """``doc`` as written: values made in memory are written to 1e-7 degree and 0.01 m
    (editor.io.gpx.source_texts; 1e-7 degree of latitude is 1.1 cm, common practice for ~1 cm)."""
    tables = [doc.waypoints] + [r.points for r in doc.routes] + [t.points for t in doc.tracks]
    for table in tables:
        table.lat[:] = np.round(table.lat, 7)
        table.lon[:] = np.round(table.lon, 7)
        table.lon[table.lon == 180.0] = -180.0  # the same meridian; GPX 1.1 allows [-180, 180)
        table.ele[:] = np.round(table.ele, 2)
    return doc


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(doc=documents())
def test_random_documents_round_trip_and_validate(doc, gpx_schema):
    written = gpx_bytes(doc)
    gpx_schema.validate(written.decode("utf-8"))  # source: the GPX 1.1 schema
    back = read_gpx_bytes(written)
    assert back.equals(rounded(doc))
    assert gpx_bytes(back) == written  # what was read is written with the same text
    with mock.patch.object(gpx_scan, "worth_trying", lambda data: False):
        assert read_gpx_bytes(written).equals(doc)
