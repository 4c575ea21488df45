"""Opaque point payloads and the "inserted by a tool" marker in our own namespace."""
import numpy as np
from lxml import etree

from editor.io.gpx import gpx_bytes, read_gpx_bytes
from editor.model.payload import (TW_NS, PointExtra, extensions_of, inserted_mask, is_inserted, mark_inserted,
                               marker_xml, point_extra, strip_marker)
from editor.model import Document, PointTable, Track
from editor.model.payload import DocumentExtra
from tests.io.samples import LOGGER_11


def test_canonical_forms():
    assert point_extra() is None
    assert point_extra(extensions="<a:b/>") == "<a:b/>"
    assert point_extra(extensions="") == ""  # an empty <extensions/> is kept
    assert point_extra(after_name="<sym>x</sym>") == PointExtra("", "<sym>x</sym>", "", None)
    assert extensions_of(PointExtra(extensions="<a/>")) == "<a/>" and extensions_of(None) is None


def test_marker_is_an_element_of_our_namespace():
    marker = etree.fromstring(marker_xml("gap-fill"))  # lxml parses it on its own: it declares its namespace
    assert marker.tag == f"{{{TW_NS}}}inserted" and marker.get("how") == "gap-fill"
    assert marker.prefix == "tw"


def test_mark_detect_and_strip():
    for payload in (None, "<hr:hr>90</hr:hr>", PointExtra(after_name="<sym>x</sym>", extensions="<a:b/>")):
        marked = mark_inserted(payload)
        assert is_inserted(marked) and not is_inserted(payload)
        assert strip_marker(marked) == payload
        assert mark_inserted(marked, "resample") == mark_inserted(payload, "resample")  # replaced, not added
        assert extensions_of(mark_inserted(marked, "resample")).count("tw:inserted") == 1
    assert strip_marker("<hr:hr>90</hr:hr>") == "<hr:hr>90</hr:hr>"
    assert is_inserted(mark_inserted(None, 'odd "name" & <more>'))
    column = np.array([None, mark_inserted(None), "<x/>", mark_inserted("<x/>")], dtype=object)
    assert inserted_mask(column).tolist() == [False, True, False, True]


def test_marked_points_survive_writing_and_reading(gpx_schema, read_path):
    doc = read_gpx_bytes(LOGGER_11.encode())
    extra = doc.tracks[0].points.extra
    extra[1] = mark_inserted(extra[1])
    extra[2] = mark_inserted(None, "gap-fill")
    written = gpx_bytes(doc)
    gpx_schema.validate(written.decode())  # source: GPX 1.1 schema (extensions take other namespaces)
    again = read_gpx_bytes(written)
    assert again.equals(doc)
    assert inserted_mask(again.tracks[0].points.extra).tolist() == [False, True, True]
    assert strip_marker(again.tracks[0].points.extra[1]) == "<hr:hr>91</hr:hr>"


def test_new_points_with_markers_validate(gpx_schema):
    table = PointTable.from_columns([1.0, 1.001], [2.0, 2.001],
                                    extra=[None, mark_inserted(None)])
    doc = Document(tracks=[Track(table)], extra=DocumentExtra(creator="t"))
    written = gpx_bytes(doc)
    gpx_schema.validate(written.decode())
    assert read_gpx_bytes(written).equals(doc)
