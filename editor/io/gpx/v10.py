"""GPX 1.0 content that GPX 1.1 spells differently, rebuilt in the 1.1 form.

GPX 1.0 (namespace http://www.topografix.com/GPX/1/0) keeps file information as
top-level elements and links as ``url``/``urlname`` pairs; GPX 1.1 moved the
former into ``<metadata>`` and turned the latter into ``<link href><text>``.
"""
from __future__ import annotations

from lxml import etree

from .xml_parts import GPX11

#: Top-level GPX 1.0 elements that belong in GPX 1.1 ``<metadata>``.
V10_METADATA = frozenset(("name", "desc", "author", "email", "url", "urlname", "time", "keywords", "bounds"))


def _element(parent, local: str, text: str | None = None):
    tag = f"{{{GPX11}}}{local}"
    element = etree.Element(tag, nsmap={None: GPX11}) if parent is None else etree.SubElement(parent, tag)
    if text is not None:
        element.text = text
    return element


def v10_link(urls: dict, parent=None):
    """``<link href=url><text>urlname</text></link>`` from a 1.0 url/urlname pair."""
    link = _element(parent, "link")
    link.set("href", (urls.get("url") or "").strip())
    if urls.get("urlname"):
        _element(link, "text", urls["urlname"])
    return link


def metadata_from_v10(found: dict):
    """A GPX 1.1 ``<metadata>`` element from GPX 1.0 top-level elements (local name -> element)."""
    def text(local):
        return found[local].text or "" if local in found else None

    metadata = _element(None, "metadata")
    for local in ("name", "desc"):
        if local in found:
            _element(metadata, local, text(local))
    if "author" in found or "email" in found:
        author = _element(metadata, "author")
        if "author" in found:
            _element(author, "name", text("author"))
        if "email" in found:
            address = text("email").strip()
            user, at, domain = address.rpartition("@")
            email = _element(author, "email")
            email.set("id", user if at else address)
            email.set("domain", domain if at else "")
    if "url" in found or "urlname" in found:
        v10_link({k: text(k) for k in ("url", "urlname") if k in found}, metadata)
    for local in ("time", "keywords"):
        if local in found:
            _element(metadata, local, text(local))
    if "bounds" in found:
        bounds = _element(metadata, "bounds")
        for key in ("minlat", "minlon", "maxlat", "maxlon"):
            if found["bounds"].get(key) is not None:
                bounds.set(key, found["bounds"].get(key))
    return metadata
