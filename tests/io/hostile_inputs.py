"""Generated hostile and damaged GPX inputs (fixed seed): the cases of issue 8 and random damage.

``hostile_cases()`` returns ``(name, bytes)`` pairs, at least 100. Each must end in a clean read or
one clear line naming the file, never a traceback or a hang. Sizes stay small so the whole set
runs in seconds; the slow-path cases at full size live in tests/bench/bench_hostile.py.
"""
from __future__ import annotations

import random

HEAD = '<?xml version="1.0" encoding="UTF-8"?>\n'
ROOT = '<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="hostile">'


def _point(i: int, tag: str = "trkpt", time: str | None = None, ele: str | None = None) -> str:
    time = time or f"2026-05-01T06:{i // 60 % 60:02d}:{i % 60:02d}Z"
    ele = ele or f"{500 + i % 40}"
    return f'<{tag} lat="{46 + i * 1e-4:.6f}" lon="{7 + i * 1e-4:.6f}"><ele>{ele}</ele><time>{time}</time></{tag}>'


def _track(points: str) -> str:
    return HEAD + ROOT + "<trk><trkseg>" + points + "</trkseg></trk></gpx>\n"


def _base(n: int = 30) -> str:
    return HEAD + ROOT + "\n" + _point(0, "wpt") + "\n<trk><name>ride</name><trkseg>\n" \
        + "\n".join(_point(i) for i in range(n)) + "\n</trkseg></trk></gpx>\n"


def _named() -> list[tuple[str, bytes]]:
    base = _base()
    def one(value, field="ele"):
        return _track(_point(0) + _point(1).replace(
            f"<{field}>{500 + 1}</{field}>" if field == "ele" else "<time>2026-05-01T06:00:01Z</time>",
            f"<{field}>{value}</{field}>"))
    cases = {
        "empty": "", "blank": "   \n\t  \n", "not-xml": "hello, world\n", "json": '{"type": "Feature"}',
        "html": "<html><body>not a track</body></html>", "root-only": HEAD + ROOT + "</gpx>",
        "wrong-namespace": HEAD + '<gpx xmlns="urn:other" version="1.1"></gpx>',
        "no-namespace": HEAD + '<gpx version="1.1"><trk/></gpx>',
        "gpx10": HEAD + '<gpx xmlns="http://www.topografix.com/GPX/1/0" version="1.0" creator="x"><trk><trkseg>'
                 '<trkpt lat="1" lon="2"><speed>3.5</speed><course>90</course></trkpt></trkseg></trk></gpx>',
        "deep-nesting": HEAD + ROOT + "<extensions>" + "<a>" * 400 + "</a>" * 400 + "</extensions></gpx>",
        "deep-nesting-unclosed": HEAD + ROOT + "<extensions>" + "<a>" * 3000,
        "billion-laughs": HEAD + '<!DOCTYPE gpx [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;&a;&a;">'
                          '<!ENTITY c "&b;&b;&b;&b;&b;&b;&b;">]>' + ROOT + "<metadata><desc>&c;</desc>"
                          "</metadata></gpx>",
        "external-entity": HEAD + '<!DOCTYPE gpx [<!ENTITY x SYSTEM "file:///etc/passwd">]>' + ROOT
                           + "<metadata><desc>&x;</desc></metadata></gpx>",
        "external-dtd": HEAD + '<!DOCTYPE gpx SYSTEM "http://127.0.0.1:9/gpx.dtd">' + ROOT + "</gpx>",
        "doctype-after-start": HEAD + ROOT + "\n<trk>\n<!DOCTYPE x>\n</trk></gpx>",
        "doctype-after-comment": HEAD + "<!--" + "x" * 70_000 + '-->\n<!DOCTYPE gpx [<!ENTITY a "b">]>\n'
                                 + ROOT + "</gpx>",
        "plain-doctype": HEAD + "<!DOCTYPE gpx>\n" + ROOT + "</gpx>",
        "leap-second": one("2016-12-31T23:59:60Z", "time"),
        "leap-second-offset": one("2017-01-01T00:59:60.25+01:00", "time"),
        "offset-time": one("2026-05-01T08:00:01+02:00", "time"),
        "no-zone": one("2026-05-01T06:00:01", "time"),
        "bad-date": one("2026-02-30T06:00:01Z", "time"), "year-0001": one("0001-01-01T00:00:00Z", "time"),
        "year-9999": one("9999-12-31T23:59:59Z", "time"), "time-words": one("yesterday", "time"),
        "time-fraction-long": one("2026-05-01T06:00:01.1234567890123Z", "time"),
        "ele-nan": one("NaN"), "ele-inf": one("-inf"), "ele-1e400": one("1e400"), "ele-blank": one("  "),
        "ele-words": one("high"), "ele-huge": one("9" * 400), "ele-comma": one("512,4"),
        "lat-91": _track('<trkpt lat="91" lon="7"/>'), "lon-181": _track('<trkpt lat="1" lon="-181"/>'),
        "lat-missing": _track('<trkpt lon="7"/>'), "lat-empty": _track('<trkpt lat="" lon="7"/>'),
        "lat-exponent": _track('<trkpt lat="4.6e1" lon="7"/>'), "lat-plus": _track('<trkpt lat="+46" lon="7"/>'),
        "sat-negative": _track('<trkpt lat="1" lon="2"><sat>-3</sat></trkpt>'),
        "sat-fraction": _track('<trkpt lat="1" lon="2"><sat>2.5</sat></trkpt>'),
        "two-ele": _track('<trkpt lat="1" lon="2"><ele>1</ele><ele>2</ele></trkpt>'),
        "unknown-children": _track('<trkpt lat="1" lon="2"><speed>3</speed><foo>bar</foo></trkpt>'),
        "unknown-attribute": _track('<trkpt lat="1" lon="2" alt="5"/>'),
        "undeclared-prefix": _track('<trkpt lat="1" lon="2"><extensions><x:hr>1</x:hr></extensions></trkpt>'),
        "cdata": _track('<trkpt lat="1" lon="2"><name><![CDATA[<b>bold</b>]]></name></trkpt>'),
        "markup-in-values": _track('<trkpt lat="1" lon="2"><ele>&lt;img src="p.png"&gt;</ele></trkpt>'),
        "processing-instruction": _track('<?pi data?><trkpt lat="1" lon="2"/>'),
        "comments-everywhere": _track("<!--a-->" + _point(0) + "<!--b-->" + _point(1)),
        "null-byte": _track(_point(0)).replace("ride", "r\x00de") + "\x00",
        "control-char": _track('<trkpt lat="1" lon="2"><name>a\x07b</name></trkpt>'),
        "latin1-declared-utf8-bytes": HEAD.replace("UTF-8", "ISO-8859-1") + ROOT + "<trk><name>café</name></trk></gpx>",
        "bad-utf8": None, "utf16": None, "utf16-no-bom": None, "gzip-bytes": None, "random-binary": None,
        "all-same-time": _track("".join(_point(i, time="2026-05-01T06:00:00Z") for i in range(20))),
        "times-backwards": _track("".join(_point(20 - i) for i in range(20))),
        "empty-segments": HEAD + ROOT + "<trk>" + "<trkseg/>" * 500 + "</trk></gpx>",
        "empty-tracks": HEAD + ROOT + "<trk/>" * 500 + "</gpx>",
        "one-point-segments": HEAD + ROOT + "<trk>" + "".join(f"<trkseg>{_point(i)}</trkseg>" for i in range(300))
                              + "</trk></gpx>",
        "many-tracks": HEAD + ROOT + "".join(f"<trk><trkseg>{_point(i)}</trkseg></trk>" for i in range(300))
                       + "</gpx>",
        "many-namespaces": HEAD + ROOT.replace(">", "".join(f' xmlns:n{i}="urn:n{i}"' for i in range(2000)) + ">")
                           + "<trk><trkseg>" + _point(0) + "</trkseg></trk></gpx>",
        "many-waypoints": HEAD + ROOT + "".join(_point(i, "wpt") for i in range(500)) + "</gpx>",
        "waypoint-in-extensions": HEAD + ROOT + _point(0, "wpt") + "<extensions>" + _point(1, "wpt")
                                  + "</extensions></gpx>",
        "route-only": HEAD + ROOT + "<rte>" + "".join(_point(i, "rtept") for i in range(5)) + "</rte></gpx>",
        "huge-attribute": _track(f'<trkpt lat="1" lon="2"><extensions><x a="{"y" * 11_000_000}" '
                                 'xmlns="urn:x"/></extensions></trkpt>'),
        "long-name": _track(f'<trkpt lat="1" lon="2"><name>{"n" * 200_000}</name></trkpt>'),
        "placeholder-char": _track('<trkpt lat="1" lon="2"><name>\ue000\ue001</name></trkpt>'),
        "cut-mid-point": base[: base.index("<trkpt", 2000) + 20],
        "cut-mid-tag": base[:-20], "cut-after-root": base[: base.index("<trk>")],
        "two-roots": base + base,
        "trailing-garbage": base + "<junk/>",
        "mismatched-tags": base.replace("</trkseg>", "</trk>", 1),
    }
    out = []
    for name, text in cases.items():
        if text is None:
            continue
        out.append((name, text.encode("utf-8")))
    base_bytes = base.encode("utf-8")
    out += [("bad-utf8", base_bytes.replace(b"ride", b"r\xff\xfede")),
            ("utf16", base.replace("UTF-8", "UTF-16").encode("utf-16")),
            ("utf16-no-bom", base.replace("UTF-8", "UTF-16").encode("utf-16-le")),
            ("gzip-bytes", b"\x1f\x8b\x08\x00" + bytes(range(256)) * 4),
            ("random-binary", random.Random(7).randbytes(5000))]
    return out


def _mutations(count: int, seed: int = 20261203) -> list[tuple[str, bytes]]:
    """Random damage to a valid file: cuts, flipped bytes, deleted and doubled stretches, swapped tags."""
    rng = random.Random(seed)
    base = _base(60).encode("utf-8")
    out = []
    for k in range(count):
        data = bytearray(base)
        kind = rng.choice(["cut", "flip", "delete", "double", "swap", "insert"])
        at = rng.randrange(len(data))
        if kind == "cut":
            data = data[:at]
        elif kind == "flip":
            for _ in range(rng.randint(1, 8)):
                data[rng.randrange(len(data))] = rng.randrange(256)
        elif kind == "delete":
            del data[at:at + rng.randint(1, 200)]
        elif kind == "double":
            data[at:at] = data[at:at + rng.randint(1, 300)]
        elif kind == "swap":
            data = bytearray(bytes(data).replace(b"<ele>", b"<time>", 1).replace(b"</ele>", b"</time>", 1))
            data[at:at] = rng.choice([b"<", b">", b"&", b"</trk>", b"<trkpt>", b"]]>", b"<!--"])
        else:
            data[at:at] = rng.choice([b"&#0;", b"&#xD800;", b"&undefined;", b"\xc3", b"<x:y/>", b"\r\n",
                                      b'<trkpt lat="nan" lon="1"/>', b"<ele>1e309</ele>"])
        out.append((f"damaged-{k:02d}-{kind}", bytes(data)))
    return out


def hostile_cases() -> list[tuple[str, bytes]]:
    cases = _named() + _mutations(40)
    assert len(cases) >= 100 and len({name for name, _ in cases}) == len(cases)
    return cases
