"""Opaque payloads: everything a GPX element holds that the model does not interpret.

The reader keeps each uninterpreted child element as XML text, exactly as the
file spelled it or as lxml serializes it, with the namespace prefixes declared
on the file's root (the writer declares the same ones again) and any other
declaration carried by the fragment itself. Payloads are immutable values
(``str`` or frozen dataclasses of ``str``), so the model compares them with
``==`` and shares them between copies safely.

A point's payload (the ``extra`` column) takes one of three forms:

* ``None``: the point has nothing uninterpreted;
* ``str``: the inner XML of the point's ``<extensions>`` element, when that is
  all it has (the common case: heart rate, temperature, ...); ``""`` is an
  empty ``<extensions/>``;
* :class:`PointExtra`: anything else.

Always build payloads with :func:`point_extra`, which picks the form, so equal
content gives equal payloads.

GPX 1.1 fixes the order of a point's children. The interpreted ones (ele,
time, name, sat, hdop, vdop, pdop) sit between the opaque ones, so
:class:`PointExtra` keeps the opaque children in three slots and the writer
emits them in schema order::

    ele time [after_time: magvar geoidheight] name
    [after_name: cmt desc src link* sym type fix] sat hdop vdop pdop
    [after_pdop: ageofdgpsdata dgpsid] <extensions>[extensions]</extensions>

GPX 1.0 per-point ``<speed>`` (metres per second) and ``<course>`` (degrees
clockwise from true north), which GPX 1.1 dropped, are kept inside
``<extensions>`` as ``<tw:speed>`` and ``<tw:course>`` with the text the file
had; :func:`recorded_motion` reads them back as numbers, from a GPX 1.0 file
or from a GPX 1.1 file we wrote.

Points added by a tool (gap filling) are marked inside ``<extensions>`` with an
element of our own namespace, ``<tw:inserted how="gap-fill"/>`` where ``tw`` is
``urn:x-trackwright:gpx:1``. The marker carries its own namespace declaration
so it stays valid wherever it is copied; it is recognised in the form
Trackwright writes it.

When the spike tool removes fixes next to a signal-loss gap (the catch-up after
a tunnel), the gap it leaves is longer than the signal loss was. The first fix
kept after it then carries ``<tw:gap-as-recorded seconds="113"/>``: the longest
time without a fix there as the receiver recorded it, so the gap tool can hold
its length limit against the signal loss and not against what a tool removed.
The gap tool drops the marker when it fills the gap.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field

import numpy as np
from lxml import etree

#: Namespace of the elements Trackwright itself adds to a GPX file.
TW_NS = "urn:x-trackwright:gpx:1"
TW_PREFIX = "tw"
_MARKER_START = f'<{TW_PREFIX}:inserted xmlns:{TW_PREFIX}="{TW_NS}"'
_MOTION = re.compile(rf'<{TW_PREFIX}:(speed|course) xmlns:{TW_PREFIX}="{re.escape(TW_NS)}">\s*([^<]*?)\s*'
                     rf'</{TW_PREFIX}:\1>')
_GAP_START = f'<{TW_PREFIX}:gap-as-recorded xmlns:{TW_PREFIX}="{TW_NS}"'
_GAP_SECONDS = re.compile(re.escape(_GAP_START) + r' seconds="([0-9.eE+-]+)"/>')


@dataclass(frozen=True)
class PointExtra:
    """Uninterpreted children of one ``wpt``/``trkpt``/``rtept``, as XML text.

    Each slot is the concatenated XML of its elements in schema order.
    ``extensions`` is the inner XML of ``<extensions>``, or ``None`` when the
    point has no such element.
    """

    after_time: str = ""
    after_name: str = ""
    after_pdop: str = ""
    extensions: str | None = None


@dataclass(frozen=True)
class ElementExtra:
    """Uninterpreted children of a ``trk``, ``rte`` or ``trkseg``.

    ``after_name`` is the XML of cmt, desc, src, link*, number, type in schema
    order (always empty for a segment); ``extensions`` as in :class:`PointExtra`.
    """

    after_name: str = ""
    extensions: str | None = None


@dataclass(frozen=True)
class DocumentExtra:
    """File-level content of a GPX document.

    Attributes
    ----------
    namespaces : ``(prefix, uri)`` declarations of the root element, in file
        order, other than the default namespace (the writer always declares
        GPX 1.1 as the default namespace).
    attributes : ``(qualified name, value)`` root attributes other than
        ``version`` and ``creator``, e.g. ``("xsi:schemaLocation", "...")``.
    creator : the root's ``creator`` attribute as read; ``None`` writes
        ``"Trackwright"``.
    metadata : the XML of the ``<metadata>`` element, or ``None``.
    extensions : inner XML of the root ``<extensions>``, or ``None``.
    source_version : GPX version the file was read as (``"1.1"`` or ``"1.0"``);
        informative only (not compared): the writer always writes 1.1.
    source_texts : the file's own text of point values that the writer's compact
        form would not reproduce (a :class:`editor.io.gpx.source_texts.SourceTexts`),
        or ``None``; not compared (it describes the file, not the content).
    """

    namespaces: tuple[tuple[str, str], ...] = ()
    attributes: tuple[tuple[str, str], ...] = ()
    creator: str | None = None
    metadata: str | None = None
    extensions: str | None = None
    source_version: str = field(default="1.1", compare=False)
    source_texts: object = field(default=None, compare=False, repr=False)


def point_extra(after_time: str = "", after_name: str = "", after_pdop: str = "",
                extensions: str | None = None):
    """The canonical payload for a point with these uninterpreted parts."""
    if after_time or after_name or after_pdop:
        return PointExtra(after_time, after_name, after_pdop, extensions)
    return extensions


def extensions_of(payload) -> str | None:
    """Inner XML of the point's ``<extensions>`` (``None`` if it has none)."""
    if isinstance(payload, PointExtra):
        return payload.extensions
    return payload


def _with_extensions(payload, extensions: str | None):
    if isinstance(payload, PointExtra):
        return point_extra(payload.after_time, payload.after_name, payload.after_pdop, extensions)
    return extensions


def marker_xml(how: str = "gap-fill") -> str:
    """The marker element for a point inserted by a tool, as XML text."""
    element = etree.Element(f"{{{TW_NS}}}inserted", nsmap={TW_PREFIX: TW_NS})
    element.set("how", how)
    return etree.tostring(element, encoding="unicode")


def _without_marker(extensions: str) -> str:
    start = extensions.find(_MARKER_START)
    while start >= 0:
        stop = extensions.index("/>", start) + 2
        extensions = extensions[:start] + extensions[stop:]
        start = extensions.find(_MARKER_START)
    return extensions


def mark_inserted(payload, how: str = "gap-fill"):
    """Return ``payload`` marked "inserted by a tool, not measured".

    ``how`` names the tool (a short word such as ``"gap-fill"``); an existing
    marker is replaced. ``payload`` may be ``None`` (a brand-new point).
    """
    kept = _without_marker(extensions_of(payload) or "")
    return _with_extensions(payload, kept + marker_xml(how))


#: The payload of a point the gap filler inserts, handed to it by the editor and the batch command
#: (processing never builds file content itself).
GAP_FILL_MARKER = mark_inserted(None, how="gap-fill")


def is_inserted(payload) -> bool:
    """True if the point carries the "inserted by a tool" marker."""
    extensions = extensions_of(payload)
    return extensions is not None and _MARKER_START in extensions


def inserted_mask(payloads: np.ndarray) -> np.ndarray:
    """Boolean mask over an ``extra`` column: which points are marked inserted."""
    return np.fromiter((is_inserted(p) for p in payloads), dtype=bool, count=len(payloads))


def strip_marker(payload):
    """Return ``payload`` without the inserted-point marker.

    An ``<extensions>`` left empty by the removal is dropped, so marking and
    unmarking a point that had none gives back ``None``.
    """
    if not is_inserted(payload):
        return payload
    kept = _without_marker(extensions_of(payload))
    return _with_extensions(payload, kept or None)


def recorded_motion(payload) -> tuple[float, float]:
    """``(speed m/s, course degrees)`` a GPX 1.0 point recorded, NaN where absent or not a number.

    Recognises the form the reader gives GPX 1.0 ``<speed>``/``<course>``
    (``<tw:speed xmlns:tw="urn:x-trackwright:gpx:1">4.25</tw:speed>``), which the
    writer puts in the point's ``<extensions>`` and reading our GPX 1.1 gives back.
    """
    found = {"speed": float("nan"), "course": float("nan")}
    extensions = extensions_of(payload)
    if extensions and f"{TW_PREFIX}:" in extensions:
        for name, text in _MOTION.findall(extensions):
            try:
                found[name] = float(text)
            except ValueError:
                pass
    return found["speed"], found["course"]


def _without_gap_record(extensions: str) -> str:
    return _GAP_SECONDS.sub("", extensions)


def gap_as_recorded_s(payload) -> float | None:
    """Seconds of the signal-loss gap before this fix as recorded, if a tool removed fixes beside it."""
    extensions = extensions_of(payload)
    if not extensions or _GAP_START not in extensions:
        return None
    found = _GAP_SECONDS.search(extensions)
    return float(found.group(1)) if found else None


def mark_gap_as_recorded(payload, seconds: float):
    """Return ``payload`` with the "gap as recorded" marker (an existing one is replaced)."""
    element = etree.Element(f"{{{TW_NS}}}gap-as-recorded", nsmap={TW_PREFIX: TW_NS})
    element.set("seconds", f"{float(seconds):.3f}".rstrip("0").rstrip("."))
    kept = _without_gap_record(extensions_of(payload) or "")
    return _with_extensions(payload, kept + etree.tostring(element, encoding="unicode"))


def strip_gap_record(payload):
    """Return ``payload`` without the "gap as recorded" marker (an emptied ``<extensions>`` is dropped)."""
    if gap_as_recorded_s(payload) is None:
        return payload
    kept = _without_gap_record(extensions_of(payload))
    return _with_extensions(payload, kept or None)
