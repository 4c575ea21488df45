"""Formatting point columns as GPX elements in bulk.

The text of a run of points is made by one ``%`` formatting call per chunk of
points: each column contributes a piece of the per-point format and one or
more argument lists, computed with numpy. This keeps writing at a fraction of
a microsecond per value.

Latitude, longitude, elevation and time are written with the file's own text
where the value is unchanged, and compactly otherwise (about 1 cm; see
:mod:`editor.io.gpx.source_texts`). The other numbers (hdop, vdop, pdop, sat) are
exact: a column whose values all have at most 9 decimals is written as
fixed-point integers (``"%d.%07d"``) after checking that the written decimal
reads back to the same float (IEEE division of the integer by 10**k is
correctly rounded, so ``rint(v*10**k)/10**k == v`` is that check); other values
are written with ``repr``, the shortest text that reads back exactly, turned
positional where ``repr`` would use an exponent (xsd:decimal has none).
"""
from __future__ import annotations

from itertools import chain
from typing import Iterator

import numpy as np

from .source_texts import SourceTexts, number_texts
from ...model.payload import PointExtra

_CHUNK = 50_000
_EXACT_LIMIT = 2.0 ** 53


def _decimal(value: float) -> str:
    text = repr(value)
    return np.format_float_positional(value, unique=True, trim="-") if "e" in text else text


def decimals_needed(values: np.ndarray) -> int | None:
    """Fewest decimals (0-9) that write every value exactly; ``None`` if some need more."""
    for decimals in range(10):
        scale = 10.0 ** decimals
        scaled = np.rint(values * scale)
        if np.all(np.abs(scaled) < _EXACT_LIMIT) and np.array_equal(scaled / scale, values):
            return decimals
    return None


def decimal_format(values: np.ndarray, decimals: int | None) -> tuple[str, list[list]]:
    """A ``%`` format for one value and its argument lists, writing ``values`` exactly.

    ``decimals`` comes from :func:`decimals_needed` on these values (or on a
    column they are part of).
    """
    if decimals is None:
        return "%s", [[_decimal(v) for v in values.tolist()]]
    integers = np.rint(values * 10.0 ** decimals).astype(np.int64)
    magnitude = np.abs(integers)
    if decimals:
        whole, fraction = np.divmod(magnitude, 10 ** decimals)
        fmt, lists = f"%d.%0{decimals}d", [whole.tolist(), fraction.tolist()]
    else:
        fmt, lists = "%d", [magnitude.tolist()]
    negative = integers < 0
    if negative.any():
        fmt, lists = "%s" + fmt, [np.where(negative, "-", "").tolist()] + lists
    return fmt, lists


def time_texts(times: np.ndarray) -> list[str]:
    """ISO 8601 UTC text without the final "Z" ("2024-05-01T10:00:00.25") of valid times."""
    seconds = times.astype("datetime64[s]")
    texts = np.datetime_as_string(seconds, unit="s").tolist()
    fraction_ns = (times - seconds).astype(np.int64)
    for i in np.flatnonzero(fraction_ns).tolist():
        texts[i] += f".{fraction_ns[i]:09d}".rstrip("0")
    return texts


class PointFormat:
    """The per-point format and argument lists of a run of points, built column by column."""

    def __init__(self, count: int):
        self.count = count
        self.pieces: list[str] = []
        self.lists: list[list] = []

    def literal(self, text: str) -> None:
        self.pieces.append(text.replace("%", "%%"))

    def texts(self, texts) -> None:
        """One ready-made text per point ("" for none); nothing is added if all are empty."""
        if any(texts):
            self.pieces.append("%s")
            self.lists.append(texts)

    def value(self, fmt: str, lists: list[list]) -> None:
        self.pieces.append(fmt)
        self.lists.extend(lists)

    def element(self, name: str, indent: str, present: np.ndarray, fmt: str, lists: list[list]) -> None:
        """``<name>value</name>`` on its own line where ``present``."""
        before, after = f"\n{indent}<{name}>", f"</{name}>"
        if present.all():
            self.literal(before)
            self.value(fmt, lists)
            self.literal(after)
        elif present.any():
            out = [""] * self.count
            for i, row in zip(np.flatnonzero(present).tolist(), zip(*lists)):
                out[i] = before + fmt % row + after
            self.texts(out)

    def number(self, name: str, indent: str, values: np.ndarray, decimals: int | None) -> None:
        present = ~np.isnan(values)
        if present.any():
            self.element(name, indent, present, *decimal_format(values[present], decimals))

    def time(self, indent: str, times: np.ndarray, source: SourceTexts | None = None) -> None:
        present = ~np.isnat(times)
        if present.any():
            values = times[present]
            texts = [t + "Z" for t in time_texts(values)]
            if source:
                rows, kept = source.lookup("time", values)
                for row, text in zip(rows.tolist(), kept):
                    texts[row] = text
            self.element("time", indent, present, "%s", [texts])

    def kept_number(self, name: str, indent: str, values: np.ndarray, source: SourceTexts | None) -> None:
        """``<name>`` with the file's own text where the value is unchanged, else compact."""
        present = ~np.isnan(values)
        if present.any():
            self.element(name, indent, present, "%s", [number_texts(values[present], name, source)])

    def extras(self, indent: str, payloads: list) -> tuple[list, list, list]:
        """Add ``<extensions>``; return the three other slots' texts (after time, name, pdop)."""
        kinds = set(map(type, payloads))
        none = [""] * self.count
        wrap = f"\n{indent}<extensions>%s</extensions>"
        if kinds == {str}:
            self.element("extensions", indent, np.ones(self.count, bool), "%s", [payloads])
            return none, none, none
        if kinds <= {str, type(None)}:
            self.texts(["" if p is None else wrap % p for p in payloads])
            return none, none, none
        slots = ([], [], [], [])
        for p in payloads:
            p = p if isinstance(p, PointExtra) else PointExtra(extensions=p)
            slots[0].append(f"\n{indent}{p.after_time}" if p.after_time else "")
            slots[1].append(f"\n{indent}{p.after_name}" if p.after_name else "")
            slots[2].append(f"\n{indent}{p.after_pdop}" if p.after_pdop else "")
            slots[3].append("" if p.extensions is None else wrap % p.extensions)
        self.texts(slots[3])
        return slots[0], slots[1], slots[2]

    def render(self) -> str:
        """The text of all points."""
        return ("".join(self.pieces) * self.count) % tuple(chain.from_iterable(zip(*self.lists)))


_NUMBERS = ("ele", "sat", "hdop", "vdop", "pdop")


def format_points(table, tag: str, indent: str, names: list | None,
                  source: SourceTexts | None = None) -> Iterator[str]:
    """GPX elements for every point of ``table`` (validated by the caller), in chunks of text.

    ``names`` are the escaped ``<name>`` texts (``None`` for no name), or
    ``None`` when no point has a name. ``source`` holds the file's own text of
    values (see :mod:`editor.io.gpx.source_texts`). Chunks keep the memory for the
    formatting arguments small however long the track.
    """
    lon = np.where(table.lon == 180.0, -180.0, table.lon)  # same meridian; GPX allows [-180, 180)
    decimals = {}
    for name in _NUMBERS[1:]:
        column = getattr(table, name)
        decimals[name] = decimals_needed(column[~np.isnan(column)])
    for start in range(0, len(table), _CHUNK):
        rows = slice(start, start + _CHUNK)
        yield _format_chunk(table.take(rows), lon[rows], tag, indent, None if names is None else names[rows],
                            decimals, source)


def _format_chunk(table, lon, tag: str, indent: str, names, decimals: dict, source) -> str:
    inner = indent + "  "
    count = len(table)
    extensions = PointFormat(count)
    after_time, after_name, after_pdop = extensions.extras(inner, table.extra.tolist())
    out = PointFormat(count)
    out.literal(f'{indent}<{tag} lat="')
    out.value("%s", [number_texts(table.lat, "lat", source)])
    out.literal('" lon="')
    out.value("%s", [number_texts(lon, "lon", source)])
    out.literal('">')
    out.kept_number("ele", inner, table.ele, source)
    out.time(inner, table.time, source)
    out.texts(after_time)
    if names is not None:
        out.texts(["" if n is None else f"\n{inner}<name>{n}</name>" for n in names])
    out.texts(after_name)
    for name in _NUMBERS[1:]:
        out.number(name, inner, getattr(table, name), decimals[name])
    out.texts(after_pdop)
    out.pieces += extensions.pieces
    out.lists += extensions.lists
    out.literal(f"\n{indent}</{tag}>\n")
    return out.render()
