"""XML helpers shared by the GPX reader and writer: namespaces, schema order, fragments.

A *fragment* is the XML text of one element that the model keeps opaque. It is
written back verbatim inside a root that declares GPX 1.1 as the default
namespace plus the file's own prefixes, so the namespace declarations that
root provides are left out of each fragment and every other one stays in it.
"""
from __future__ import annotations

import re

from lxml import etree

from ...model.payload import TW_NS, TW_PREFIX

GPX11 = "http://www.topografix.com/GPX/1/1"
GPX10 = "http://www.topografix.com/GPX/1/0"
GPX11_XSD = "http://www.topografix.com/GPX/1/1/gpx.xsd"
XSI = "http://www.w3.org/2001/XMLSchema-instance"

#: Children of a GPX 1.1 point the model interprets.
POINT_FIELDS = ("ele", "time", "name", "sat", "hdop", "vdop", "pdop")
#: Opaque point children: element -> (slot, rank within the slot), GPX 1.1 schema order.
POINT_SLOTS = {"magvar": (0, 0), "geoidheight": (0, 1),
               "cmt": (1, 0), "desc": (1, 1), "src": (1, 2), "link": (1, 3), "sym": (1, 4),
               "type": (1, 5), "fix": (1, 6), "ageofdgpsdata": (2, 0), "dgpsid": (2, 1)}
#: Opaque children of trk and rte after their name, GPX 1.1 schema order.
CONTAINER_SLOTS = {"cmt": 0, "desc": 1, "src": 2, "link": 3, "number": 4, "type": 5}

_START_DECLS = re.compile(r'<[^\s/>!?]+((?:\s+xmlns(?::[^\s="]+)?="[^"]*")+)')
_DECL = re.compile(r'xmlns(?::[^\s="]+)?="[^"]*"')
_NOT_XML_CHAR = re.compile("[^\t\n\r\x20-\ud7ff\ue000-\ufffd\U00010000-\U0010ffff]")


def escape_text(text: str) -> str:
    """Escape character data; a carriage return becomes a reference so it survives re-reading."""
    if "&" in text:
        text = text.replace("&", "&amp;")
    if "<" in text:
        text = text.replace("<", "&lt;")
    if ">" in text:
        text = text.replace(">", "&gt;")
    if "\r" in text:
        text = text.replace("\r", "&#13;")
    return text


def escape_attribute(text: str) -> str:
    """Escape a double-quoted attribute value the way lxml does (whitespace kept as references)."""
    text = escape_text(text).replace('"', "&quot;")
    return text.replace("\n", "&#10;").replace("\t", "&#9;")


def bad_xml_character(text: str) -> str | None:
    """The first character XML 1.0 cannot hold, or ``None``."""
    match = _NOT_XML_CHAR.search(text)
    return match.group() if match else None


def unescape(text: str) -> str:
    """Undo the escaping of character data (the predefined entities and character references)."""
    if "&" not in text:
        return text
    return re.sub(r"&(#x[0-9a-fA-F]+|#[0-9]+|lt|gt|amp|quot|apos);", _entity, text)


def _entity(match: re.Match) -> str:
    name = match.group(1)
    if name[0] == "#":
        return chr(int(name[2:], 16) if name[1] == "x" else int(name[1:]))
    return {"lt": "<", "gt": ">", "amp": "&", "quot": '"', "apos": "'"}[name]


def declarations(namespaces) -> frozenset[str]:
    """The declarations ``xmlns="GPX 1.1"`` plus ``xmlns:p="uri"`` as lxml spells them.

    Spelled here rather than by serializing an element with that nsmap: lxml's
    cost for that grows with the square of the number of prefixes (100,000
    declarations on a root took over a minute).
    """
    found = {f'xmlns="{GPX11}"'}
    found.update(f'xmlns:{prefix}="{escape_attribute(uri)}"' for prefix, uri in dict(namespaces).items())
    return frozenset(found)


class Fragments:
    """Serializes opaque elements relative to the namespaces the written root will declare."""

    def __init__(self, namespaces):
        self.root_decls = declarations(namespaces)

    def of(self, element, with_tail: bool = False) -> str:
        """XML text of ``element`` (and its tail), without the root's declarations."""
        text = etree.tostring(element, encoding="unicode", with_tail=with_tail)
        match = _START_DECLS.match(text)
        if match is None:
            return text
        kept = "".join(" " + d for d in _DECL.findall(match.group(1)) if d not in self.root_decls)
        return text[:match.start(1)] + kept + text[match.end(1):]

    def inner(self, element) -> str:
        """Inner XML of ``element``: its text and every child with its tail."""
        return escape_text(element.text or "") + "".join(self.of(c, with_tail=True) for c in element)

    def renamed(self, element, namespace: str = TW_NS) -> str:
        """XML of a copy of ``element`` whose GPX-namespace elements are moved to ``namespace``.

        Used for GPX elements found where GPX 1.1 has no place for them (they go
        into ``<extensions>`` under our own namespace) and for GPX 1.0 elements
        that have a GPX 1.1 counterpart (``namespace=GPX11``).
        """
        copy = copy_renamed(element, namespace)
        etree.cleanup_namespaces(copy)
        return self.of(copy)


def copy_renamed(element, namespace: str):
    """Deep copy of ``element`` with GPX 1.0/1.1 elements put into ``namespace``."""
    nsmap = {p: u for p, u in element.nsmap.items() if u not in (GPX10, GPX11) and p != TW_PREFIX}
    nsmap[None if namespace == GPX11 else TW_PREFIX] = namespace
    top = etree.Element(_renamed_tag(element.tag, namespace), nsmap=nsmap)
    _fill(top, element, namespace)
    return top


def _renamed_tag(tag: str, namespace: str) -> str:
    qname = etree.QName(tag)
    if qname.namespace in (GPX10, GPX11):
        return f"{{{namespace}}}{qname.localname}"
    return tag


def _fill(target, source, namespace: str) -> None:
    for key, value in source.attrib.items():
        target.set(key, value)
    target.text = source.text
    for child in source:
        if isinstance(child.tag, str):
            copy = etree.SubElement(target, _renamed_tag(child.tag, namespace))
            _fill(copy, child, namespace)
        else:
            copy = _copy_node(child)
            target.append(copy)
        copy.tail = child.tail


def _copy_node(node):
    """A comment or processing instruction, copied."""
    if isinstance(node, etree._Comment):
        return etree.Comment(node.text)
    return etree.ProcessingInstruction(node.target, node.text)


def local_name(element) -> tuple[str | None, str]:
    """``(namespace, local name)`` of an element."""
    qname = etree.QName(element)
    return qname.namespace, qname.localname


def qualified_attribute(key: str, nsmap: dict) -> str:
    """``{uri}name`` -> ``prefix:name`` using the root's declarations."""
    if not key.startswith("{"):
        return key
    uri, local = key[1:].split("}", 1)
    if uri == "http://www.w3.org/XML/1998/namespace":
        return f"xml:{local}"
    for prefix, value in nsmap.items():
        if value == uri and prefix:
            return f"{prefix}:{local}"
    raise KeyError(uri)
