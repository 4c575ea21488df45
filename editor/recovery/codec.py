"""Edits as plain data: JSON for their structure, raw numeric blobs for their arrays.

A journal row must never be able to name code, so nothing here is generic
deserialisation: an edit is written as ``{"edit": KIND, "fields": {...}}`` where
KIND is looked up in a closed table of the model's edit classes, and every field
value is one of a few plain shapes:

* JSON scalars and lists; ``{"map": {...}}`` for a mapping of column names;
* ``{"array": k, "dtype": D, "len": n}``: blob ``k`` holds ``n`` items of the
  numeric dtype ``D`` (an allow-list: float64, int64, int32, bool, datetime64[ns]),
  read with ``numpy.frombuffer``; the blob's size must match exactly;
* ``{"objects": ...}``: an object column (names, opaque payloads) as a table of
  distinct values (``kinds`` blob + one UTF-8 blob of NUL-separated strings, or a
  JSON list when a string holds a NUL) and a ``codes`` blob indexing it;
* ``{"payload": ...}``: one opaque payload (``None``, a string, or the fields of
  :class:`~editor.model.payload.PointExtra` / ``ElementExtra``);
* ``{"table": {...}}``: a :class:`~editor.model.points.PointTable`, column by
  column. A table that replaces a track's points may say ``{"same": true}`` for a
  column equal to the one the track had just before, so applying a tool that
  changes three columns of a million points writes only those three.

Every size is checked against :data:`MAX_ITEMS` before anything is allocated.
"""
from __future__ import annotations

import dataclasses
import json
from typing import Any, Callable, Sequence

import numpy as np

from ..model.payload import ElementExtra, PointExtra
from ..model import edits as model_edits
from ..model.document import Document
from ..model.points import ALL_COLUMNS, PointTable
from .table_diff import object_addresses, rows_from, same_column, taken

#: Largest array (items) a journal may declare: far above any real track, far below memory trouble.
MAX_ITEMS = 50_000_000
#: Deepest nesting of edit sequences accepted.
MAX_DEPTH = 8

#: The edit classes a journal may name (closed table: a name outside it is damage, not a lookup).
EDIT_KINDS: dict[str, type] = {name: getattr(model_edits, name) for name in model_edits.__all__
                               if dataclasses.is_dataclass(getattr(model_edits, name, None))}
_DTYPES = {"<f8": np.dtype("<f8"), "<i8": np.dtype("<i8"), "<i4": np.dtype("<i4"), "|b1": np.dtype("|b1"),
           "<M8[ns]": np.dtype("<M8[ns]")}
_OBJECT_COLUMNS = ("name", "extra")
# kinds of a distinct object value: how many strings follow it in the string list
_NONE, _STR, _POINT, _POINT_EXT, _ELEMENT, _ELEMENT_EXT = range(6)


class JournalDataError(ValueError):
    """A journal row does not describe a valid edit (damaged or not written by this program)."""


# --- writing --------------------------------------------------------------------------------------
class _Writer:
    def __init__(self) -> None:
        self.blobs: list = []

    def blob(self, data) -> int:
        self.blobs.append(data)
        return len(self.blobs) - 1

    def array(self, values: np.ndarray) -> dict:
        values = np.ascontiguousarray(values)
        if values.dtype == object:
            return self.objects(values)
        dtype = values.dtype.newbyteorder("<") if values.dtype.byteorder == ">" else values.dtype
        values = values.astype(dtype, copy=False).reshape(-1)
        if values.dtype.kind == "M":
            values = values.astype("<M8[ns]")
        if values.dtype.str not in _DTYPES:
            values = values.astype("<i8" if values.dtype.kind in "iu" else "<f8")
        raw = values.view("<i8") if values.dtype.kind == "M" else values  # buffers cannot carry datetimes
        return {"array": self.blob(memoryview(raw).cast("B")), "dtype": values.dtype.str, "len": len(values)}

    def objects(self, column: np.ndarray) -> dict:
        # Distinct objects by identity (cheap: addresses), then their values once each.
        addresses = object_addresses(column)
        unique, first, codes = np.unique(addresses, return_index=True, return_inverse=True)
        kinds = np.empty(len(unique), dtype=np.uint8)
        strings: list[str] = []
        for i, value in enumerate(column[first].tolist()):
            kinds[i] = _flatten(value, strings)
        joined = "\x00".join(strings)
        if joined.count("\x00") == max(len(strings) - 1, 0):
            text = {"strings": self.blob(joined.encode("utf-8")), "count": len(strings)}
        else:  # a string with a NUL in it (not from XML, but possible): spell the list out
            text = {"string_list": strings}
        return {"objects": {"kinds": self.blob(kinds.tobytes()), "distinct": len(kinds), **text,
                            "codes": self.array(codes.astype("<i8").reshape(-1))}}

    def value(self, value: Any, depth: int = 0) -> Any:
        if depth > MAX_DEPTH:
            raise ValueError("edits nested too deeply to journal")
        if value is None or isinstance(value, (bool, str)):
            return value
        if isinstance(value, (int, np.integer)):
            return int(value)
        if isinstance(value, (float, np.floating)):
            return {"float": float(value).hex()}
        if isinstance(value, np.ndarray):
            return self.array(value)
        if isinstance(value, PointTable):
            return self.table(value, None)
        if isinstance(value, (PointExtra, ElementExtra)):
            return {"payload": _payload_fields(value)}
        if type(value) in EDIT_KINDS.values():
            return self.edit(value, None, depth + 1)
        if isinstance(value, dict):
            return {"map": {str(k): self.value(v, depth + 1) for k, v in value.items()}}
        if isinstance(value, (list, tuple)):
            return {"list" if isinstance(value, list) else "tuple": [self.value(v, depth + 1) for v in value]}
        raise TypeError(f"cannot journal a value of type {type(value).__name__}")

    def table(self, table: PointTable, before: PointTable | None) -> dict:
        columns: dict[str, Any] = {}
        rows = None if before is None or len(table) == len(before) else rows_from(table, before)
        if rows is not None:
            source, runs = rows
            columns["rows_from_before"] = self.array(runs.reshape(-1))
        for key in ALL_COLUMNS:
            column = getattr(table, key)
            if before is not None and same_column(column, getattr(before, key)):
                columns[key] = {"same": True}
                continue
            if rows is not None:
                patch = np.flatnonzero(~taken(column, getattr(before, key), source))
                if len(patch) <= len(column) // 2:
                    columns[key] = {"mapped": True, "patch_rows": self.array(patch.astype("<i8")),
                                    "patch": self.array(column[patch])}
                    continue
            columns[key] = self.array(column)
        return {"table": columns}

    def edit(self, edit, before: PointTable | None, depth: int = 0) -> dict:
        fields = {}
        for f in dataclasses.fields(edit):
            value = getattr(edit, f.name)
            if isinstance(value, PointTable) and before is not None:
                fields[f.name] = self.table(value, before)
            else:
                fields[f.name] = self.value(value, depth)
        return {"edit": type(edit).__name__, "fields": fields}


def _payload_fields(value) -> list:
    if isinstance(value, PointExtra):
        return ["point", value.after_time, value.after_name, value.after_pdop, value.extensions]
    return ["element", value.after_name, value.extensions]


def _flatten(value, strings: list[str]) -> int:
    if value is None:
        return _NONE
    if type(value) is str:
        strings.append(value)
        return _STR
    if type(value) is PointExtra:
        strings += [value.after_time, value.after_name, value.after_pdop]
        if value.extensions is None:
            return _POINT
        strings.append(value.extensions)
        return _POINT_EXT
    if type(value) is ElementExtra:
        strings.append(value.after_name)
        if value.extensions is None:
            return _ELEMENT
        strings.append(value.extensions)
        return _ELEMENT_EXT
    raise TypeError(f"cannot journal a point value of type {type(value).__name__}")


def encode_edit(edit, before: PointTable | None = None) -> tuple[str, list]:
    """``(JSON text, blobs)`` for ``edit``.

    ``before``: the point table the edited track had just before ``edit`` was applied,
    when ``edit`` replaces it; columns equal to it are then written as "same".
    """
    if type(edit) not in EDIT_KINDS.values():
        raise TypeError(f"{type(edit).__name__} is not an edit this journal knows")
    writer = _Writer()
    spec = writer.edit(edit, before)
    return json.dumps(spec, separators=(",", ":"), allow_nan=False), writer.blobs


# --- reading --------------------------------------------------------------------------------------
class _Reader:
    def __init__(self, blob: Callable[[int], bytes], doc: Document | None) -> None:
        self.blob = blob
        self.doc = doc
        self.before: PointTable | None = None

    def array(self, spec: dict) -> np.ndarray:
        if "objects" in spec:
            return self.objects(spec["objects"])
        dtype = _DTYPES.get(spec.get("dtype"))
        n = spec.get("len")
        if dtype is None or type(n) is not int or not 0 <= n <= MAX_ITEMS:
            raise JournalDataError(f"array of {spec.get('dtype')!r} × {n!r} is not acceptable")
        data = self.blob(_int(spec.get("array")))
        if len(data) != n * dtype.itemsize:
            raise JournalDataError(f"array blob holds {len(data)} bytes, expected {n * dtype.itemsize}")
        return np.frombuffer(data, dtype=dtype).copy()

    def objects(self, spec: dict) -> np.ndarray:
        distinct = _int(spec.get("distinct"))
        kinds = np.frombuffer(self.blob(_int(spec.get("kinds"))), dtype=np.uint8)
        if len(kinds) != distinct or distinct > MAX_ITEMS or np.any(kinds > _ELEMENT_EXT):
            raise JournalDataError("object column table is inconsistent")
        if "string_list" in spec:
            strings = spec["string_list"]
            if not isinstance(strings, list) or not all(isinstance(s, str) for s in strings):
                raise JournalDataError("object column strings are not strings")
        else:
            count = _int(spec.get("count"))
            strings = self.blob(_int(spec.get("strings"))).decode("utf-8").split("\x00") if count else []
            if len(strings) != count:
                raise JournalDataError("object column string count does not match")
        need = np.array([0, 1, 3, 4, 1, 2])[kinds].sum() if distinct else 0
        if need != len(strings):
            raise JournalDataError("object column strings do not match their kinds")
        values = np.empty(distinct, dtype=object)
        pos = 0
        for i, kind in enumerate(kinds.tolist()):
            if kind == _NONE:
                value = None
            elif kind == _STR:
                value, pos = strings[pos], pos + 1
            elif kind in (_POINT, _POINT_EXT):
                ext = strings[pos + 3] if kind == _POINT_EXT else None
                value = PointExtra(strings[pos], strings[pos + 1], strings[pos + 2], ext)
                pos += 4 if kind == _POINT_EXT else 3
            else:
                ext = strings[pos + 1] if kind == _ELEMENT_EXT else None
                value, pos = ElementExtra(strings[pos], ext), pos + (2 if kind == _ELEMENT_EXT else 1)
            values[i] = value
        codes = self.array(spec.get("codes") or {})
        if codes.dtype != np.int64 or (len(codes) and (codes.min() < 0 or codes.max() >= distinct)):
            raise JournalDataError("object column codes point outside its table")
        return values[codes] if len(codes) else np.empty(0, dtype=object)

    def table(self, spec: dict) -> PointTable:
        if set(spec) - {"rows_from_before"} != set(ALL_COLUMNS):
            raise JournalDataError("a point table must list exactly the model's columns")
        source = self.rows_from_before(spec["rows_from_before"]) if "rows_from_before" in spec else None
        columns = {}
        for key in ALL_COLUMNS:
            column = spec[key]
            if not isinstance(column, dict):
                raise JournalDataError(f"column {key!r} is not described")
            if (column.get("same") is True or column.get("mapped") is True) and self.before is None:
                raise JournalDataError(f"column {key!r} refers to a previous table that is not there")
            if column.get("same") is True:
                columns[key] = getattr(self.before, key).copy()
            elif column.get("mapped") is True:
                columns[key] = self.mapped(getattr(self.before, key), source, column)
            else:
                columns[key] = self.array(column)
            wanted = object if key in _OBJECT_COLUMNS else ("M" if key == "time" else "f")
            got = columns[key].dtype
            if (got.kind != "O") if wanted is object else (got.kind != wanted):
                raise JournalDataError(f"column {key!r} has the wrong type")
        try:
            table = PointTable(**columns)
            table._check()
        except ValueError as err:
            raise JournalDataError(str(err)) from None
        return table

    def rows_from_before(self, spec: dict) -> np.ndarray:
        runs = self.array(spec)
        if self.before is None or runs.dtype != np.int64 or len(runs) % 3:
            raise JournalDataError("row runs are malformed or refer to no previous table")
        new_start, old_start, length = runs.reshape(-1, 3).T
        total = int(new_start[-1] + length[-1]) if len(runs) else 0
        if (np.any(length <= 0) or np.any(new_start < 0) or np.any(old_start < 0)
                or np.any(old_start + length > len(self.before)) or np.any(np.diff(new_start) < length[:-1])
                or total > MAX_ITEMS):
            raise JournalDataError("row runs point outside the previous table")
        offsets = np.arange(int(length.sum())) - np.repeat(np.cumsum(length) - length, length)
        source = np.full(total, -1, dtype=np.int64)
        source[np.repeat(new_start, length) + offsets] = np.repeat(old_start, length) + offsets
        return source

    def mapped(self, old: np.ndarray, source: np.ndarray | None, spec: dict) -> np.ndarray:
        if source is None:
            raise JournalDataError("a mapped column needs row runs")
        rows, patch = self.array(spec.get("patch_rows") or {}), self.array(spec.get("patch") or {})
        if rows.dtype != np.int64 or len(rows) != len(patch):
            raise JournalDataError("a column patch is malformed")
        n = max(len(source), int(rows.max()) + 1 if len(rows) else 0)
        if n > MAX_ITEMS or (len(rows) and rows.min() < 0):
            raise JournalDataError("a column patch points outside its table")
        full = np.full(n, -1, dtype=np.int64)
        full[:len(source)] = source
        covered = full >= 0
        covered[rows] = True
        if not covered.all():
            raise JournalDataError("a mapped column leaves rows without a value")
        column = old[np.maximum(full, 0)]
        column[rows] = patch
        return column

    def value(self, spec: Any, depth: int) -> Any:
        if depth > MAX_DEPTH:
            raise JournalDataError("edits nested too deeply")
        if spec is None or isinstance(spec, (bool, str, int)):
            return spec
        if not isinstance(spec, dict) or len(spec) == 0:
            raise JournalDataError(f"unexpected value {str(spec)[:40]!r}")
        if "float" in spec:
            return float.fromhex(str(spec["float"]))
        if "array" in spec or "objects" in spec:
            return self.array(spec)
        if "table" in spec:
            return self.table(spec["table"])
        if "payload" in spec:
            return _payload(spec["payload"])
        if "edit" in spec:
            return self.edit(spec, depth + 1)
        if "map" in spec and isinstance(spec["map"], dict):
            return {str(k): self.value(v, depth + 1) for k, v in spec["map"].items()}
        for kind, make in (("list", list), ("tuple", tuple)):
            if kind in spec and isinstance(spec[kind], list):
                return make(self.value(v, depth + 1) for v in spec[kind])
        raise JournalDataError(f"unexpected value {str(spec)[:40]!r}")

    def edit(self, spec: dict, depth: int = 0):
        cls = EDIT_KINDS.get(spec.get("edit")) if isinstance(spec.get("edit"), str) else None
        fields = spec.get("fields")
        if cls is None or not isinstance(fields, dict):
            raise JournalDataError(f"unknown edit {str(spec.get('edit'))[:40]!r}")
        names = [f.name for f in dataclasses.fields(cls)]
        if set(fields) != set(names):
            raise JournalDataError(f"{cls.__name__} fields do not match")
        # "same" columns refer to the track the top-level edit replaces, never to a nested edit's
        self.before = None
        track = fields.get("track")
        if depth == 0 and self.doc is not None and type(track) is int and 0 <= track < len(self.doc.tracks):
            self.before = self.doc.tracks[track].points
        values = {}
        for name in names:
            spec_value = fields[name]
            if isinstance(spec_value, dict) and "table" in spec_value:
                values[name] = self.table(spec_value["table"])
            else:
                values[name] = self.value(spec_value, depth)
        return cls(**values)


def _int(value) -> int:
    if type(value) is not int:
        raise JournalDataError(f"expected a whole number, found {str(value)[:40]!r}")
    return value


def _payload(fields) -> PointExtra | ElementExtra:
    ok = isinstance(fields, list) and all(v is None or isinstance(v, str) for v in fields[1:])
    if ok and fields[0] == "point" and len(fields) == 5 and None not in fields[1:4]:
        return PointExtra(*fields[1:])
    if ok and fields[0] == "element" and len(fields) == 3 and fields[1] is not None:
        return ElementExtra(*fields[1:])
    raise JournalDataError("unknown payload")


def decode_edit(text: str, blob: Callable[[int], bytes], doc: Document | None = None):
    """The edit a row describes, to be applied to ``doc`` as it is now. ``blob(k)`` returns the row's blob ``k``.

    Raises :class:`JournalDataError` for anything that is not an edit of this program.
    """
    try:
        spec = json.loads(text)
    except (ValueError, RecursionError) as err:
        raise JournalDataError(f"edit text is not JSON ({err})") from None
    if not isinstance(spec, dict):
        raise JournalDataError("an edit must be a JSON object")
    try:
        return _Reader(blob, doc).edit(spec)
    except JournalDataError:
        raise
    except (ValueError, TypeError, KeyError, IndexError, UnicodeDecodeError, RecursionError) as err:
        raise JournalDataError(f"edit does not fit the model ({type(err).__name__}: {err})") from None


def reference_table(edit, inverse) -> PointTable | None:
    """The table ``edit`` replaces, taken from its ``inverse`` (for "same" columns), or ``None``."""
    if (isinstance(edit, model_edits.ReplaceTrackPoints) and isinstance(inverse, model_edits.ReplaceTrackPoints)
            and edit.track == inverse.track):
        return inverse.points
    return None


__all__: Sequence[str] = ["encode_edit", "decode_edit", "reference_table", "object_addresses",
                          "JournalDataError", "EDIT_KINDS", "MAX_ITEMS"]
