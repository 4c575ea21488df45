"""Writing a document as GPX 1.1 text, with plain string formatting (no XML tree).

Everything the reader kept opaque is written back verbatim in its schema slot,
so a file read and written without edits keeps every element, attribute and
namespace declaration. Latitude, longitude, elevation and time keep the file's
own text where no edit changed the value; changed ones are written to about
1 cm (7 decimals of a degree, elevation to 0.01 m) and times as UTC with a
``Z`` (see :mod:`editor.io.gpx.source_texts`). Other numbers are written exactly
(positional, never exponent notation, as xsd:decimal requires). The file is
UTF-8, indented by two spaces, and produced in pieces (:func:`gpx_chunks`) so
saving streams it to the disk.

A document made in memory (``extra`` not a :class:`DocumentExtra`) is written
with ``creator="Trackwright"``; reading it back gives
``DocumentExtra(creator="Trackwright")``.

Refused with a :class:`~editor.io.errors.TrackFileError` (nothing is written):
a point without a finite latitude/longitude in range, an infinite value, a
negative or fractional satellite count, a name with a character XML cannot hold.
Longitude 180 is written as -180 (the same meridian; GPX 1.1 allows
[-180, 180)).
"""
from __future__ import annotations

from typing import Iterator

import numpy as np

from ...model import Document, PointTable
from ..errors import TrackFileError
from .format import format_points
from .xml_parts import GPX11, bad_xml_character, escape_attribute, escape_text
from ...model.payload import DocumentExtra, ElementExtra

_DEFAULT_CREATOR = "Trackwright"


class _Writer:
    def __init__(self, path):
        self.path = path

    def fail(self, where: str, problem: str):
        raise TrackFileError(self.path, f"{where}: {problem}; nothing was written")

    def text(self, value: str, where: str) -> str:
        bad = bad_xml_character(value)
        if bad is not None:
            self.fail(where, f"the text {value[:40]!r} contains the character U+{ord(bad):04X}, "
                             "which XML cannot hold")
        return escape_text(value)

    def check_points(self, table: PointTable, describe) -> None:
        for name, limit in (("lat", 90.0), ("lon", 180.0)):
            bad = np.flatnonzero(~(np.abs(getattr(table, name)) <= limit))
            if len(bad):
                value = float(getattr(table, name)[bad[0]])
                self.fail(describe(int(bad[0])), f"{name} {value!r} is not a valid coordinate")
        for name in ("ele", "hdop", "vdop", "pdop", "sat"):
            column = getattr(table, name)
            wrong = np.isinf(column)
            if name == "sat":
                wrong |= (column < 0) | ((column != np.round(column)) & ~np.isnan(column))
            bad = np.flatnonzero(wrong)
            if len(bad):
                self.fail(describe(int(bad[0])), f"{name} {float(column[bad[0]])!r} cannot be written")

    source = None  # the file's own texts of unchanged values (DocumentExtra.source_texts)

    def points(self, table: PointTable, tag: str, indent: str, describe) -> Iterator[str]:
        """XML of the points of ``table``, one element per point, in chunks."""
        if not len(table):
            return iter(())
        self.check_points(table, describe)
        names = table.name.tolist()
        if names.count(None) == len(names):
            names = None
        else:
            names = [None if n is None else self.text(n, describe(i)) for i, n in enumerate(names)]
        return format_points(table, tag, indent, names, self.source)

    def container_head(self, name, extra, indent: str, where: str) -> str:
        out = ""
        if name is not None:
            out += f"{indent}<name>{self.text(name, where)}</name>\n"
        if isinstance(extra, ElementExtra):
            if extra.after_name:
                out += f"{indent}{extra.after_name}\n"
            if extra.extensions is not None:
                out += f"{indent}<extensions>{extra.extensions}</extensions>\n"
        return out

    def chunks(self, doc: Document) -> Iterator[str]:
        """The document's text, piece by piece."""
        extra = doc.extra if isinstance(doc.extra, DocumentExtra) else DocumentExtra()
        self.source = extra.source_texts
        root = [f'<gpx xmlns="{GPX11}"']
        root += [f' xmlns:{p}="{escape_attribute(u)}"' for p, u in extra.namespaces]
        root.append(f' version="1.1" creator="{escape_attribute(extra.creator or _DEFAULT_CREATOR)}"')
        root += [f' {k}="{escape_attribute(v)}"' for k, v in extra.attributes]
        yield '<?xml version="1.0" encoding="UTF-8"?>\n' + "".join(root) + ">\n"
        if extra.metadata is not None:
            yield f"  {extra.metadata}\n"
        yield from self.points(doc.waypoints, "wpt", "  ", lambda i: f"waypoint {i + 1}")
        for r, route in enumerate(doc.routes):
            yield "  <rte>\n" + self.container_head(route.name, route.extra, "    ", f"route {r + 1}")
            yield from self.points(route.points, "rtept", "    ", lambda i, r=r: f"route {r + 1}, point {i + 1}")
            yield "  </rte>\n"
        for t, track in enumerate(doc.tracks):
            yield "  <trk>\n" + self.container_head(track.name, track.extra, "    ", f"track {t + 1}")
            for s, (start, stop) in enumerate(track.segment_bounds()):
                def describe(i, t=t, s=s):
                    return f"track {t + 1}, segment {s + 1}, point {i + 1}"
                yield "    <trkseg>\n"
                yield from self.points(track.points.take(slice(start, stop)), "trkpt", "      ", describe)
                seg_extra = track.segment_extra[s] if s < len(track.segment_extra) else None
                if isinstance(seg_extra, ElementExtra) and seg_extra.extensions is not None:
                    yield f"      <extensions>{seg_extra.extensions}</extensions>\n"
                yield "    </trkseg>\n"
            yield "  </trk>\n"
        if extra.extensions is not None:
            yield f"  <extensions>{extra.extensions}</extensions>\n"
        yield "</gpx>\n"


def gpx_chunks(doc: Document, path=None) -> Iterator[bytes]:
    """The document as UTF-8 GPX 1.1, in chunks (for streaming to a file)."""
    return (chunk.encode("utf-8") for chunk in _Writer(path).chunks(doc))


def gpx_text(doc: Document, path=None) -> str:
    """The document as GPX 1.1 text; ``path`` only names the file in error messages."""
    return "".join(_Writer(path).chunks(doc))


def gpx_bytes(doc: Document, path=None) -> bytes:
    """The document as UTF-8 encoded GPX 1.1."""
    return gpx_text(doc, path).encode("utf-8")
