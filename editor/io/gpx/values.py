"""GPX text values to model columns, with the checks that make a value an error.

The readers collect the text of each interpreted field as one list per column
(``None`` or ``""`` where the point has no such element) and convert each list
in bulk with numpy. A bad value raises :class:`ValueProblem` with the row it is
in; the reader turns that into a :class:`~editor.io.errors.TrackFileError`
naming the line.

Errors: a missing, non-numeric, NaN/infinite or out-of-range ``lat``/``lon``; a
non-numeric, NaN or infinite ``ele``, ``hdop``, ``vdop``, ``pdop``; a ``sat`` that is not
a whole number >= 0; a ``time`` that is not an ISO 8601 date-time (xsd:dateTime)
or lies outside the years 1678-2261 (what datetime64[ns] can hold).
Read as absent, silently: an interpreted element that is empty or blank.
Warnings: times without a zone (read as UTC), a leap second 23:59:60 (read as the
last instant of its minute), times out of order or repeated.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Callable, Sequence

import numpy as np

from ...model import PointTable
from .source_texts import collect

_LABEL = {"lat": "latitude", "lon": "longitude", "ele": "elevation", "time": "time",
          "sat": "satellite count", "hdop": "hdop", "vdop": "vdop", "pdop": "pdop"}

# Times of the usual form "2024-05-01T10:00:00Z" or "...:00.250Z" in years numpy's
# nanosecond datetimes hold without overflow; anything else takes the careful path.
_UTC_TIME = r"(?:1[7-9]\d\d|2[01]\d\d|22[0-5]\d)-\d\d-\d\dT\d\d:\d\d:\d\d(?:\.\d{1,9})?Z"
_UTC_TIMES = re.compile(rf"(?:{_UTC_TIME}\n)*{_UTC_TIME}")
_ANY_TIME = re.compile(r"(-?\d{4,})-(\d\d)-(\d\d)T(\d\d):(\d\d):(\d\d)(?:\.(\d+))?"
                       r"(?:([zZ])|([+-])(\d\d):(\d\d))?")
_YEAR_RANGE = (1678, 2261)


class ValueProblem(Exception):
    """A bad value in row ``index`` of field ``field`` (before line numbers are known)."""

    def __init__(self, index: int, field: str, problem: str):
        super().__init__(problem)
        self.index, self.field, self.problem = index, field, problem


@dataclass
class PointTexts:
    """Text of the interpreted fields of a run of points, one list per column."""

    lat: Sequence[str | None]
    lon: Sequence[str | None]
    ele: Sequence[str | None]
    time: Sequence[str | None]
    name: Sequence[str | None]
    sat: Sequence[str | None]
    hdop: Sequence[str | None]
    vdop: Sequence[str | None]
    pdop: Sequence[str | None]
    extra: Sequence

    def __len__(self) -> int:
        return len(self.lat)


def _shown(text: str) -> str:
    return repr(text if len(text) <= 40 else text[:37] + "...")


def float_column(texts: Sequence[str | None], field: str, required: bool = False) -> np.ndarray:
    """Numbers of one column; NaN where absent (an error if ``required``); finite where present."""
    if not required and not any(texts):
        return np.full(len(texts), np.nan)
    try:
        values = np.array(texts if all(texts) else [t or "nan" for t in texts], dtype=np.float64)
    except ValueError:
        values = None
    if values is None:
        for index, text in enumerate(texts):
            try:
                float(text or "nan")
            except ValueError:
                if not text.strip():  # blank element: absent
                    continue
                raise ValueProblem(index, field, f"{_LABEL[field]} {_shown(text)} is not a number") from None
        values = np.array([t if t and t.strip() else "nan" for t in texts], dtype=np.float64)
    for index in np.flatnonzero(~np.isfinite(values)).tolist():
        text = texts[index]
        if text and text.strip():
            raise ValueProblem(index, field, f"{_LABEL[field]} {_shown(text)} is not a finite number")
        if required:
            raise ValueProblem(index, field, f"the point has no {field} attribute ({_LABEL[field]})")
    return values


def coordinate_column(texts: Sequence[str | None], field: str) -> np.ndarray:
    """Latitudes or longitudes: present, finite, within [-90, 90] / [-180, 180] degrees."""
    values = float_column(texts, field, required=True)
    limit = 90.0 if field == "lat" else 180.0
    outside = np.flatnonzero(np.abs(values) > limit)
    if len(outside):
        index = int(outside[0])
        raise ValueProblem(index, field, f"{_LABEL[field]} {_shown(texts[index])} is outside "
                                         f"[-{limit:g}, {limit:g}] degrees")
    return values


def sat_column(texts: Sequence[str | None]) -> np.ndarray:
    values = float_column(texts, "sat")
    bad = np.flatnonzero((values < 0) | ((values != np.round(values)) & ~np.isnan(values)))
    if len(bad):
        index = int(bad[0])
        raise ValueProblem(index, "sat", f"satellite count {_shown(texts[index])} is not a whole number >= 0")
    return values


def time_column(texts: Sequence[str | None], notes: ReadNotes | None = None) -> np.ndarray:
    """UTC times (datetime64[ns], NaT where absent); counts odd times in ``notes``.

    Offsets such as ``+02:00`` are converted to UTC; a time without a zone is
    taken as UTC (GPX 1.1 says times are UTC). Fractions beyond nanoseconds are cut.
    A leap second (``23:59:60``, which numpy's times cannot hold) is read as the
    last nanosecond of that minute, so the point keeps its place in time order.
    """
    notes = ReadNotes() if notes is None else notes
    present = [t for t in texts if t]
    if not present:
        return np.full(len(texts), np.datetime64("NaT", "ns"))
    if _UTC_TIMES.fullmatch("\n".join(present)):
        try:
            return np.array([t[:-1] if t else "NaT" for t in texts], dtype="datetime64[ns]")
        except ValueError:
            pass  # an impossible date such as 2024-02-30: find it below
    local = []
    offsets_min = np.zeros(len(texts), dtype=np.int64)
    without_zone = 0
    for index, text in enumerate(texts):
        stripped = text.strip() if text else ""
        if not stripped:
            local.append("NaT")
            continue
        match = _ANY_TIME.fullmatch(stripped)
        problem = f"time {_shown(text)} is not an ISO 8601 date and time"
        if match is None:
            raise ValueProblem(index, "time", problem)
        year, month, day, hour, minute, second, fraction, zulu, sign, off_h, off_m = match.groups()
        if not _YEAR_RANGE[0] <= int(year) <= _YEAR_RANGE[1]:
            raise ValueProblem(index, "time", f"time {_shown(text)} is outside the supported years "
                                              f"{_YEAR_RANGE[0]}-{_YEAR_RANGE[1]}")
        if sign:
            offsets_min[index] = (1 if sign == "+" else -1) * (int(off_h) * 60 + int(off_m))
        elif not zulu:
            without_zone += 1
        if second == "60":  # a leap second: the last instant of its minute
            second, fraction = "59", "999999999"
            notes.leap_seconds += 1
        stamp = f"{year}-{month}-{day}T{hour}:{minute}:{second}"
        local.append(stamp + ("." + fraction[:9] if fraction else ""))
        try:
            np.datetime64(local[-1], "ns")
        except ValueError:
            raise ValueProblem(index, "time", f"time {_shown(text)} is not a valid date and time") from None
    times = np.array(local, dtype="datetime64[ns]")
    notes.without_zone += without_zone
    return times - offsets_min.astype("timedelta64[m]")


def name_column(texts: Sequence[str | None]) -> np.ndarray:
    names = np.empty(len(texts), dtype=object)
    names[:] = texts
    names[names == ""] = None
    return names


def extra_column(extras: Sequence) -> np.ndarray:
    column = np.empty(len(extras), dtype=object)
    column[:] = extras
    return column


@dataclass
class ReadNotes:
    """What reading point values noticed besides the values: counts for warnings, the file's texts."""

    without_zone: int = 0
    leap_seconds: int = 0
    #: :class:`~editor.io.gpx.source_texts.SourceTexts` of each run of points read
    sources: list = field(default_factory=list)

    def add(self, other: ReadNotes) -> None:
        self.without_zone += other.without_zone
        self.leap_seconds += other.leap_seconds
        self.sources += other.sources

    def warnings(self) -> list[str]:
        found = []
        if self.without_zone:
            n = self.without_zone
            found.append(f"{n} time{'s' if n > 1 else ''} had no time zone and {'were' if n > 1 else 'was'} "
                         "read as UTC")
        if self.leap_seconds:
            n = self.leap_seconds
            found.append(f"{n} time{'s' if n > 1 else ''} fell on a leap second (23:59:60) and "
                         f"{'were' if n > 1 else 'was'} read as the last instant of that minute")
        return found


def build_table(texts: PointTexts) -> tuple[PointTable, ReadNotes]:
    """Convert the texts to a :class:`PointTable`; also return what was noticed on the way."""
    notes = ReadNotes()
    times = time_column(texts.time, notes)
    table = PointTable(
        lat=coordinate_column(texts.lat, "lat"), lon=coordinate_column(texts.lon, "lon"),
        ele=float_column(texts.ele, "ele"), time=times,
        hdop=float_column(texts.hdop, "hdop"), vdop=float_column(texts.vdop, "vdop"),
        pdop=float_column(texts.pdop, "pdop"), sat=sat_column(texts.sat),
        name=name_column(texts.name), extra=extra_column(texts.extra))
    source = collect({"lat": texts.lat, "lon": texts.lon, "ele": texts.ele, "time": texts.time},
                     {"lat": table.lat, "lon": table.lon, "ele": table.ele, "time": table.time})
    if source:
        notes.sources.append(source)
    return table, notes


def segments_out_of_order(times: np.ndarray, starts: np.ndarray) -> list[int]:
    """Segments (numbers, from ``starts``) holding a time not later than the one before it.

    One vectorised pass over the whole track, so that a file of a million tiny
    segments costs no per-segment work unless the segment has a problem.
    """
    rows = np.flatnonzero(~np.isnat(times))
    if len(rows) < 2:
        return []
    segment = np.searchsorted(starts, rows, side="right") - 1
    steps = np.diff(times[rows].view(np.int64))
    bad = (steps <= 0) & (segment[1:] == segment[:-1])
    return np.unique(segment[1:][bad]).tolist()


def time_order_warnings(times: np.ndarray, where: str, line_of: Callable[[int], int | None]) -> list[str]:
    """Warnings for times earlier than, or equal to, the previous timed point of a segment."""
    rows = np.flatnonzero(~np.isnat(times))
    if len(rows) < 2:
        return []
    step = np.diff(times[rows].view(np.int64))
    found = []
    for mask, one, many in ((step < 0, "has a time earlier than the point before",
                             "have times earlier than the point before"),
                            (step == 0, "repeats the time of the point before",
                             "repeat the time of the point before")):
        count = int(mask.sum())
        if count:
            first = int(rows[1:][mask][0])
            line = line_of(first)
            at = f" (first at line {line})" if line is not None else f" (first at point {first + 1})"
            found.append(f"{where}: {count} point{'s ' + many if count > 1 else ' ' + one}{at}")
    return found
