"""Simplification in metres: Ramer-Douglas-Peucker (planar or with a vertical tolerance) and Visvalingam-Whyatt.

Both work in the track's local transverse Mercator plane, so tolerances are
metres (and square metres) whatever the latitude. Segment endpoints and every
point outside the user's selection are always kept ("anchors"); the methods
only thin the stretches between consecutive anchors.

Ramer-Douglas-Peucker
---------------------
Douglas & Peucker (1973). A stretch keeps the point farthest from the segment
joining its ends when that distance is *greater* than the tolerance and is split
there; otherwise all its interior points go. Distances are to the segment (not
the infinite line) and the first of equal maxima wins, as in GEOS, so the kept
points equal ``shapely.simplify(line, tol, preserve_topology=False)`` on the
same planar line. The planar case is handed to GEOS itself
(:func:`rdp_keep_geos`, the row number riding along as the Z coordinate so the
kept rows come back exactly); :func:`rdp_keep` is our own numpy version, used
with a vertical tolerance. It runs the recursion a whole level at a time: every
open stretch of the level is measured in one vectorised pass and finished
stretches leave the working set, so there is no Python recursion and no
per-point loop, and a million points take a few dozen passes.

With ``vertical_tolerance_m`` set, a point also counts as far when its
elevation differs by more than that from the chord's linear interpolation,
taken along the distance travelled (the axis of the elevation profile). The
split point is the one with the largest deviation relative to its tolerance,
``max(d_h / tol_h, d_v / tol_v)``, so climbs survive a generous horizontal
tolerance.

Visvalingam-Whyatt
------------------
Visvalingam & Whyatt (1993), in :mod:`editor.processing.vw_ranking`: repeatedly
drop the point whose triangle with its two neighbours has the smallest area.
Stops at an area threshold (points with effective area below it go) or at a
target point count. Given a ``memo`` (the window's previews keep one per track
state) the elimination is resumed between settings instead of started again.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from ..model.document import Track
from .cleaning_base import keep_proposal, planar, selection_mask
from .proposal import Proposal
from .stats import StatsParams
from .vw_ranking import VWRanking, always_kept, vw_effective_areas


@dataclass(frozen=True)
class SimplifyParams:
    """Parameters of :func:`simplify`.

    Attributes
    ----------
    method : ``"rdp"`` (Ramer-Douglas-Peucker, default) or ``"vw"`` (Visvalingam-Whyatt).
    tolerance_m : RDP horizontal tolerance in metres. Default 5 m: about the scatter of a
        consumer receiver under open sky, so the removed detail is mostly noise.
    vertical_tolerance_m : RDP vertical tolerance in metres; ``None`` (default) ignores elevation.
    area_m2 : VW threshold in square metres: points whose effective area is below it are removed.
        Default 50 m^2 (e.g. a 5 m bump over a 20 m base).
    target_points : VW only; when set, remove points in VW order until this many remain
        (never fewer than the anchors) and ignore ``area_m2``.
    """

    method: str = "rdp"
    tolerance_m: float = 5.0
    vertical_tolerance_m: float | None = None
    area_m2: float = 50.0
    target_points: int | None = None


#: Tolerances below this (metres) are treated as this: "keep every point that deviates at all".
TINY_TOLERANCE_M = 1e-9


def _segment_distance(px, py, ax, ay, bx, by) -> np.ndarray:
    """Distance (metres) from points to segments A-B, as ``Distance::pointToSegment`` in GEOS."""
    dx, dy = bx - ax, by - ay
    len2 = dx * dx + dy * dy
    with np.errstate(invalid="ignore", divide="ignore"):
        r = ((px - ax) * dx + (py - ay) * dy) / len2
        s = ((ay - py) * dx - (ax - px) * dy) / len2
        interior = np.abs(s) * np.sqrt(len2)
    to_a = np.hypot(px - ax, py - ay)
    to_b = np.hypot(px - bx, py - by)
    # A degenerate segment (A == B) gives r = NaN: measure to A, as GEOS does.
    return np.where((r <= 0) | (len2 == 0), to_a, np.where(r >= 1, to_b, interior))


def rdp_keep(x: np.ndarray, y: np.ndarray, tolerance_m: float, anchors: np.ndarray | None = None,
             ele: np.ndarray | None = None, vertical_tolerance_m: float | None = None) -> np.ndarray:
    """Boolean mask of the points Ramer-Douglas-Peucker keeps, computed a whole level at a time.

    Parameters
    ----------
    x, y : planar coordinates (metres).
    tolerance_m : keep a point only if its distance to the stretch's segment is greater.
    anchors : points that are always kept (the first and last always are).
    ele, vertical_tolerance_m : optional elevation (metres, NaN ignored) and its tolerance.
    """
    x = np.asarray(x, dtype=np.float64)
    y = np.asarray(y, dtype=np.float64)
    keep = always_kept(len(x), anchors)
    anchor_rows = np.flatnonzero(keep)
    lo, hi = anchor_rows[:-1], anchor_rows[1:]
    count = hi - lo - 1
    lo, hi, count = lo[count > 0], hi[count > 0], count[count > 0]
    idx = np.flatnonzero(~keep)
    px, py = x[idx], y[idx]
    vertical = ele is not None and vertical_tolerance_m is not None
    if vertical:
        # NaN elevations stay NaN: their vertical deviation is NaN and np.fmax ignores it
        ele = np.asarray(ele, dtype=np.float64)
        along = np.concatenate(([0.0], np.cumsum(np.hypot(np.diff(x), np.diff(y)))))
        pe, ps = ele[idx], along[idx]
        inv_h2 = 1.0 / max(float(tolerance_m), TINY_TOLERANCE_M) ** 2
        inv_v2 = 1.0 / max(float(vertical_tolerance_m), TINY_TOLERANCE_M) ** 2
        limit = 1.0
    else:
        limit = float(tolerance_m)
    while len(idx):
        ax, ay = x[lo], y[lo]
        dx, dy = x[hi] - ax, y[hi] - ay
        len2 = dx * dx + dy * dy
        ux, uy = px - np.repeat(ax, count), py - np.repeat(ay, count)
        if not vertical:
            # distance to the segment with GEOS's own arithmetic (Distance::pointToSegment), so that
            # ties and points exactly at the tolerance go the same way as in shapely
            rdx, rdy, rlen2 = np.repeat(dx, count), np.repeat(dy, count), np.repeat(len2, count)
            with np.errstate(invalid="ignore", divide="ignore"):
                r = (ux * rdx + uy * rdy) / rlen2
                score = np.abs((ux * rdy - uy * rdx) / rlen2) * np.repeat(np.sqrt(len2), count)
            wx, wy = ux - rdx, uy - rdy
            score = np.where((r <= 0) | (rlen2 == 0), np.sqrt(ux * ux + uy * uy),
                             np.where(r >= 1, np.sqrt(wx * wx + wy * wy), score))
        else:
            # squared distance to the segment as (cross^2 + overshoot^2) / len^2, in units of the
            # tolerance; a closed stretch (A == B) gets a 1 nm chord so the same formula gives |u|^2
            degenerate = len2 == 0
            dx = np.where(degenerate, 1e-9, dx)
            len2 = np.where(degenerate, 1e-18, len2)
            rdx, rdy, rlen2 = np.repeat(dx, count), np.repeat(dy, count), np.repeat(len2, count)
            dot = ux * rdx + uy * rdy
            cross = ux * rdy - uy * rdx
            overshoot = np.maximum(np.maximum(-dot, dot - rlen2), 0.0)
            score = (cross * cross + overshoot * overshoot) * np.repeat(inv_h2 / len2, count)
            span = along[hi] - along[lo]
            slope = np.divide(ele[hi] - ele[lo], span, out=np.zeros(len(span)), where=span > 0)
            dv = (pe - np.repeat(ele[lo], count)) - (ps - np.repeat(along[lo], count)) * np.repeat(slope, count)
            score = np.fmax(score, dv * dv * inv_v2)
        starts = np.concatenate(([0], np.cumsum(count)[:-1]))
        best = np.maximum.reduceat(score, starts)
        split = best > limit
        if not split.any():
            break
        # the first point reaching each split stretch's maximum (GEOS keeps the first of equal maxima)
        hits = np.flatnonzero(split.repeat(count) & (score == best.repeat(count)))
        hit_run = np.searchsorted(starts, hits, side="right") - 1
        first = hits[np.concatenate(([True], hit_run[1:] != hit_run[:-1]))]
        split_rows = idx[first]
        keep[split_rows] = True
        split_start = starts[split]
        left = first - split_start
        right = split_start + count[split] - 1 - first
        live = split.repeat(count)
        live[first] = False
        live = np.flatnonzero(live)  # one index array and several takes beat several boolean masks
        idx, px, py = idx.take(live), px.take(live), py.take(live)
        if vertical:
            pe, ps = pe.take(live), ps.take(live)
        lo = np.column_stack((lo[split], split_rows)).ravel()
        hi = np.column_stack((split_rows, hi[split])).ravel()
        count = np.column_stack((left, right)).ravel()
        if not count.all():
            lo, hi, count = lo[count > 0], hi[count > 0], count[count > 0]
    return keep


def rdp_keep_geos(x: np.ndarray, y: np.ndarray, tolerance_m: float, anchors: np.ndarray | None = None) -> np.ndarray:
    """Planar Ramer-Douglas-Peucker through GEOS (``shapely.simplify(..., preserve_topology=False)``).

    Each stretch between anchors becomes one line whose Z coordinate carries the row
    number; GEOS measures in the plane and keeps original vertices, Z included, so the
    kept rows come back exactly, duplicate coordinates or not.
    """
    import shapely  # here, not at the top: the batch command must not pay for it when it does not simplify

    n = len(x)
    keep = always_kept(n, anchors)
    anchor_rows = np.flatnonzero(keep)
    lo, hi = anchor_rows[:-1], anchor_rows[1:]
    busy = hi - lo > 1
    lo, hi = lo[busy], hi[busy]
    if not len(lo):
        return keep
    sizes = hi - lo + 1
    offsets = np.concatenate(([0], np.cumsum(sizes)[:-1]))
    rows = np.arange(sizes.sum()) - np.repeat(offsets - lo, sizes)
    coords = np.column_stack((np.asarray(x, dtype=np.float64)[rows], np.asarray(y, dtype=np.float64)[rows],
                              rows.astype(np.float64)))
    lines = shapely.linestrings(coords, indices=np.repeat(np.arange(len(lo)), sizes))
    simple = shapely.simplify(lines, tolerance_m, preserve_topology=False)
    kept = shapely.get_coordinates(simple, include_z=True)[:, 2]
    keep[kept.astype(np.int64)] = True
    return keep


def _deviation(x, y, keep) -> float:
    """Largest distance (metres) from a dropped point to the simplified line."""
    dropped = np.flatnonzero(~keep)
    if not len(dropped):
        return 0.0
    kept = np.flatnonzero(keep)
    after = np.searchsorted(kept, dropped)
    a, b = kept[after - 1], kept[after]
    return float(_segment_distance(x[dropped], y[dropped], x[a], y[a], x[b], y[b]).max())


def _vertical_deviation(along, ele, keep) -> float:
    dropped = np.flatnonzero(~keep & np.isfinite(ele))
    kept = np.flatnonzero(keep)
    if not len(dropped):
        return 0.0
    after = np.searchsorted(kept, dropped)
    a, b = kept[after - 1], kept[after]
    span = along[b] - along[a]
    frac = np.divide(along[dropped] - along[a], span, out=np.zeros(len(dropped)), where=span > 0)
    line = ele[a] + frac * (ele[b] - ele[a])
    dev = np.abs(ele[dropped] - line)
    return float(np.nanmax(dev)) if np.isfinite(dev).any() else 0.0


def simplify(track: Track, params: SimplifyParams = SimplifyParams(), *, rows=None, track_index: int = 0,
             stats_params: StatsParams = StatsParams(), memo: dict | None = None) -> Proposal:
    """Propose dropping points that the line does not need (see module notes).

    ``rows`` (sorted row indices) limits removal to the selection. ``info`` reports
    ``kept`` (points), ``max_deviation_m`` (horizontal distance of the farthest dropped
    point from the new line), ``max_vertical_deviation_m`` and ``ascent_change_m``
    (ascent after minus before, metres). ``memo``: a dict the caller keeps for one state of
    ``track``; Visvalingam-Whyatt resumes its elimination there (same result, less work).
    """
    if params.method not in ("rdp", "vw"):
        raise ValueError(f"method must be 'rdp' or 'vw', not {params.method!r}")
    pt = planar(track)
    n = len(pt)
    anchors = _anchors(pt, rows)
    if params.method == "rdp" and params.vertical_tolerance_m is None:
        keep = rdp_keep_geos(pt.x, pt.y, params.tolerance_m, anchors)
    elif params.method == "rdp":
        keep = rdp_keep(pt.x, pt.y, params.tolerance_m, anchors, pt.ele, params.vertical_tolerance_m)
    else:
        ranking = _ranking(pt, anchors, memo)
        dropped = (ranking.dropped_to_count(params.target_points) if params.target_points
                   else ranking.dropped_below(params.area_m2))
        keep = np.ones(n, dtype=bool)
        keep[dropped] = False
    along = np.concatenate(([0.0], np.cumsum(np.hypot(np.diff(pt.x), np.diff(pt.y))))) if n else np.zeros(0)
    info = {"method": params.method, "kept": int(keep.sum()), "removed": int(n - keep.sum()),
            "max_deviation_m": _deviation(pt.x, pt.y, keep) if n else 0.0,
            "max_vertical_deviation_m": _vertical_deviation(along, pt.ele, keep) if n else 0.0}
    label = "Simplify track" if params.method == "rdp" else "Simplify track (areas)"
    proposal = keep_proposal("simplify", label, track_index, track, keep, stats_params,
                             reasons={"simplified": np.flatnonzero(~keep)}, info=info)
    proposal.info["ascent_change_m"] = proposal.after.ascent_m - proposal.before.ascent_m
    return proposal


def _anchors(pt, rows) -> np.ndarray:
    """Points simplification never drops: outside the selection, and each segment's ends."""
    anchors = ~selection_mask(len(pt), rows)
    ends = np.array([r for a, b in pt.bounds if b > a for r in (a, b - 1)], dtype=np.int64)
    anchors[ends] = True
    return anchors


def rank_by_area_ahead(track: Track, rows, memo: dict, carry_on: Callable[[], bool] = lambda: True) -> None:
    """Carry out the whole Visvalingam-Whyatt elimination of ``track`` into ``memo`` (the one
    :func:`simplify` reads), in chunks while ``carry_on()`` holds: the window does this in the
    background while Simplify is open, so each bend-size setting then only reads the ranking."""
    pt = planar(track)
    if len(pt) > 2:
        _ranking(pt, _anchors(pt, rows), memo).rank_all(carry_on)


def _ranking(pt, anchors: np.ndarray, memo: dict | None) -> VWRanking:
    """The elimination for these anchors: the memo's, carried on, when it was made for them."""
    if memo is None:
        return VWRanking(pt.x, pt.y, anchors)
    key = anchors.tobytes()
    kept = memo.get("vw")  # one entry, so a second thread never sees half of it
    if kept is None or kept[0] != key:
        kept = (key, VWRanking(pt.x, pt.y, anchors))
        memo["vw"] = kept
    return kept[1]


__all__ = ["SimplifyParams", "simplify", "rank_by_area_ahead", "rdp_keep", "rdp_keep_geos", "vw_effective_areas"]
