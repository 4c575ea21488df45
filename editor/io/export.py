"""Saving a document by file extension: GPX 1.1, GeoJSON (RFC 7946) or CSV.

GeoJSON (RFC 7946): a FeatureCollection with

* one Feature per track, geometry a MultiLineString with one line per segment
  of at least two points (RFC 7946 §3.1.4: a line has two or more positions);
  properties ``kind: "track"``, ``name``, ``segments`` (the 1-based numbers of
  the segments drawn, in order) and ``times`` (per drawn segment, ISO 8601 UTC
  text or ``null`` per point). A track with no such segment has geometry ``null``
  (allowed by RFC 7946 §3.2);
* one Feature per route of at least two points, a LineString (``kind: "route"``);
* one Point Feature per waypoint (``kind: "waypoint"``, ``name``, ``time``).

Positions are ``[lon, lat]`` or ``[lon, lat, ele]`` (RFC 7946 §3.1.1, WGS84
degrees, metres). Within one geometry all positions have the same length:
elevation is included only when every point of that geometry has one; when
only some have one, the elevations go into the ``elevations`` property instead
(per line, ``null`` where absent), so nothing is lost. Geometries crossing the
antimeridian are not cut.

CSV: UTF-8, a header row, one row per track point with the columns
``track, segment, point, lat, lon, ele, time, hdop, vdop, pdop, sat``: track and
segment numbers and the point's number within its segment count from 1; time is
ISO 8601 UTC; an absent value is an empty cell. Rows end with CRLF (RFC 4180).

Exports keep only what the model interprets; GPX is the lossless format.
"""
from __future__ import annotations

import csv
import os
import io
import json
from pathlib import Path

import numpy as np

from ..model import Document, PointTable
from .errors import TrackFileError
from .gpx.format import time_texts
from .gpx.write import gpx_bytes, gpx_chunks
from .save import atomic_write, same_file

CSV_COLUMNS = ("track", "segment", "point", "lat", "lon", "ele", "time", "hdop", "vdop", "pdop", "sat")


def _times(table: PointTable) -> list:
    out: list = [None] * len(table)
    present = ~np.isnat(table.time)
    for i, text in zip(np.flatnonzero(present).tolist(), time_texts(table.time[present])):
        out[i] = text + "Z"
    return out


def _optional(values: np.ndarray) -> list:
    return [None if v != v else v for v in values.tolist()]


def _positions(table: PointTable, with_ele: bool) -> list:
    columns = (table.lon, table.lat, table.ele) if with_ele else (table.lon, table.lat)
    return [list(p) for p in zip(*(c.tolist() for c in columns))]


def _line_features(table: PointTable, runs: list[tuple[int, int]]) -> tuple[list, list, list | None, list[int]]:
    """Lines (of >= 2 points), their times, elevation property and the indexes of the runs used."""
    drawn = [i for i, (a, b) in enumerate(runs) if b - a >= 2]
    parts = [table.take(slice(*runs[i])) for i in drawn]
    has_ele = [~np.isnan(p.ele) for p in parts]
    with_ele = bool(parts) and all(h.all() for h in has_ele)
    lines = [_positions(p, with_ele) for p in parts]
    elevations = None
    if not with_ele and any(h.any() for h in has_ele):
        elevations = [_optional(p.ele) for p in parts]
    return lines, [_times(p) for p in parts], elevations, drawn


def geojson_dict(doc: Document) -> dict:
    """The document as a GeoJSON FeatureCollection (a plain ``dict``)."""
    features = []
    for number, track in enumerate(doc.tracks, start=1):
        lines, times, elevations, drawn = _line_features(track.points, track.segment_bounds())
        properties = {"kind": "track", "name": track.name, "number": number,
                      "segments": [i + 1 for i in drawn], "times": times}
        if elevations is not None:
            properties["elevations"] = elevations
        geometry = {"type": "MultiLineString", "coordinates": lines} if lines else None
        features.append({"type": "Feature", "geometry": geometry, "properties": properties})
    for number, route in enumerate(doc.routes, start=1):
        lines, times, elevations, _ = _line_features(route.points, [(0, len(route.points))])
        if not lines:
            continue
        properties = {"kind": "route", "name": route.name, "number": number, "times": times[0]}
        if elevations is not None:
            properties["elevations"] = elevations[0]
        features.append({"type": "Feature", "geometry": {"type": "LineString", "coordinates": lines[0]},
                         "properties": properties})
    waypoints = doc.waypoints
    times = _times(waypoints)
    for i in range(len(waypoints)):
        position = [float(waypoints.lon[i]), float(waypoints.lat[i])]
        if not np.isnan(waypoints.ele[i]):
            position.append(float(waypoints.ele[i]))
        features.append({"type": "Feature", "geometry": {"type": "Point", "coordinates": position},
                         "properties": {"kind": "waypoint", "name": waypoints.name[i], "time": times[i]}})
    return {"type": "FeatureCollection", "features": features}


def geojson_bytes(doc: Document) -> bytes:
    return json.dumps(geojson_dict(doc), ensure_ascii=False, allow_nan=False).encode("utf-8")


def csv_bytes(doc: Document) -> bytes:
    """One row per track point (see the module notes for the columns)."""
    buffer = io.StringIO()
    writer = csv.writer(buffer)
    writer.writerow(CSV_COLUMNS)
    for number, track in enumerate(doc.tracks, start=1):
        points = track.points
        if not len(points):
            continue
        segment = track.segment_of(np.arange(len(points)))
        within = np.arange(len(points)) - track.segment_starts[segment]
        sat = ["" if v != v else int(v) for v in points.sat.tolist()]
        columns = [[number] * len(points), (segment + 1).tolist(), (within + 1).tolist(),
                   points.lat.tolist(), points.lon.tolist(), _blank(points.ele),
                   [t or "" for t in _times(points)], _blank(points.hdop), _blank(points.vdop),
                   _blank(points.pdop), sat]
        writer.writerows(zip(*columns))
    return buffer.getvalue().encode("utf-8")


def _blank(values: np.ndarray) -> list:
    return ["" if v != v else v for v in values.tolist()]


_FORMATS = {".gpx": gpx_bytes, ".geojson": geojson_bytes, ".json": geojson_bytes, ".csv": csv_bytes}


def write_document(doc: Document, path: str | os.PathLike, *, backup: bool | None = None) -> Path | None:
    """Save ``doc`` in the format named by the extension of ``path``, atomically.

    ``.gpx``: GPX 1.1; ``.geojson`` or ``.json``: GeoJSON; ``.csv``: CSV.

    ``backup=None`` keeps a backup exactly when ``path`` is the file the
    document was read from (see :func:`editor.io.save.atomic_write`). Returns
    the backup's path, or ``None`` when none was made.
    """
    suffix = Path(path).suffix.lower()
    if suffix not in _FORMATS:
        raise TrackFileError(path, f"unknown file type {suffix or '(no extension)'!r}; "
                                   "save as .gpx, .geojson or .csv")
    data = gpx_chunks(doc, path) if suffix == ".gpx" else _FORMATS[suffix](doc)
    if backup is None:
        backup = same_file(path, doc.source_path)
    return atomic_write(path, data, backup=backup)
