"""Hand-written GPX documents (invented rides and places) and helpers shared by the io tests."""
from __future__ import annotations

from datetime import datetime, timezone

from lxml import etree

GPX11 = "http://www.topografix.com/GPX/1/1"
GPX10 = "http://www.topografix.com/GPX/1/0"
#: The GPX 1.1 XML Schema published with the standard (see tests/reference/check-values.md).
from shared_files import GPX_XSD as SCHEMA_PATH  # noqa: E402

# Every GPX 1.1 feature: namespaces (a heart-rate extension namespace, a power one, xsi),
# metadata with every child, waypoints with every child, a route, two tracks with several
# segments, segment/track/root extensions, missing values, sub-second and offset times,
# names with XML special characters and non-ASCII text.
FULL_11 = """<?xml version="1.0" encoding="UTF-8"?>
<gpx xmlns="http://www.topografix.com/GPX/1/1" xmlns:hr="urn:example:heart-rate"
     xmlns:pw="urn:example:power" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance"
     xsi:schemaLocation="http://www.topografix.com/GPX/1/1 http://www.topografix.com/GPX/1/1/gpx.xsd"
     version="1.1" creator="Hand &amp; Pen 2.0">
  <metadata>
    <name>Col du Lièvre &amp; back</name>
    <desc>An invented ride &lt;test&gt;</desc>
    <author><name>Ana</name><email id="ana" domain="example.org"/><link href="https://example.org/ana"><text>Ana</text></link></author>
    <copyright author="Ana"><year>2024</year><license>https://example.org/licence</license></copyright>
    <link href="https://example.org/ride"><text>Ride page</text><type>text/html</type></link>
    <time>2024-05-01T06:00:00Z</time>
    <keywords>bike, hills</keywords>
    <bounds minlat="45.0" minlon="7.0" maxlat="45.2" maxlon="7.3"/>
    <extensions><pw:device model="X1">unit &amp; co</pw:device></extensions>
  </metadata>
  <wpt lat="45.1" lon="7.2">
    <ele>1203.5</ele>
    <time>2024-05-01T08:30:00+02:00</time>
    <magvar>2.5</magvar>
    <geoidheight>48.1</geoidheight>
    <name>Refuge "Étoile" &lt;north&gt;</name>
    <cmt>water here</cmt>
    <desc>Spring behind the hut</desc>
    <src>survey</src>
    <link href="https://example.org/hut"/>
    <sym>Water Source</sym>
    <type>water</type>
    <fix>3d</fix>
    <sat>9</sat>
    <hdop>0.9</hdop>
    <vdop>1.4</vdop>
    <pdop>1.7</pdop>
    <ageofdgpsdata>3.5</ageofdgpsdata>
    <dgpsid>17</dgpsid>
    <extensions><pw:note>refill</pw:note></extensions>
  </wpt>
  <wpt lat="-33.5" lon="-70.25"><name>Cerro Ñandú</name></wpt>
  <rte>
    <name>Planned loop</name>
    <cmt>draft</cmt>
    <number>3</number>
    <type>road</type>
    <extensions><pw:plan>v2</pw:plan></extensions>
    <rtept lat="45.0" lon="7.0"><name>Start</name></rtept>
    <rtept lat="45.05" lon="7.1"><ele>900</ele></rtept>
    <rtept lat="45.1" lon="7.2"><sym>Flag</sym></rtept>
  </rte>
  <trk>
    <name>Morning &amp; climb</name>
    <cmt>cold</cmt>
    <desc>first part</desc>
    <src>logger</src>
    <link href="https://example.org/t1"><text>t1</text></link>
    <number>1</number>
    <type>cycling</type>
    <extensions><pw:summary avg="212"/></extensions>
    <trkseg>
      <trkpt lat="45.0" lon="7.0">
        <ele>850.2</ele>
        <time>2024-05-01T06:00:00Z</time>
        <extensions><hr:hr>101</hr:hr></extensions>
      </trkpt>
      <trkpt lat="45.00012" lon="7.00031">
        <ele>851.0</ele>
        <time>2024-05-01T06:00:01.250Z</time>
        <extensions><hr:hr>103</hr:hr><pw:watts>180</pw:watts></extensions>
      </trkpt>
      <trkpt lat="45.00025" lon="7.00066">
        <time>2024-05-01T08:00:02.5+02:00</time>
        <extensions><hr:hr>104</hr:hr></extensions>
      </trkpt>
      <trkpt lat="45.0004" lon="7.001">
        <ele>852.5</ele>
      </trkpt>
      <extensions><pw:lap>1</pw:lap></extensions>
    </trkseg>
    <trkseg>
    </trkseg>
    <trkseg>
      <trkpt lat="45.01" lon="7.01">
        <ele>860</ele>
        <time>2024-05-01T06:10:00Z</time>
        <name>Bridge</name>
        <sat>7</sat>
        <hdop>1.1</hdop>
        <vdop>1.9</vdop>
        <pdop>2.2</pdop>
        <extensions><hr:hr>120</hr:hr></extensions>
      </trkpt>
    </trkseg>
  </trk>
  <trk>
    <name>Descent</name>
    <trkseg>
      <trkpt lat="45.2" lon="7.3"><ele>1500</ele><time>2024-05-01T07:00:00Z</time></trkpt>
      <trkpt lat="45.1999" lon="7.2998"><ele>1498.25</ele><time>2024-05-01T07:00:01Z</time></trkpt>
    </trkseg>
  </trk>
  <extensions><pw:file-note>kept</pw:file-note></extensions>
</gpx>
"""

# A plain logger file: one track, uniform points with one heart-rate extension each.
LOGGER_11 = """<?xml version="1.0" encoding="UTF-8"?>
<gpx version="1.1" creator="logger" xmlns="http://www.topografix.com/GPX/1/1" xmlns:hr="urn:example:heart-rate">
  <trk><name>Evening</name><trkseg>
    <trkpt lat="46.0" lon="8.0"><ele>400.0</ele><time>2024-06-01T18:00:00Z</time><extensions><hr:hr>90</hr:hr></extensions></trkpt>
    <trkpt lat="46.0001" lon="8.0001"><ele>401.0</ele><time>2024-06-01T18:00:01Z</time><extensions><hr:hr>91</hr:hr></extensions></trkpt>
    <trkpt lat="46.0002" lon="8.0002"><ele>402.0</ele><time>2024-06-01T18:00:02Z</time><extensions><hr:hr>93</hr:hr></extensions></trkpt>
  </trkseg></trk>
</gpx>
"""

# GPX 1.0: top-level file information, url/urlname, per-point course and speed, an element of
# another namespace directly in a point (allowed in 1.0), a route.
FULL_10 = """<?xml version="1.0" encoding="UTF-8"?>
<gpx version="1.0" creator="Old Logger 1.2" xmlns="http://www.topografix.com/GPX/1/0"
     xmlns:ext="urn:example:old" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance"
     xsi:schemaLocation="http://www.topografix.com/GPX/1/0 http://www.topografix.com/GPX/1/0/gpx.xsd">
  <name>Lake tour</name>
  <desc>Around the lake</desc>
  <author>Bea</author>
  <email>bea@example.net</email>
  <url>https://example.net/lake</url>
  <urlname>Lake page</urlname>
  <time>2023-09-10T09:00:00Z</time>
  <keywords>lake</keywords>
  <bounds minlat="44.0" minlon="6.0" maxlat="44.1" maxlon="6.1"/>
  <wpt lat="44.05" lon="6.05">
    <ele>310</ele>
    <name>Pier</name>
    <url>https://example.net/pier</url>
    <urlname>Pier info</urlname>
    <sym>Anchor</sym>
  </wpt>
  <rte>
    <name>Shore path</name>
    <number>2</number>
    <rtept lat="44.0" lon="6.0"/>
    <rtept lat="44.01" lon="6.01"/>
  </rte>
  <trk>
    <name>Lap</name>
    <url>https://example.net/lap</url>
    <trkseg>
      <trkpt lat="44.0" lon="6.0">
        <ele>305.5</ele>
        <time>2023-09-10T09:00:00Z</time>
        <course>87.5</course>
        <speed>4.25</speed>
        <fix>3d</fix>
        <sat>8</sat>
        <ext:temp>18.5</ext:temp>
      </trkpt>
      <trkpt lat="44.0002" lon="6.0003">
        <ele>306</ele>
        <time>2023-09-10T09:00:02Z</time>
        <speed>4.5</speed>
      </trkpt>
    </trkseg>
  </trk>
</gpx>
"""

# GPX 1.1 with content that has no place in the schema.
MISPLACED_11 = """<?xml version="1.0" encoding="UTF-8"?>
<gpx version="1.1" creator="sloppy" xmlns="http://www.topografix.com/GPX/1/1" xmlns:x="urn:example:x">
  <trk><trkseg>
    <trkpt lat="1.0" lon="2.0" x:flag="yes"><ele>5</ele><speed>3.5</speed><x:temp>20</x:temp></trkpt>
  </trkseg></trk>
  <trk-note>hello</trk-note>
  <x:loose>free</x:loose>
</gpx>
"""


def schema():
    import xmlschema

    return xmlschema.XMLSchema(str(SCHEMA_PATH))


def _number(text: str):
    try:
        return float(text)
    except ValueError:
        return text.strip()


def _instant(text: str):
    moment = datetime.fromisoformat(text.strip().replace("Z", "+00:00"))
    if moment.tzinfo is None:
        moment = moment.replace(tzinfo=timezone.utc)
    return moment.astimezone(timezone.utc)


_NUMERIC = {"ele", "sat", "hdop", "vdop", "pdop", "magvar", "geoidheight", "ageofdgpsdata", "dgpsid",
            "number", "year"}


def canonical(element) -> tuple:
    """A comparable form of an XML element: meaning, not spelling.

    Numbers compare as floats (45.0 == 45.000), GPX times as UTC instants
    (ISO 8601 via Python's datetime, an independent parser), whitespace-only
    text between elements is ignored; everything else must match exactly.
    """
    qname = etree.QName(element)
    local = qname.localname
    in_gpx = qname.namespace in (GPX10, GPX11)
    attributes = tuple(sorted((k, _number(v) if k in ("lat", "lon", "minlat", "minlon", "maxlat", "maxlon")
                               else v) for k, v in element.attrib.items()))
    text = element.text
    if text is not None and not text.strip() and len(element):
        text = None
    if text is not None and in_gpx and local in _NUMERIC:
        text = _number(text)
    elif text is not None and in_gpx and local == "time":
        text = _instant(text)
    children = tuple(canonical(c) for c in element if isinstance(c.tag, str))
    tails = tuple(c.tail.strip() for c in element if c.tail and c.tail.strip())
    return (element.tag, attributes, text, children, tails)


def parse(data: bytes):
    return etree.fromstring(data)
