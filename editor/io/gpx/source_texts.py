"""The file's own text of unchanged values, and compact text for changed ones.

A point whose latitude, longitude, elevation or time no edit changed is
written back with the text the file had (``lat="46.5197670"``,
``<time>2007-11-25T17:58:00+01:00</time>``); a changed value is written
compactly, to about a centimetre: latitude and longitude with at most
:data:`COORDINATE_DECIMALS` decimals of a degree (1e-7 degree is 1.1 cm or
less), elevation with at most :data:`ELEVATION_DECIMALS` (1 cm), in both cases
without trailing zeros; a changed time as UTC with a ``Z`` (as many fraction
digits as needed). Without this, smoothed coordinates were written with 15-17
significant digits and a cleaned file grew by a third.

How "unchanged" is known without a per-point column: the reader keeps, for
each of the four fields, the texts that the compact form would *not*
reproduce (trailing zeros, more decimals, a time zone offset...), keyed by the
value they denote (:class:`SourceTexts`). The writer looks each value up: a
value found there is written with its original text, which denotes exactly
that value, so an edit that moves a point can never be written with a stale
text; a value not found (changed, or already in the compact form) is written
compactly. Texts already in compact form are not stored at all, so the usual
file costs nothing. Two points with the same value but differently spelled
texts get the first spelling. Texts that the GPX 1.1 schema would refuse
(exponents, a leap second 23:59:60, a lowercase ``z``) are not kept: such
values are written in the compact form.
"""
from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

COORDINATE_DECIMALS = 7
ELEVATION_DECIMALS = 2
#: Fields whose file text is kept; their decimals when written compactly (``None``: a time).
FIELDS: dict[str, int | None] = {"lat": COORDINATE_DECIMALS, "lon": COORDINATE_DECIMALS,
                                 "ele": ELEVATION_DECIMALS, "time": None}

# The compact form: what the writer writes for a value (no sign but "-", no leading or trailing
# zeros, at most d decimals; times in UTC with "Z" and no trailing zeros in the fraction).
_COMPACT: dict[int | None, str] = {
    d: rf"(?:0|-?(?:0\.\d{{0,{d - 1}}}[1-9]|[1-9]\d*(?:\.\d{{0,{d - 1}}}[1-9])?))"
    for d in (COORDINATE_DECIMALS, ELEVATION_DECIMALS)}
_COMPACT[None] = r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(?:\.\d{0,8}[1-9])?Z"
#: A line of a joined column that is not in compact form.
_NOT_COMPACT = {d: re.compile(rf"^(?!{pattern}$).*$", re.MULTILINE) for d, pattern in _COMPACT.items()}
_DECIMAL = re.compile(r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)")  # xsd:decimal
_SCHEMA_TIME = re.compile(r"-?\d{4,}-\d\d-\d\dT\d\d:\d\d:[0-5]\d(?:\.\d+)?(?:Z|[+-]\d\d:\d\d)?")  # xsd:dateTime
_EXACT_LIMIT = 2.0 ** 53


@dataclass
class SourceTexts:
    """Per field: sorted values (float64, or int64 nanoseconds for times) and the file's text of each."""

    keys: dict = field(default_factory=dict)
    texts: dict = field(default_factory=dict)

    def __bool__(self) -> bool:
        return any(len(k) for k in self.keys.values())

    def lookup(self, name: str, values: np.ndarray) -> tuple[np.ndarray, list]:
        """Rows of ``values`` that have a kept text, and those texts."""
        keys = self.keys.get(name)
        if keys is None or not len(keys) or not len(values):
            return np.zeros(0, dtype=np.int64), []
        probe = values.view(np.int64) if name == "time" else values
        index = np.minimum(np.searchsorted(keys, probe), len(keys) - 1)
        rows = np.flatnonzero(keys[index] == probe)
        texts = self.texts[name]
        return rows, [texts[i] for i in index[rows].tolist()]

    @staticmethod
    def merge(parts: Sequence[SourceTexts]) -> SourceTexts:
        """One lookup from the pieces of several point runs (the first text of a value wins)."""
        merged = SourceTexts()
        for name in FIELDS:
            pieces = [p for p in parts if name in p.keys and len(p.keys[name])]
            if not pieces:
                continue
            texts = np.concatenate([p.texts[name] for p in pieces])
            keys = np.concatenate([p.keys[name] for p in pieces])
            order = np.argsort(keys, kind="stable")
            keys, texts = keys[order], texts[order]
            first = np.ones(len(keys), dtype=bool)
            first[1:] = keys[1:] != keys[:-1]
            merged.keys[name], merged.texts[name] = keys[first], texts[first]
        return merged


def collect(texts: dict, values: dict) -> SourceTexts:
    """The texts of one run of points that the compact form would not reproduce.

    ``texts[name]`` is the column of texts as read (``None`` where absent),
    ``values[name]`` the converted column. One regular-expression pass over
    the joined column finds the texts not in compact form (the compact form is
    exactly what the writer writes for a value), so the usual file, whose texts
    all are, costs one pass per column.
    """
    found = SourceTexts()
    for name, decimals in FIELDS.items():
        column = texts[name]
        present = [t for t in column if t]
        if not present:
            continue
        rows = range(len(column)) if len(present) == len(column) else [r for r, t in enumerate(column) if t]
        joined = "\n".join(present)
        if joined.count("\n") != len(present) - 1:  # a text spread over lines: one line per text
            joined = "\n".join(t.replace("\n", " ") for t in present)
        schema = _SCHEMA_TIME if decimals is None else _DECIMAL
        kept: dict = {}  # value -> text; the first spelling of a value wins
        keys = values[name].view(np.int64) if decimals is None else values[name]
        row, searched = 0, 0
        for match in _NOT_COMPACT[decimals].finditer(joined):
            row += joined.count("\n", searched, match.start())
            searched = match.start()
            text = match.group().strip()
            key = keys[rows[row]].item()
            if key not in kept and schema.fullmatch(text) and not _leap(text, decimals):
                kept[key] = text
        if kept:
            found.keys[name] = np.array(list(kept), dtype=np.int64 if decimals is None else np.float64)
            found.texts[name] = np.array(list(kept.values()), dtype=object)
    return SourceTexts.merge([found])  # sorted, one text per value


def _leap(text: str, decimals: int | None) -> bool:
    return decimals is None and text[17:19] == "60"


def compact_texts(values: np.ndarray, decimals: int) -> list[str]:
    """``values`` rounded to ``decimals`` places, written without trailing zeros ("46.5", "-0.0000001")."""
    count = len(values)
    if not count:
        return []
    scale = 10 ** decimals
    scaled = np.rint(values * float(scale))
    huge = ~(np.abs(scaled) < _EXACT_LIMIT)  # beyond exact integers: the shortest exact text instead
    integers = np.where(huge, 0, scaled).astype(np.int64)
    whole, fraction = np.divmod(np.abs(integers), scale)
    negative = integers < 0
    # one C-level formatting pass over interleaved (signed whole part, fraction) pairs, then
    # trailing zeros cut where there are any (cheaper than any numpy string way)
    pairs = np.empty(2 * count, dtype=np.int64)
    pairs[0::2] = np.where(negative, -whole, whole)
    pairs[1::2] = fraction
    out = (f"%d.%0{decimals}d\n" * count % tuple(pairs.tolist())).split("\n")[:-1]
    for row in np.flatnonzero(negative & (whole == 0)).tolist():  # "-0.5": the sign the pair lost
        out[row] = "-" + out[row]
    for row in np.flatnonzero(fraction % 10 == 0).tolist():  # only these have zeros to cut
        out[row] = out[row].rstrip("0").rstrip(".")
    for row in np.flatnonzero(huge).tolist():
        out[row] = np.format_float_positional(values[row], unique=True, trim="-")
    return out


def number_texts(values: np.ndarray, name: str, source: SourceTexts | None) -> list[str]:
    """Text of each value of field ``name``: the file's own where kept, else compact."""
    decimals = FIELDS[name]
    assert decimals is not None, "times are written by PointFormat.time"
    out = compact_texts(values, decimals)
    if name == "lon":  # a longitude just below 180 may round up to it: GPX 1.1 allows [-180, 180)
        for row in np.flatnonzero(values > 179.9999999).tolist():
            if out[row] == "180":
                out[row] = "-180"
    if source:
        rows, texts = source.lookup(name, values)
        for row, text in zip(rows.tolist(), texts):
            out[row] = text
    return out
