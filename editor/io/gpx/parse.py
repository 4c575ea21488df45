"""Parsing GPX bytes safely with lxml, and turning parse failures into clear errors.

Safety: entities are never resolved, no DTD is loaded, the network is never
used and lxml's limits on huge text nodes and deep nesting stay on
(``huge_tree=False``). A document type declaration with an internal subset
(entity declarations: "billion laughs", external entities pointing at files or
URLs) or an external identifier is refused before the parser runs, so such a
file costs no time, memory, file or network access.

Files larger than :data:`MAX_FILE_BYTES` are refused before reading.

A file cut off part way (or broken part way) raises a
:class:`~editor.io.errors.TrackFileError` whose ``partial`` attribute holds a
Document of the points before the break, read with lxml's recovering parser,
or ``None`` (no point could be salvaged; other errors have no ``partial``
attribute: use ``getattr(error, "partial", None)``). Points starting on or after
the broken line are left out, and so is the last point before it unless
another element started after it before the break (otherwise it may be
incomplete). The partial document is for viewing: it is not the file's content.
"""
from __future__ import annotations

import re

from lxml import etree

from ..errors import TrackFileError
from .tree import TreeReader
from .xml_parts import GPX10, GPX11, local_name

#: Largest file read, in bytes (1.5 GB). Reading needs a few times the file's size
#: in memory (measured: 2.5x on the fast path; the tree reader needs more), so larger
#: files are refused up front rather than running out of memory part way.
MAX_FILE_BYTES = 1_500_000_000

_PARSER_OPTIONS = dict(resolve_entities=False, no_network=True, load_dtd=False, huge_tree=False,
                       dtd_validation=False, remove_blank_text=False)
_DOCTYPE = re.compile(rb"<!DOCTYPE[^>\[]*?(\[|(SYSTEM|PUBLIC)\s)", re.IGNORECASE)


def size_problem(size: int) -> str | None:
    if size > MAX_FILE_BYTES:
        return (f"the file is {size / 1e9:.2f} GB; files over {MAX_FILE_BYTES / 1e9:.1f} GB are not read "
                "(they would not fit in memory)")
    return None


def _doctypes(data: bytes):
    """``(encoding, offset)`` of the first ``<!DOCTYPE`` in each encoding it is found in."""
    for encoding in ("utf-8", "utf-16-le", "utf-16-be"):
        start = data.find("<!DOCTYPE".encode(encoding))
        if start != -1:
            yield encoding, start


def _misplaced_doctype_line(data: bytes) -> int | None:
    """Line of a ``<!DOCTYPE`` that comes after the root element's start, or ``None``."""
    for encoding, start in _doctypes(data):
        root = re.search(re.escape("<".encode(encoding)) + b"(?!" + re.escape("?".encode(encoding)) + b"|"
                         + re.escape("!".encode(encoding)) + b")", data)
        if root is not None and root.start() < start:
            return data.count("\n".encode(encoding), 0, start) + 1
    return None


def _refuse_doctype(data: bytes, path) -> None:
    # the whole file is searched (one fast pass): a declaration after a long comment is still found
    for encoding, start in _doctypes(data):
        head = data[start:data.find(">".encode(encoding), start) + 1].decode(encoding, "replace").encode()
        if _DOCTYPE.search(head):
            newline = "\n".encode(encoding)
            raise TrackFileError(path, "the file declares a document type with entities or outside references "
                                       "(<!DOCTYPE ...[...]> or SYSTEM/PUBLIC), which is refused for safety; "
                                       "GPX files never need one", data.count(newline, 0, start) + 1)


def parse_root(data: bytes, path):
    """The root element of a GPX 1.0/1.1 document; raises TrackFileError for anything else."""
    if re.search(rb"[^\s\x00\xef\xbb\xbf\xfe\xff]", data) is None:
        raise TrackFileError(path, "the file is empty")
    _refuse_doctype(data, path)
    parser = etree.XMLParser(**_PARSER_OPTIONS)
    try:
        root = etree.fromstring(data, parser)
    except etree.XMLSyntaxError as error:
        raise _syntax_error(error, data, path) from None
    docinfo = root.getroottree().docinfo
    subset = docinfo.internalDTD
    if docinfo.system_url or docinfo.public_id or (subset is not None and any(True for _ in subset.iterentities())):
        line = next((data.count("\n".encode(e), 0, start) + 1 for e, start in _doctypes(data)), None)
        raise TrackFileError(path, "the file declares a document type with entities or outside references, "
                                   "which is refused for safety; GPX files never need one", line)
    check_root(root, path)
    return root


class _Discard:
    """A parser target that keeps nothing: lxml checks the document without building a tree."""

    def close(self) -> None:
        return None


def validate(data: bytes, path) -> None:
    """Check that ``data`` is well-formed, namespace-correct XML; build nothing."""
    _refuse_doctype(data, path)
    parser = etree.XMLParser(target=_Discard(), **_PARSER_OPTIONS)
    try:
        etree.fromstring(data, parser)
    except etree.XMLSyntaxError as error:
        raise _syntax_error(error, data, path) from None
    for entry in parser.error_log:  # a target parser only logs namespace errors
        if entry.level >= etree.ErrorLevels.ERROR:
            failure = TrackFileError(path, f"broken XML: {entry.message}", entry.line)
            failure.partial = _partial_document(data, path, entry.line)
            raise failure


def check_root(root, path) -> None:
    ns, local = local_name(root)
    if local != "gpx":
        raise TrackFileError(path, f"this is not a GPX file: its root element is <{local}>"
                                   + (f" in namespace {ns}" if ns else ""), root.sourceline)
    if ns not in (GPX11, GPX10):
        found = f"namespace {ns!r}" if ns else "no namespace"
        raise TrackFileError(path, f"the <gpx> element has {found}; expected GPX 1.1 ({GPX11}) "
                                   f"or GPX 1.0 ({GPX10})", root.sourceline)


def _syntax_error(error: etree.XMLSyntaxError, data: bytes, path) -> TrackFileError:
    message = re.sub(r",? line \d+, column \d+\s*$", "", str(error.msg or error)).strip()
    line = error.lineno or None
    if error.offset:
        message += f" (column {error.offset})"
    depth = re.search(r"[Ee]xcessive depth in document: (\d+)", message)
    misplaced = _misplaced_doctype_line(data)
    if depth:
        problem = (f"the elements are nested too deeply (more than {depth.group(1)} levels); such files are "
                   "refused for safety")
    elif misplaced is not None and (line is None or misplaced <= line):
        problem, line = ("a document type declaration (<!DOCTYPE ...>) appears after the document has "
                         "started; it is only allowed before the root element"), misplaced
    elif "huge" in message.lower() or "xmlSAX2Characters" in message:
        problem = ("a single text or attribute value is too large (over 10,000,000 characters); such "
                   "values are refused for safety")
    elif "amplification" in message or "entity" in message.lower() and "loop" in message.lower():
        problem = f"entity expansion refused for safety: {message}"
    elif line == 1 and ("Start tag expected" in message or "Document is empty" in message):
        problem = f"this is not an XML file: {message}"
    elif _cut_off(data, line, error.offset):
        problem = f"the file ends before the XML is complete (cut off?): {message}"
    else:
        problem = f"broken XML: {message}"
    failure = TrackFileError(path, problem, line)
    failure.partial = _partial_document(data, path, line)
    return failure


def _cut_off(data: bytes, line: int | None, column: int | None) -> bool:
    """Did parsing fail at the very end of a file whose root element never closes?"""
    end = data.rstrip()
    if line is None or end.endswith(b"gpx>"):
        return False
    start = 0
    for _ in range(line - 1):
        start = data.find(b"\n", start) + 1
        if start == 0:
            return False
    # libxml2 reports an unexpected end a few bytes before or after the last byte
    return start + (column or 1) - 1 >= len(end) - 4


def _partial_document(data: bytes, path, error_line: int | None):
    """Points before ``error_line``, read with the recovering parser; ``None`` if nothing usable."""
    try:
        root = etree.fromstring(data, etree.XMLParser(recover=True, **_PARSER_OPTIONS))
        if root is None:
            return None
        check_root(root, path)
        ns = local_name(root)[0]
        points = list(root.iter(f"{{{ns}}}wpt", f"{{{ns}}}rtept", f"{{{ns}}}trkpt"))
        limit = error_line if error_line is not None else float("inf")
        keep = [p for p in points if (p.sourceline or limit) < limit]
        if keep:  # the last point is complete only if something after it started before the break
            after = keep[-1].xpath("following::*[1]")
            if not after or (after[0].sourceline or limit + 1) > limit:
                keep.pop()
        kept = set(keep)
        for point in points:
            if point not in kept:
                point.getparent().remove(point)
        reader = TreeReader(root, path)
        doc = reader.document(reader.shape())
    except Exception:  # salvage is best effort: whatever fails, the error itself still stands
        return None
    if not doc.point_count and not len(doc.waypoints) and not any(len(r.points) for r in doc.routes):
        return None
    doc.warnings.insert(0, f"only the part before line {error_line} could be read; the file is broken there")
    return _writable(doc)


def _writable(doc):
    """``doc`` if what it keeps can be written and read again, else ``doc`` without opaque content.

    The recovering parser keeps damaged pieces (an undeclared prefix, say) that
    would make a saved copy unreadable; the points themselves are plain values.
    """
    from .write import gpx_bytes  # the writer is not needed to read intact files

    for attempt in range(2):
        try:
            validate(gpx_bytes(doc), None)
            return doc
        except Exception:  # noqa: BLE001 -- any failure means: drop what the model does not interpret
            if attempt:
                return None
            doc.extra = None
            for table in [doc.waypoints] + [r.points for r in doc.routes] + [t.points for t in doc.tracks]:
                table.extra[:] = None
            for item in doc.routes + doc.tracks:
                item.extra = None
            for track in doc.tracks:
                track.segment_extra = [None] * len(track.segment_extra)
            doc.warnings.insert(1, "damaged content other than the points' values was left out")
    return None
