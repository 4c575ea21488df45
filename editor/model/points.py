"""Columnar point storage shared by track segments, routes and waypoints.

A :class:`PointTable` holds one numpy array per interpreted GPX point field plus
an object column ``extra`` with an opaque payload (owned by :mod:`editor.io`)
for every child element the model does not interpret. The model never looks
inside ``extra``; it only moves it along with its point, so a point that was
not edited is written back exactly as it was read.

Missing values are NaN for floats and NaT for times.
"""
from __future__ import annotations

from dataclasses import dataclass, fields
from typing import Iterable, Mapping

import numpy as np

#: Float columns; NaN marks "absent in the file".
FLOAT_COLUMNS = ("lat", "lon", "ele", "hdop", "vdop", "pdop", "sat")
#: Every column, in the order used by :meth:`PointTable.columns`.
ALL_COLUMNS = FLOAT_COLUMNS + ("time", "name", "extra")

NAT = np.datetime64("NaT", "ns")


def _float_array(values, n: int) -> np.ndarray:
    if values is None:
        return np.full(n, np.nan)
    out = np.asarray(values, dtype=np.float64)
    return out.copy() if out.base is not None or not out.flags.writeable else out


def _object_array(values, n: int) -> np.ndarray:
    out = np.empty(n, dtype=object)
    if values is not None:
        out[:] = list(values) if not isinstance(values, np.ndarray) else values
    return out


@dataclass(eq=False)
class PointTable:
    """Points as parallel arrays.

    Attributes
    ----------
    lat, lon : float64, degrees (WGS84). Always present.
    ele : float64, metres above the geoid as recorded; NaN where absent.
    time : datetime64[ns], UTC; NaT where absent.
    hdop, vdop, pdop : float64, dilution of precision; NaN where absent.
    sat : float64, number of satellites; NaN where absent (float so it can hold NaN).
    name : object, ``str`` or ``None``; the point's ``<name>`` (waypoint labels).
    extra : object, opaque per-point payload from the reader, or ``None``.
    """

    lat: np.ndarray
    lon: np.ndarray
    ele: np.ndarray
    time: np.ndarray
    hdop: np.ndarray
    vdop: np.ndarray
    pdop: np.ndarray
    sat: np.ndarray
    name: np.ndarray
    extra: np.ndarray

    @classmethod
    def from_columns(cls, lat, lon, ele=None, time=None, hdop=None, vdop=None,
                     pdop=None, sat=None, name=None, extra=None) -> "PointTable":
        """Build a table; omitted columns are filled with "absent"."""
        lat = np.array(lat, dtype=np.float64)
        n = len(lat)
        if time is None:
            t = np.full(n, NAT)
        else:
            t = np.asarray(time)
            t = t.astype("datetime64[ns]") if t.dtype.kind == "M" else np.array(t, dtype="datetime64[ns]")
        table = cls(lat=lat, lon=np.array(lon, dtype=np.float64), ele=_float_array(ele, n),
                    time=np.array(t, copy=True), hdop=_float_array(hdop, n), vdop=_float_array(vdop, n),
                    pdop=_float_array(pdop, n), sat=_float_array(sat, n),
                    name=_object_array(name, n), extra=_object_array(extra, n))
        table._check()
        return table

    @classmethod
    def empty(cls, n: int = 0) -> "PointTable":
        return cls.from_columns(np.zeros(n), np.zeros(n))

    def _check(self) -> None:
        n = len(self.lat)
        for f in fields(self):
            col = getattr(self, f.name)
            if col.ndim != 1 or len(col) != n:
                raise ValueError(f"column {f.name!r} has length {len(col)}, expected {n}")

    def __len__(self) -> int:
        return len(self.lat)

    def columns(self) -> dict[str, np.ndarray]:
        return {name: getattr(self, name) for name in ALL_COLUMNS}

    def copy(self) -> "PointTable":
        return PointTable(**{k: v.copy() for k, v in self.columns().items()})

    def shared(self) -> "PointTable":
        """A new table object over the same column arrays (cheap; safe because edits copy on write)."""
        return PointTable(**self.columns())

    def take(self, index) -> "PointTable":
        """Rows at ``index`` (slice, integer array or boolean mask), as a new table."""
        return PointTable(**{k: np.array(v[index], copy=True) for k, v in self.columns().items()})

    @staticmethod
    def concat(tables: Iterable["PointTable"]) -> "PointTable":
        tables = list(tables)
        if not tables:
            return PointTable.empty()
        return PointTable(**{k: np.concatenate([getattr(t, k) for t in tables]) for k in ALL_COLUMNS})

    def time_s(self) -> np.ndarray:
        """Times as float seconds since the Unix epoch (UTC); NaN where absent."""
        out = self.time.astype("int64").astype(np.float64) / 1e9
        out[np.isnat(self.time)] = np.nan
        return out

    def has_time(self) -> bool:
        return bool(len(self)) and not np.isnat(self.time).all()

    def equals(self, other: "PointTable") -> bool:
        """Exact equality, NaN == NaN and NaT == NaT; payloads compared with ``==``."""
        if len(self) != len(other):
            return False
        for k in FLOAT_COLUMNS:
            a, b = getattr(self, k), getattr(other, k)
            if not np.array_equal(a, b, equal_nan=True):
                return False
        if not np.array_equal(self.time.view("int64"), other.time.view("int64")):
            return False
        return all(_objects_equal(getattr(self, k), getattr(other, k)) for k in ("name", "extra"))


def _objects_equal(a: np.ndarray, b: np.ndarray) -> bool:
    return all(x == y for x, y in zip(a.tolist(), b.tolist()))


def covers_every_row(index, n: int) -> bool:
    """True when ``index`` is exactly ``0, 1, ..., n-1`` (writing there replaces whole columns)."""
    if isinstance(index, slice):
        return index.indices(n) == (0, n, 1)
    rows = np.asarray(index)
    if rows.dtype.kind not in "iu" or rows.shape != (n,):
        return False
    return n == 0 or (int(rows[0]) == 0 and int(rows[-1]) == n - 1 and bool(np.all(np.diff(rows) == 1)))


def replace_values(table: PointTable, index, values: Mapping[str, np.ndarray]
                   ) -> tuple[PointTable, dict[str, np.ndarray]]:
    """A new table with ``values`` written into rows ``index``, and the previous values.

    Copy-on-write: ``table`` and its arrays are left untouched, and the new table shares every
    column ``values`` does not name. When ``index`` covers every row, the given arrays become the
    new columns and the previous columns are returned as they are, so neither side is copied;
    this is why column arrays held by a document must never be written in place.
    """
    columns = table.columns()
    whole = covers_every_row(index, len(table))
    old = {}
    for key, new in values.items():
        if key not in ALL_COLUMNS:
            raise KeyError(f"unknown point column {key!r}")
        column = columns[key]
        new = np.asarray(new) if column.dtype != object else new
        if whole and isinstance(new, np.ndarray) and new.shape == column.shape and new.dtype == column.dtype:
            old[key], columns[key] = column, new
            continue
        old[key] = np.array(column[index], copy=True)
        column = column.copy()
        column[index] = new
        columns[key] = column
    return PointTable(**columns), old


def set_columns(table: PointTable, index, values: Mapping[str, np.ndarray]) -> dict[str, np.ndarray]:
    """Write ``values`` into rows ``index`` in place; return the previous values.

    Only for tables nothing else shares (a tool's own working copy); document edits use
    :func:`replace_values`."""
    old = {}
    for key, new in values.items():
        if key not in ALL_COLUMNS:
            raise KeyError(f"unknown point column {key!r}")
        column = getattr(table, key)
        old[key] = np.array(column[index], copy=True)
        column[index] = new
    return old

