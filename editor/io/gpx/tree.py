"""Reading a parsed GPX 1.1 or 1.0 tree into a :class:`~editor.model.Document`.

The tree gives the document's structure and everything opaque; point values
come either from :mod:`editor.io.gpx.scan` (fast, for the usual file) or from
the tree itself, element by element, which handles every file and names the
line of a bad value.

GPX 1.0 is read into the GPX 1.1 shape: its top-level name, desc, author, email,
url/urlname, time, keywords and bounds become ``<metadata>``; url/urlname become
``<link>``; per-point ``course`` and ``speed`` (absent from 1.1) go into
``<extensions>`` as ``tw:course``/``tw:speed`` (namespace ``urn:x-trackwright:gpx:1``);
elements of other namespaces, which 1.0 allowed anywhere, go into the
``<extensions>`` of their parent. In a 1.1 file, elements with no place in the
schema are moved the same way (GPX-namespace ones renamed into ``tw:``) and
reported in ``Document.warnings``. XML comments and processing instructions
outside ``<extensions>`` are not kept; unknown attributes are dropped with a
warning (GPX 1.1 allows none on these elements).
"""
from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field, replace
from typing import Callable

import numpy as np
from lxml import etree

from ...model import ALL_COLUMNS, Document, PointTable, Route, Track
from ..errors import TrackFileError
from .scan import PLACEHOLDER, WAYPOINT_PLACEHOLDER
from .source_texts import SourceTexts
from .values import PointTexts, ReadNotes, ValueProblem, build_table, segments_out_of_order, time_order_warnings
from .xml_parts import (CONTAINER_SLOTS, GPX10, GPX11, GPX11_XSD, POINT_FIELDS, POINT_SLOTS, XSI,
                      Fragments, local_name, qualified_attribute)
from .v10 import V10_METADATA, metadata_from_v10, v10_link
from ...model.payload import DocumentExtra, ElementExtra, point_extra

_FIELDS = frozenset(POINT_FIELDS)
_POINT_ATTRIBUTES = frozenset(("lat", "lon"))
_LAT_LON = ["lat", "lon"]


@dataclass
class TrackShape:
    name: str | None
    extra: ElementExtra | None
    segments: list  # trkseg elements
    segment_extra: list
    counts: list[int]  # points per segment


@dataclass
class RouteShape:
    element: object
    name: str | None
    extra: ElementExtra | None


@dataclass
class Shape:
    """Everything but the point values."""

    extra: DocumentExtra
    waypoints: list
    routes: list[RouteShape] = field(default_factory=list)
    tracks: list[TrackShape] = field(default_factory=list)


class TreeReader:
    """Reads one parsed tree; ``path`` only names the file in messages."""

    def __init__(self, root, path: str | None, scan=None):
        self.root, self.path = root, path
        #: a :class:`~editor.io.gpx.scan.Scan` when ``root`` is its skeleton: track points are
        #: placeholder characters in the segments' text and their values come from the scan
        self.scan = scan
        self.ns = local_name(root)[0]
        self.v10 = self.ns == GPX10
        self.prefix = f"{{{self.ns}}}"
        self.notes: Counter = Counter()
        self.namespaces = tuple((p, u) for p, u in root.nsmap.items() if p and u != GPX10)
        self.fragments = Fragments(self.namespaces)
        self._count = etree.XPath("count(g:trkpt)", namespaces={"g": self.ns})
        self._segment_others = etree.XPath("*[not(self::g:trkpt)]", namespaces={"g": self.ns})
        self._texts = etree.XPath("text()", smart_strings=False)
        self._nth = {tag: etree.XPath(f"g:{tag}[$n]", namespaces={"g": self.ns}) for tag in ("trkpt", "rtept")}

    # ----------------------------------------------------------------- structure
    def shape(self) -> Shape:
        metadata, extensions, v10_meta = None, [], {}
        shape = Shape(extra=None, waypoints=[])
        for child in self.root:
            if not isinstance(child.tag, str):
                continue
            ns, local = local_name(child)
            if ns != self.ns:
                extensions.append(self.opaque_misplaced(child, ns))
            elif local == "wpt":
                shape.waypoints.append(child)
            elif local == "rte":
                name, extra, _ = self.container(child, "rtept")
                shape.routes.append(RouteShape(child, name, extra))
            elif local == "trk":
                name, extra, segments = self.container(child, "trkseg")
                counts = [self.point_count(s) for s in segments]
                shape.tracks.append(TrackShape(name, extra, segments,
                                               [self.segment_extra(s, n) for s, n in zip(segments, counts)],
                                               counts))
            elif local == "metadata" and not self.v10 and metadata is None:
                metadata = self.fragments.of(child)
            elif local == "extensions" and not self.v10:
                extensions.append(self.fragments.inner(child))
            elif self.v10 and local in V10_METADATA and local not in v10_meta:
                v10_meta[local] = child
            else:
                extensions.append(self.fragments.renamed(child))
                self.notes["moved"] += 1
        if self.v10 and v10_meta:
            metadata = self.fragments.of(metadata_from_v10(v10_meta))
        shape.extra = DocumentExtra(self.namespaces, self.root_attributes(), self.root.get("creator"),
                                    metadata, "".join(extensions) if extensions else None,
                                    "1.0" if self.v10 else "1.1")
        return shape

    def root_waypoint_count(self) -> int:
        """Waypoint placeholders at the root's level of a skeleton (in its text and its children's tails)."""
        texts = [self.root.text or ""] + [child.tail or "" for child in self.root]
        return sum(text.count(WAYPOINT_PLACEHOLDER) for text in texts)

    def root_attributes(self) -> tuple[tuple[str, str], ...]:
        kept = []
        for key, value in self.root.attrib.items():
            if key in ("version", "creator"):
                continue
            if not key.startswith(f"{{{XSI}}}"):
                self.notes["attribute"] += 1
                continue
            if key == f"{{{XSI}}}schemaLocation" and self.v10:
                value = _schema_location_v11(value)
            kept.append((qualified_attribute(key, self.root.nsmap), value))
        return tuple(kept)

    def container(self, element, child_local: str):
        """Name, opaque extra and child elements (trkseg/rtept) of a trk or rte."""
        name, slots, extensions, children, urls = None, [], None, [], {}
        child_tag = self.prefix + child_local
        for child in element:
            if child.tag == child_tag:  # the usual child, found without splitting its name
                if child_local == "trkseg":
                    children.append(child)
                continue
            if not isinstance(child.tag, str):
                continue
            ns, local = local_name(child)
            if ns == self.ns and local == child_local:
                if child_local == "trkseg":  # route points are read later, in one pass
                    children.append(child)
            elif ns == self.ns and local == "name" and name is None:
                name = "".join(child.itertext())
            elif ns == self.ns and local in CONTAINER_SLOTS:
                text = self.fragments.renamed(child, GPX11) if self.v10 else self.fragments.of(child)
                slots.append((CONTAINER_SLOTS[local], text))
            elif ns == self.ns and self.v10 and local in ("url", "urlname"):
                urls[local] = child.text or ""
            elif ns == self.ns and local == "extensions" and not self.v10:
                extensions = (extensions or "") + self.fragments.inner(child)
            else:
                extensions = (extensions or "") + self.opaque_misplaced(child, ns)
        if urls:
            slots.append((CONTAINER_SLOTS["link"], self.fragments.of(v10_link(urls))))
        after_name = "".join(text for _, text in sorted(slots, key=lambda s: s[0]))
        extra = ElementExtra(after_name, extensions) if after_name or extensions is not None else None
        return name, extra, children

    def point_count(self, segment) -> int:
        if self.scan is not None:
            if not len(segment):  # the usual segment: its text is all placeholders
                return segment.text.count(PLACEHOLDER) if segment.text else 0
            return sum(text.count(PLACEHOLDER) for text in self._texts(segment))
        return int(self._count(segment))

    def segment_extra(self, segment, count: int) -> ElementExtra | None:
        extensions = None
        if not len(segment) or (self.scan is None and len(segment) == count):
            return None  # per-segment XPath calls dominated files of a million tiny segments
        for child in self._segment_others(segment):
            ns, local = local_name(child)
            if ns == self.ns and local == "extensions" and not self.v10:
                extensions = (extensions or "") + self.fragments.inner(child)
            else:
                extensions = (extensions or "") + self.opaque_misplaced(child, ns)
        return None if extensions is None else ElementExtra("", extensions)

    def opaque_misplaced(self, child, ns) -> str:
        """An element GPX 1.1 has no place for here, as XML for ``<extensions>``."""
        if ns in (GPX10, GPX11):
            self.notes["moved"] += 1
            return self.fragments.renamed(child)
        if self.v10:  # a copy drops the GPX 1.0 default namespace the element would otherwise carry
            return self.fragments.renamed(child)
        self.notes["foreign"] += 1
        return self.fragments.of(child)

    # -------------------------------------------------------------------- points
    def point_texts(self, elements) -> PointTexts:
        """Text of every interpreted field and the payload of each point element."""
        columns = {name: [] for name in ("lat", "lon", *POINT_FIELDS)}
        extras = []
        prefix, cut = self.prefix, len(self.prefix)
        lat, lon = columns["lat"], columns["lon"]
        for index, element in enumerate(elements):
            lat.append(element.get("lat"))
            lon.append(element.get("lon"))
            keys = element.keys()
            if keys != _LAT_LON and not _POINT_ATTRIBUTES.issuperset(keys):
                self.notes["attribute"] += len(set(keys) - _POINT_ATTRIBUTES)
            found, slots, extensions, urls = {}, [], None, {}
            for child in element:
                tag = child.tag
                if not isinstance(tag, str):
                    continue
                local = tag[cut:] if tag.startswith(prefix) else None
                if local in _FIELDS:
                    if local in found:
                        raise ValueProblem(index, local, f"the point has more than one <{local}>")
                    found[local] = child
                elif local in POINT_SLOTS:
                    text = self.fragments.renamed(child, GPX11) if self.v10 else self.fragments.of(child)
                    slots.append((POINT_SLOTS[local], text))
                elif local == "extensions" and not self.v10:
                    extensions = (extensions or "") + self.fragments.inner(child)
                elif self.v10 and local in ("url", "urlname"):
                    urls[local] = child.text or ""
                elif self.v10 and local in ("course", "speed"):
                    extensions = (extensions or "") + self.fragments.renamed(child)
                else:
                    extensions = (extensions or "") + self.opaque_misplaced(child, local_name(child)[0])
            for name in POINT_FIELDS:
                child = found.get(name)
                if child is None:
                    columns[name].append(None)
                elif name == "name":
                    columns[name].append("".join(child.itertext()))
                else:
                    columns[name].append(child.text.strip() if child.text else None)
            if urls:
                slots.append((POINT_SLOTS["link"], self.fragments.of(v10_link(urls))))
            parts = ["", "", ""]
            for (slot, _), text in sorted(slots, key=lambda s: s[0]):
                parts[slot] += text
            extras.append(point_extra(*parts, extensions))
        return PointTexts(**columns, extra=extras)

    def table(self, elements: Callable[[], list], describe: Callable[[int], str]) -> tuple[PointTable, ReadNotes]:
        """Read point elements into a table; errors name the point and its line."""
        points = elements()
        try:
            return build_table(self.point_texts(points))
        except ValueProblem as problem:
            raise TrackFileError(self.path, f"{describe(problem.index)}: {problem.problem}",
                                 self.line_of(points[problem.index], problem.field)) from None

    def line_of(self, element, field_name: str) -> int | None:
        child = None if field_name in ("lat", "lon") else element.find(self.prefix + field_name)
        return (child if child is not None else element).sourceline

    def nth_point(self, container, tag: str, index: int):
        found = self._nth[tag](container, n=index + 1)
        return found[0] if found else None

    # ------------------------------------------------------------------ document
    def document(self, shape: Shape) -> Document:
        """Assemble the document (track points from the scan when reading a skeleton)."""
        doc = Document(extra=shape.extra, source_path=self.path)
        first = 0
        placed = []  # file-wide index of each track's row 0
        if self.scan is not None and self.scan.waypoints is not None:
            doc.waypoints, notes = self.scan.waypoints, ReadNotes()
        else:
            doc.waypoints, notes = self.table(lambda: shape.waypoints, lambda i: f"waypoint {i + 1}")
        for r, route in enumerate(shape.routes):
            points, count = self.table(lambda: list(route.element.iterchildren(self.prefix + "rtept")),
                                       lambda i, r=r: f"route {r + 1}, point {i + 1}")
            notes.add(count)
            doc.routes.append(Route(points, route.name, route.extra))
        for t, track in enumerate(shape.tracks):
            starts = np.concatenate(([0], np.cumsum(track.counts)[:-1])).astype(np.int64) \
                if len(track.counts) > 1 else np.zeros(1, dtype=np.int64)
            if self.scan is not None:
                stop = first + sum(track.counts)
                whole = first == 0 and stop == self.scan.count
                points = self.scan.table if whole else _rows(self.scan.table, first, stop)
            else:
                points, count = self.table(
                    lambda: [p for s in track.segments for p in s.iterchildren(self.prefix + "trkpt")],
                    lambda i, t=t, starts=starts: _where_in_track(t, starts, i))
                notes.add(count)
            segment_extra = track.segment_extra or [None]
            doc.tracks.append(Track(points, starts, track.name, track.extra, list(segment_extra)))
            placed.append(first)
            first += len(points)
        doc.warnings += self.all_order_warnings(doc.tracks, shape.tracks, placed)
        if self.scan is not None:
            notes.add(self.scan.notes)
        doc.warnings += notes.warnings()
        doc.warnings += self.note_warnings()
        if notes.sources:
            doc.extra = replace(doc.extra, source_texts=SourceTexts.merge(notes.sources))
        return doc

    def all_order_warnings(self, tracks: list, shapes: list, placed: list) -> list[str]:
        """Warnings for times out of order in every track, found in one pass over all tracks.

        A per-track check cost 20 us of numpy overhead per track (100,000 tracks: seconds);
        the detailed check runs only on tracks that hold a problem.
        """
        if not tracks:
            return []
        times = self.scan.table.time if self.scan is not None and placed[-1] + len(tracks[-1].points) \
            == self.scan.count else np.concatenate([track.points.time for track in tracks])
        offsets = np.cumsum([0] + [len(track.points) for track in tracks[:-1]])
        starts = np.concatenate([track.segment_starts + offset for track, offset in zip(tracks, offsets)])
        owner = np.repeat(np.arange(len(tracks)), [track.segment_count for track in tracks])
        found = []
        for t in np.unique(owner[segments_out_of_order(times, starts)]).tolist():
            found += self.order_warnings(t, shapes[t], tracks[t].segment_starts, tracks[t].points, placed[t])
        return found

    def order_warnings(self, t: int, track: TrackShape, starts, points: PointTable, first: int) -> list[str]:
        """Warnings for times out of order; ``first`` is the file-wide index of the track's row 0."""
        found = []
        stops = list(starts[1:]) + [len(points)]
        for s in segments_out_of_order(points.time, starts):
            start, stop = int(starts[s]), stops[s]
            def line_of(row, s=s, start=start):
                if self.scan is not None:
                    return self.scan.line_of_point(first + start + row)
                element = self.nth_point(track.segments[s], "trkpt", row)
                return None if element is None else element.sourceline
            found += time_order_warnings(points.time[start:stop], f"track {t + 1} segment {s + 1}", line_of)
        return found

    def note_warnings(self) -> list[str]:
        text = {"moved": "element{s} with no place in GPX 1.1 moved into <extensions> (namespace "
                         "urn:x-trackwright:gpx:1)",
                "foreign": "element{s} of other namespaces outside <extensions> moved into <extensions>",
                "attribute": "unknown attribute{s} not kept (GPX 1.1 allows none there)"}
        return [f"{n} " + text[key].format(s="s" if n > 1 else "") for key, n in self.notes.items() if n]


def _rows(table: PointTable, start: int, stop: int) -> PointTable:
    """Rows ``start:stop`` of ``table`` as a table of its own: views of its columns.

    Each track reads a disjoint stretch of the scan's columns, so views are as
    safe as copies (an edit writing into one track's rows touches no other's)
    and cost nothing per track; copying ten columns per track was most of the
    time of reading 100,000 tracks.
    """
    return PointTable(**{name: getattr(table, name)[start:stop] for name in ALL_COLUMNS})


def _where_in_track(t: int, starts: np.ndarray, row: int) -> str:
    segment = int(np.searchsorted(starts, row, side="right")) - 1
    return f"track {t + 1}, segment {segment + 1}, point {row - int(starts[segment]) + 1}"


def _schema_location_v11(value: str) -> str:
    """Swap the GPX 1.0 namespace/schema pair for GPX 1.1's in xsi:schemaLocation."""
    tokens = value.split()
    pairs = [tokens[i:i + 2] for i in range(0, len(tokens), 2)]
    out = [[GPX11, GPX11_XSD] if pair[0] == GPX10 else pair for pair in pairs]
    return " ".join(" ".join(pair) for pair in out)
