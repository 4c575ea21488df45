"""Fast reading of track points straight from the file's bytes.

Building lxml's tree for a large track costs more than parsing itself (about
eight nodes per point) and visiting it from Python costs more again. For the
usual file this module instead

1. lets lxml check the whole file without building a tree (a parser target
   that keeps nothing; namespace errors are taken from its error log),
2. cuts every ``<trkpt>`` out of the bytes with a regular-expression split,
   which also captures the point's values and the inner text of its
   ``<extensions>``, and converts them to columns with numpy, chunk by chunk
   (about 8 MB of the file at a time, so memory stays near the file's size);
3. leaves a small *skeleton* of the document with one placeholder character
   per point, which lxml parses into a tree for everything else (metadata,
   waypoints, routes, track and segment data, the points per segment).

The scan is used only when it provably sees what a full tree would hold:

* the file is UTF-8 (or ASCII); GPX 1.1 is the root's default namespace and
  no namespace is declared on the tracks, segments or points, so an
  unprefixed point child is GPX and a point's extensions see only the root's
  declarations (and their own);
* there are no comments, CDATA sections, DOCTYPE or processing instructions
  other than the XML declaration, so ``<`` always starts a tag;
* the bytes say ``trkpt`` exactly twice per cut-out point (its start and end
  tag), so no other element is called that and a cut-out point is one whole
  element; the placeholder character does not occur in the file;
* the skeleton's segments hold all the placeholders.

Waypoints (``<wpt>``, which hold the same children) are cut out of the
skeleton the same way, with a placeholder of their own, when the bytes say
``wpt`` exactly twice per cut-out waypoint and the root's own text holds all
their placeholders; otherwise they stay in the skeleton for the tree. Before
this, a file of a million waypoints built a full tree (1.5 GB and more).

Otherwise, or when a value fails to convert, the whole file is read through
the tree (:mod:`editor.io.gpx.tree`), which also names the line of any error.
A point's ``<extensions>`` payload is its inner text as the file spells it
(line ends normalised to ``\\n`` as XML requires); plain-text opaque children
(cmt, desc, sym, fix, ...) are rewritten the way the tree reader writes them.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field

from ...model import PointTable
from .values import PointTexts, ReadNotes, ValueProblem, build_table
from .xml_parts import escape_text, unescape
from ...model.payload import point_extra

#: Stands for a cut-out track point in the skeleton (a private-use character).
PLACEHOLDER = "\ue000"
#: Stands for a cut-out waypoint (another private-use character).
WAYPOINT_PLACEHOLDER = "\ue001"
_PLACEHOLDER_BYTES = PLACEHOLDER.encode("utf-8")
_WAYPOINT_BYTES = WAYPOINT_PLACEHOLDER.encode("utf-8")
_UTF8 = frozenset(("utf-8", "utf8", "ascii", "us-ascii"))
_ENCODING = re.compile(rb"(?:\xef\xbb\xbf)?<\?xml[^>]*?encoding\s*=\s*[\"']([A-Za-z0-9._-]+)")
_SEPARATOR = "\x00"  # cannot occur in XML 1.0 text
# Bytes per chunk: bounds the raw pieces held at once, and the skeleton's text per chunk
# (placeholders are shorter than the points they replace) below lxml's 10 MB text limit.
_CHUNK_BYTES = 8_000_000


def _field(name: str) -> bytes:
    return rb"(?:<%s>([^<]*+)</%s>\s*+)?+" % (name.encode(), name.encode())


def _block(names) -> bytes:
    """One group holding the run of these optional plain-text elements, in this order."""
    return b"(" + b"".join(rb"(?:<%s>[^<]*+</%s>\s*+)?+" % (n.encode(), n.encode()) for n in names) + b")"


def _point_pattern(tag: bytes) -> re.Pattern:
    """GPX 1.1 point children in schema order; <link> (which has children) is left to the tree reader."""
    return re.compile(
        rb'<%s (?:lat="([^"]*+)" lon="([^"]*+)"|lon="([^"]*+)" lat="([^"]*+)")>\s*+' % tag
        + _field("ele") + _field("time") + _block(("magvar", "geoidheight")) + _field("name")
        + _block(("cmt", "desc", "src", "sym", "type", "fix"))
        + b"".join(_field(f) for f in ("sat", "hdop", "vdop", "pdop")) + _block(("ageofdgpsdata", "dgpsid"))
        + rb"(?:(<extensions>)([^<]*+(?:<(?!/extensions>)[^<]*+)*+)</extensions>\s*+|(<extensions/>)\s*+)?+"
        + rb"</%s>" % tag)


_POINT = _point_pattern(b"trkpt")
_WAYPOINT = _point_pattern(b"wpt")
_GROUPS = _POINT.groups
_SLOT_ELEMENT = re.compile(r"<(\w+)>([^<]*)</\1>")


@dataclass
class Scan:
    """A file's track points, converted, and the skeleton of everything else."""

    data: bytes
    #: every track point of the file, in file order
    table: PointTable
    #: what converting their values noticed (zone-less times, the file's own texts...)
    notes: ReadNotes
    skeleton: bytes
    #: every waypoint of the file (cut out of the skeleton too), or ``None`` when the
    #: waypoints are left in the skeleton for the tree reader
    waypoints: PointTable | None = None
    _offsets: list = field(default=None, repr=False)

    @property
    def count(self) -> int:
        return len(self.table)

    def line_of_point(self, index: int) -> int:
        """1-based line of the ``index``-th track point of the file."""
        if self._offsets is None:
            self._offsets = [m.start() for m in re.finditer(rb"<trkpt ", self.data)]
        return self.data.count(b"\n", 0, self._offsets[index]) + 1


def worth_trying(data: bytes) -> bool:
    """Cheap checks on the bytes alone; if false, read through the tree directly."""
    if (data.find(b"<trkpt ") == -1 and data.find(b"<wpt ") == -1) or data.find(b"<!") != -1 \
            or data.find(_PLACEHOLDER_BYTES) != -1 or data.find(_WAYPOINT_BYTES) != -1:
        return False
    declared = _ENCODING.match(data)
    if declared and declared.group(1).decode("ascii").lower() not in _UTF8:
        return False
    declaration = data.find(b"<?")
    if declaration in (0, 3):  # the XML declaration, possibly after a byte order mark
        declaration = data.find(b"<?", declaration + 2)
    return declaration == -1


def _chunks(data: bytes, start_tag: bytes = b"<trkpt "):
    """Views of ``data`` of about :data:`_CHUNK_BYTES`, each cut where a point starts."""
    view, start = memoryview(data), 0
    while True:
        cut = data.find(start_tag, start + _CHUNK_BYTES)
        if cut == -1:
            yield view[start:]
            return
        yield view[start:cut]
        start = cut


def scan_points(data: bytes) -> Scan | None:
    """Cut the track points and waypoints out of ``data`` and convert them; ``None`` if the file needs the tree.

    Works through the file in chunks so that only one chunk's raw pieces exist
    at a time (the converted columns are a fraction of the file's size).
    Waypoints are cut from what is left after the track points, when they too
    meet the conditions in the module notes (otherwise the tree reads them).
    """
    cut = _cut(data, _POINT, b"trkpt", _PLACEHOLDER_BYTES)
    if cut is None:
        return None
    table, notes, skeleton = cut
    waypoints = None
    if skeleton.find(b"<wpt ") != -1:
        cut = _cut(skeleton, _WAYPOINT, b"wpt", _WAYPOINT_BYTES)
        if cut is not None:
            waypoints, waypoint_notes, skeleton = cut
            notes.add(waypoint_notes)
    if not len(table) and waypoints is None:
        return None
    return Scan(data, table, notes, skeleton, waypoints)


def _cut(data: bytes, pattern: re.Pattern, tag: bytes, placeholder: bytes):
    """``(table, notes, skeleton)`` of every ``tag`` element of ``data``, or ``None``."""
    expected = data.count(b"<%s " % tag)
    if data.count(tag) != 2 * expected:
        return None
    normalise = data.find(b"\r") != -1
    tables, skeleton, notes = [], [], ReadNotes()
    try:
        for chunk in _chunks(data, b"<%s " % tag) if expected else [data]:
            parts = pattern.split(chunk)
            # lxml refuses text nodes over 10 MB (huge_tree=False): an empty comment after each
            # chunk's placeholders splits a long segment's text
            skeleton.append(placeholder.join(parts[0::_GROUPS + 1]))
            if len(parts) > 1:
                table, chunk_notes = build_table(_texts(parts, normalise))
                tables.append(table)
                notes.add(chunk_notes)
    except (ValueProblem, UnicodeDecodeError):
        return None  # the tree reader judges the value and names its line
    table = PointTable.concat(tables)
    if len(table) != expected:
        return None
    return table, notes, b"<!---->".join(skeleton)


def skeleton_matches(scan: Scan, root, segments) -> bool:
    """Does the parsed skeleton satisfy the conditions in the module notes?

    ``segments`` are the skeleton's trkseg elements: no namespace may be declared
    between the root and the points, so the points' extensions see the root's.
    """
    encoding = (root.getroottree().docinfo.encoding or "utf-8").lower()
    return (encoding in _UTF8 and root.prefix is None
            and root.nsmap.get(None) == "http://www.topografix.com/GPX/1/1"
            and all(segment.nsmap == root.nsmap for segment in segments))


def _canonical_slot(block: str) -> str:
    """Plain-text elements as lxml would write them (no spacing, standard escaping)."""
    return "".join(f"<{name}>{escape_text(unescape(text))}</{name}>" for name, text in _SLOT_ELEMENT.findall(block))


def _decoded(column: list, normalise_lines: bool) -> list:
    """A column of byte strings (``None`` where absent) as ``str``, decoded in one go."""
    if not any(column):
        return [None] * len(column)
    if not all(column):
        column = [c or b"" for c in column]
    text = b"\x00".join(column).decode("utf-8")
    if normalise_lines:
        text = text.replace("\r\n", "\n").replace("\r", "\n")
    return text.split(_SEPARATOR)


def _texts(parts: list, normalise: bool) -> PointTexts:
    """The point texts of one chunk's split; empties :attr:`parts` as it goes to save memory."""
    def take(group):
        column = parts[1 + group::_GROUPS + 1]
        parts[1 + group::_GROUPS + 1] = [None] * len(column)
        return column

    lat, lon, ele, time = (_decoded(take(g), False) for g in (0, 1, 4, 5))
    lon_first = take(2)
    if any(lon_first):
        lat = [a or b for a, b in zip(lat, _decoded(take(3), False))]
        lon = [a or b for a, b in zip(lon, _decoded(lon_first, False))]
    name = _decoded(take(7), normalise)
    if name[0] is not None or any(name):
        name = [None if n is None else unescape(n) for n in name]
    sat, hdop, vdop, pdop = (_decoded(take(g), False) for g in (9, 10, 11, 12))
    inner = _decoded(take(15), normalise)
    opened = take(14)
    if all(opened):
        extra = [i or "" for i in inner] if None in inner else inner
    else:
        extra = [(i or "") if o else ("" if e else None) for o, i, e in zip(opened, inner, take(16))]
    slots = [_decoded(take(g), normalise) for g in (6, 8, 13)]
    for row in {i for column in slots for i, block in enumerate(column) if block}:
        extra[row] = point_extra(*(_canonical_slot(column[row] or "") for column in slots), extra[row])
    return PointTexts(lat, lon, ele, time, name, sat, hdop, vdop, pdop, extra)
