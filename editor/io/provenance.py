"""What a cleaned copy records about its cleaning, and what it is called.

A cleaned copy carries, inside ``<metadata><extensions>``, one element of our own
namespace (``urn:x-trackwright:gpx:1``, see :mod:`editor.model.payload`)::

    <tw:cleaning xmlns:tw="urn:x-trackwright:gpx:1">
      <tw:caution>Cleaned tracks are estimates, not surveyed data, and are not for navigation.</tw:caution>
      <tw:run program="Trackwright" version="0.1.0" date="2026-12-03T02:30:00Z">
        <tw:step name="despike" label="Remove spikes" track="1">
          <tw:param name="confidence" value="0.999"/>
        </tw:step>
        <tw:step name="edit" label="Delete 3 points" track="1"/>
      </tw:run>
    </tw:cleaning>

One ``run`` per save that did something, in order; each ``step`` is one applied tool
(``name`` its key, with its parameters; an automatic value reads ``auto (54.2)``) or
hand edit (``name="edit"``), ``track`` counts from 1. Saving a file that already has
a record keeps its runs and adds the new one after them; the caution appears once.
The GPX 1.1 schema lets ``<extensions>`` hold any element of another namespace
(``processContents="lax"``), and ``extensions`` is the last child of ``metadata``,
so the record is appended there and the file stays valid.

Qt-free: used by the window's save and by ``trackwright clean``.
"""
from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path
from typing import Any, Iterable

from lxml import etree

from .. import CAUTION
from ..model.payload import TW_NS, TW_PREFIX, DocumentExtra

#: Added to the original's name for a cleaned copy, by the window and by ``clean -d``:
#: ``ride.gpx`` -> ``ride-cleaned.gpx``.
CLEANED_SUFFIX = "-cleaned"
PROGRAM = "Trackwright"
GPX_NS = "http://www.topografix.com/GPX/1/1"


def cleaned_copy_name(original: str | Path, extension: str = ".gpx") -> Path:
    """Default name of a cleaned copy, beside the original (``ride.gpx`` -> ``ride-cleaned.gpx``)."""
    original = Path(original)
    return original.with_name(original.stem + CLEANED_SUFFIX + extension)


@dataclass(frozen=True)
class StepRecord:
    """One step of a cleaning: a tool with its parameters, or a hand edit (``tool="edit"``).

    ``track`` counts from 0 (written from 1); ``params`` are ``(name, text)`` pairs.
    """

    tool: str
    label: str
    track: int = 0
    params: tuple[tuple[str, str], ...] = ()


def _text(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return f"{value:.6g}" if math.isfinite(value) else "n/a"
    return str(getattr(value, "name", value))


def params_record(params: Any, info: dict | None = None) -> tuple[tuple[str, str], ...]:
    """``(name, text)`` for every field of a tool's parameter dataclass.

    A field left automatic (``None``) reads ``"auto"``, or ``"auto (54.2)"`` when the tool's
    ``info`` reports the value it chose under the same name.
    """
    if params is None or not dataclasses.is_dataclass(params):
        return ()
    out = []
    for f in dataclasses.fields(params):
        if f.name.startswith("_"):
            continue
        value = getattr(params, f.name)
        if value is None:
            chosen = (info or {}).get(f.name)
            text = (f"auto ({_text(float(chosen))})" if isinstance(chosen, (int, float)) and
                    not isinstance(chosen, bool) and math.isfinite(chosen) else "auto")
        elif dataclasses.is_dataclass(value) and not hasattr(value, "name"):
            continue  # nested settings (the clean's statistics thresholds) are not a tool parameter
        else:
            text = _text(value)
        out.append((f.name, text))
    return tuple(out)


def _tw(name: str) -> str:
    return f"{{{TW_NS}}}{name}"


def _run_element(steps: Iterable[StepRecord], version: str, when: datetime) -> etree._Element:
    run = etree.Element(_tw("run"), nsmap={TW_PREFIX: TW_NS})
    run.set("program", PROGRAM)
    run.set("version", version)
    run.set("date", when.astimezone(timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ"))
    for step in steps:
        element = etree.SubElement(run, _tw("step"))
        element.set("name", step.tool)
        element.set("label", step.label)
        element.set("track", str(step.track + 1))
        for name, text in step.params:
            param = etree.SubElement(element, _tw("param"))
            param.set("name", name)
            param.set("value", text)
    return run


def _wrapped(extra: DocumentExtra) -> tuple[etree._Element, str]:
    """The metadata element parsed inside a wrapper that declares the file root's namespaces."""
    declarations = f' xmlns="{GPX_NS}"' + "".join(
        f' xmlns:{prefix}="{uri}"' for prefix, uri in extra.namespaces)
    wrapper = etree.fromstring(f"<wrap{declarations}>{extra.metadata}</wrap>".encode("utf-8"))
    return wrapper[0], declarations


def _unwrapped(metadata: etree._Element, declarations: str) -> str:
    """Serialise ``metadata`` without the declarations the writer puts on the root again."""
    text = etree.tostring(metadata, encoding="unicode", with_tail=False)
    head_end = text.index(">")
    head = text[:head_end]
    for declaration in declarations.split(" xmlns")[1:]:
        head = head.replace(" xmlns" + declaration, "", 1)
    return head + text[head_end:]


def cleaning_runs(extra: Any) -> list[etree._Element]:
    """The ``tw:run`` elements already recorded in a document's metadata (oldest first)."""
    if not isinstance(extra, DocumentExtra) or not extra.metadata:
        return []
    metadata, _ = _wrapped(extra)
    return list(metadata.iterfind(f"{{{GPX_NS}}}extensions/{_tw('cleaning')}/{_tw('run')}"))


def with_cleaning_record(extra: Any, steps: list[StepRecord], version: str,
                         when: datetime | None = None) -> DocumentExtra:
    """``extra`` (a document's file-level payload) with this save's steps added to the cleaning record.

    Earlier runs are kept; a save with no step adds no run (but the caution is written).
    """
    extra = extra if isinstance(extra, DocumentExtra) else DocumentExtra()
    when = when or datetime.now(timezone.utc)
    if extra.metadata:
        try:
            metadata, declarations = _wrapped(extra)
        except etree.XMLSyntaxError:
            return extra  # metadata we cannot rebuild safely is kept exactly; the copy is still saved
    else:
        metadata, declarations = etree.Element(f"{{{GPX_NS}}}metadata", nsmap={None: GPX_NS}), f' xmlns="{GPX_NS}"'
    extensions = metadata.find(f"{{{GPX_NS}}}extensions")
    if extensions is None:
        extensions = etree.SubElement(metadata, f"{{{GPX_NS}}}extensions")
        if len(metadata) > 1:  # the element before it ends with the indentation of a child
            extensions.tail, metadata[-2].tail = metadata[-2].tail, metadata.text or ""
    earlier = extensions.find(_tw("cleaning"))
    runs = [] if earlier is None else list(earlier.iterfind(_tw("run")))
    record = etree.Element(_tw("cleaning"), nsmap={TW_PREFIX: TW_NS})
    caution = etree.SubElement(record, _tw("caution"))
    caution.text = CAUTION
    for run in runs:
        record.append(run)
    if steps:
        record.append(_run_element(steps, version, when))
    etree.indent(record, space="  ", level=3)  # readable in the file: gpx > metadata > extensions > here
    if earlier is not None:
        record.tail = earlier.tail
        earlier.addprevious(record)
        extensions.remove(earlier)
    else:
        if not len(extensions) and not (extensions.text or "").strip():
            extensions.text, record.tail = "\n      ", "\n    "
        extensions.append(record)
    return dataclasses.replace(extra, metadata=_unwrapped(metadata, declarations))


__all__ = ["CAUTION", "CLEANED_SUFFIX", "StepRecord", "cleaned_copy_name", "cleaning_runs", "params_record",
           "with_cleaning_record"]
