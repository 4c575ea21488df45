"""An invented GPX 1.1 file that uses every point child the standard defines, plus extensions,
waypoints, a route, two tracks and several segments (element order from the GPX 1.1 schema,
wptType: ele time magvar geoidheight name cmt desc src link* sym type fix sat hdop vdop pdop
ageofdgpsdata dgpsid extensions)."""
from __future__ import annotations

import numpy as np

_HEAD = ('<?xml version="1.0" encoding="UTF-8"?>\n<gpx xmlns="http://www.topografix.com/GPX/1/1" '
         'xmlns:hr="urn:x-test:heart" version="1.1" creator="rich test">\n'
         '<metadata><name>Invented loop</name><time>2025-06-01T06:00:00Z</time></metadata>\n')


def _point(tag: str, rng: np.random.Generator, i: int, lat: float, lon: float, t: int) -> str:
    parts = [f'<{tag} lat="{lat:.7f}" lon="{lon:.7f}">']
    pick = rng.random(20) < 0.5
    if pick[0]:
        parts.append(f"<ele>{500 + i * 0.7:.1f}</ele>")
    if pick[1] or tag == "trkpt":
        parts.append(f"<time>2025-06-01T06:{t // 60 % 60:02d}:{t % 60:02d}Z</time>")
    if pick[2]:
        parts.append(f"<magvar>{i % 360}.5</magvar>")
    if pick[3]:
        parts.append("<geoidheight>47.3</geoidheight>")
    if pick[4]:
        parts.append(f"<name>P{i} &amp; «x»</name>")
    if pick[5]:
        parts.append(f"<cmt>c{i}</cmt>")
    if pick[6]:
        parts.append("<desc>bench &lt;north&gt;</desc>")
    if pick[7]:
        parts.append("<src>logger</src>")
    if pick[8]:
        parts.append(f'<link href="https://example.org/{i}"><text>t</text></link>')
    if pick[9]:
        parts.append("<sym>Flag</sym>")
    if pick[10]:
        parts.append("<type>stop</type>")
    if pick[11]:
        parts.append("<fix>3d</fix>")
    if pick[12]:
        parts.append(f"<sat>{i % 12}</sat>")
    if pick[13]:
        parts.append("<hdop>1.2</hdop><vdop>1.9</vdop><pdop>2.4</pdop>")
    if pick[14]:
        parts.append("<ageofdgpsdata>2.5</ageofdgpsdata>")
    if pick[15]:
        parts.append("<dgpsid>17</dgpsid>")
    if pick[16]:
        parts.append(f"<extensions><hr:hr>{90 + i % 60}</hr:hr></extensions>")
    parts.append(f"</{tag}>")
    return "".join(parts)


def rich_gpx(seed: int, n: int = 40) -> str:
    """The file text for ``seed``: ``n`` track points over two tracks and three segments."""
    rng = np.random.default_rng(seed)
    out = [_HEAD]
    out += [_point("wpt", rng, i, 46.0 + i * 0.01, 7.0, i) for i in range(3)]
    out.append("<rte><name>plan</name><extensions><hr:plan>1</hr:plan></extensions>")
    out += [_point("rtept", rng, i, 46.1, 7.0 + i * 0.01, i) for i in range(3)]
    out.append("</rte>")
    first = max(n * 2 // 3, 2)
    bounds = [(0, first // 2), (first // 2, first), (first, n)]
    for k, (a, b) in enumerate(bounds):
        if k == 0:
            out.append("<trk><name>one</name><desc>first</desc><extensions><hr:t>1</hr:t></extensions>")
        if k == 2:
            out.append("<trk><name>two</name>")
        out.append("<trkseg>")
        t = 0
        for i in range(a, b):
            t += int(rng.choice([1, 1, 2, 0, 30]))
            out.append(_point("trkpt", rng, i, 46.0 + i * 1e-4 + rng.normal(0, 2e-5), 7.0 + i * 1e-4, t + 7 * i))
        out.append(f"<extensions><hr:seg>{k}</hr:seg></extensions></trkseg>" if k != 1 else "</trkseg>")
        if k in (1, 2):
            out.append("</trk>")
    out.append("</gpx>\n")
    return "\n".join(out)
