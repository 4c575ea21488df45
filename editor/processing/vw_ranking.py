"""Visvalingam–Whyatt elimination that can be resumed, so tuning the area by eye is cheap.

Visvalingam & Whyatt (1993): repeatedly drop the point whose triangle with its two
neighbours has the smallest area; a point's effective area is never less than the area of
the point dropped before it. A binary heap with lazy deletion makes it O(n log n).

The elimination order does not depend on the threshold: a threshold only says where to
stop. So the points dropped for an area A are a prefix of the one elimination order (its
effective areas never decrease), and :class:`VWRanking` keeps the heap between calls:
a larger area carries on from where the last one stopped, a smaller one reads the prefix
it already has. Tuning the area on a long track then costs the full ranking at most once
in total, not once per setting, and each result is exactly what a fresh run gives.

Areas are ranked as integers of 2^-21 m^2 (about 5e-7 m^2) with the row number in the low
bits: Python compares plain integers twice as fast as tuples, and the heap loop is the one
per-point loop of the method. Effective areas are reported to that resolution.
"""
from __future__ import annotations

import heapq
import threading
from typing import Callable

import numpy as np


def always_kept(n: int, anchors: np.ndarray | None) -> np.ndarray:
    """The points no elimination may drop: ``anchors`` and the two ends."""
    keep = np.zeros(n, dtype=bool) if anchors is None else np.array(anchors, dtype=bool)
    if n:
        keep[[0, -1]] = True
    return keep


class VWRanking:
    """The elimination of one line with fixed anchors, carried out as far as asked so far.

    Safe to share between threads (two previews of one track state may ask at once): each
    call holds the ranking's lock while it carries the elimination on and reads it."""

    def __init__(self, x: np.ndarray, y: np.ndarray, anchors: np.ndarray | None = None) -> None:
        self._lock = threading.RLock()
        n = len(x)
        fixed = always_kept(n, anchors)
        xs, ys = np.asarray(x, dtype=np.float64), np.asarray(y, dtype=np.float64)
        interior = np.flatnonzero(~fixed)
        self.n = n
        self.interior_count = len(interior)
        self.scale = 2.0 ** 20  # per unit of doubled area, i.e. 2^-21 m^2 of area
        self.shift = int(n).bit_length()
        self.order: list[int] = []  # rows in the order they are dropped
        self.floors: list[int] = []  # each dropped row's effective area, in ranking units
        self.finished = not len(interior)
        if self.finished:
            return
        i0, i2 = interior - 1, interior + 1
        doubled = np.abs((xs[interior] - xs[i0]) * (ys[i2] - ys[i0]) - (xs[i2] - xs[i0]) * (ys[interior] - ys[i0]))
        if doubled.max() * self.scale >= 2.0 ** (62 - self.shift):
            self.scale = 2.0 ** (61 - self.shift) / doubled.max()  # astronomically large areas: coarser units
        keys = ((doubled * self.scale).astype(np.int64) << self.shift) | interior
        current = np.full(n, -1, dtype=np.int64)
        current[interior] = keys
        self._heap = keys.tolist()
        heapq.heapify(self._heap)
        self._cur = current.tolist()
        self._pts = list(zip(xs.tolist(), ys.tolist()))
        self._fix = fixed.tolist()
        self._prv = list(range(-1, n - 1))
        self._nxt = list(range(1, n + 1))
        self._floor = 0

    def limit_for(self, area_m2: float) -> int:
        """``area_m2`` in ranking units: points whose effective area is below it are dropped."""
        return int(np.ceil(2.0 * area_m2 * self.scale))

    def run(self, limit: int | None = None, count: int | None = None) -> None:
        """Carry the elimination on until the next effective area reaches ``limit`` or ``count``
        points are dropped in all (whichever comes first), or nothing is left to drop."""
        with self._lock:
            self._run(limit, count)

    def _run(self, limit: int | None, count: int | None) -> None:
        if self.finished:
            return
        limit = 1 << 63 if limit is None else limit
        budget = self.interior_count - len(self.order) if count is None else count - len(self.order)
        heap, cur, pts, fix, prv, nxt = self._heap, self._cur, self._pts, self._fix, self._prv, self._nxt
        order, floors = self.order, self.floors
        shift, scale = self.shift, self.scale
        mask = (1 << shift) - 1
        floor = self._floor
        heappop, heapreplace, heappush = heapq.heappop, heapq.heapreplace, heapq.heappush
        while budget > 0 and heap:
            k = heap[0]
            i = k & mask
            c = cur[i]
            if k != c:
                if k < c:
                    heapreplace(heap, c)  # the point's area grew since: requeue it at its current key
                else:
                    heappop(heap)  # left over from a point whose area shrank, or that is gone
                continue
            a = k >> shift
            if a > floor:
                if a >= limit:
                    break  # stays on the heap: a larger limit carries on from here
                floor = a
            heappop(heap)
            order.append(i)
            floors.append(floor)
            cur[i] = -1
            budget -= 1
            p = prv[i]
            q = nxt[i]
            nxt[p] = q
            prv[q] = p
            xp, yp = pts[p]
            xq, yq = pts[q]
            if not fix[p]:
                xu, yu = pts[prv[p]]
                kp = (int(abs((xp - xu) * (yq - yu) - (xq - xu) * (yp - yu)) * scale) << shift) | p
                if kp < cur[p]:
                    heappush(heap, kp)  # a smaller area must be queued now; a larger one waits (see above)
                cur[p] = kp
            if not fix[q]:
                xw, yw = pts[nxt[q]]
                kq = (int(abs((xq - xp) * (yw - yp) - (xw - xp) * (yq - yp)) * scale) << shift) | q
                if kq < cur[q]:
                    heappush(heap, kq)
                cur[q] = kq
        self._floor = floor
        if len(order) == self.interior_count:
            self.finished = True
            # the order and the areas are all that is read from now on (a few hundred MB at 1M points)
            self._heap, self._cur, self._prv, self._nxt = [], [], [], []
            self._pts, self._fix = [], []

    def rank_all(self, carry_on: Callable[[], bool] = lambda: True, chunk: int = 20000) -> None:
        """Finish the elimination a ``chunk`` of points at a time while ``carry_on()`` holds; other
        callers get their turn between chunks."""
        while not self.finished and carry_on():
            self.run(count=len(self.order) + chunk)

    def dropped_below(self, area_m2: float) -> np.ndarray:
        """Rows dropped when every point of effective area below ``area_m2`` goes."""
        limit = self.limit_for(area_m2)
        with self._lock:
            self._run(limit, None)
            floors = np.asarray(self.floors, dtype=np.int64)
            return np.asarray(self.order[:int(np.searchsorted(floors, limit, side="left"))], dtype=np.int64)

    def dropped_to_count(self, points: int) -> np.ndarray:
        """Rows dropped, in order, until ``points`` remain (never an anchor)."""
        count = min(self.interior_count, max(0, self.n - int(points)))
        with self._lock:
            self._run(None, count)
            return np.asarray(self.order[:count], dtype=np.int64)

    def effective_areas(self) -> np.ndarray:
        """Effective area (square metres) of each point dropped so far; ``inf`` for the others."""
        out = np.full(self.n, np.inf)
        with self._lock:
            dropped, floors = list(self.order), list(self.floors)
        out[np.asarray(dropped, dtype=np.int64)] = np.asarray(floors, dtype=np.float64) / (2.0 * self.scale)
        return out


def vw_effective_areas(x: np.ndarray, y: np.ndarray, anchors: np.ndarray | None = None,
                       stop_area: float | None = None, stop_count: int | None = None) -> np.ndarray:
    """Visvalingam–Whyatt effective area (square metres) of each point; ``inf`` for points kept.

    Points are eliminated smallest area first; a point's effective area is the largest area
    eliminated so far, so it never falls below its predecessor's. Elimination stops before
    the first effective area reaching ``stop_area`` or once only ``stop_count`` points remain.
    """
    ranking = VWRanking(x, y, anchors)
    if stop_count is not None:
        ranking.dropped_to_count(stop_count)
    elif stop_area is not None:
        ranking.dropped_below(stop_area)
    else:
        ranking.run()
    return ranking.effective_areas()


__all__ = ["VWRanking", "always_kept", "vw_effective_areas"]
