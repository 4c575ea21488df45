"""Automatic smoothing strengths estimated ahead, while the user tunes the strengths by hand.

Ticking "auto" needs the maximum-likelihood strength of the track, a search of about a dozen
likelihood passes (half a second at 100,000 points). While a hand-set smoothing preview is shown
the window has nothing else to do, so the estimate runs then, on the long-job thread, and lands
in the session's per-track-state preview cache under the same key the preview worker looks up
(``PreviewController._cached_strengths``). The values are the ones that worker would compute:
each axis' estimate depends only on the track, the rows and that axis' noise setting.
"""
from __future__ import annotations

from concurrent.futures import Future
from dataclasses import replace
from typing import Any, Callable

import numpy as np

from ..processing import smoothing
from ..processing.smoothing import SmoothParams
from .workers import WorkerPool

AXES = (("horizontal", "smooth_horizontal"), ("vertical", "smooth_elevation"))


def strength_key(params: SmoothParams, rows: np.ndarray | None) -> tuple:
    """What an automatic strength depends on besides the track state: the rows and the noise settings."""
    return (None if rows is None else rows.tobytes(), params.horizontal_sigma_m, params.vertical_sigma_m)


def prefetch_key(base: tuple) -> tuple:
    return ("estimating", base)


def wait_for_prefetch(cache: dict, base: tuple) -> None:
    """If the estimate for ``base`` is being computed ahead, wait for it instead of repeating it."""
    future = cache.get(prefetch_key(base))
    if isinstance(future, Future):
        try:
            future.result(timeout=60)
        except Exception:  # cancelled or failed: the caller estimates itself
            pass


def start_prefetch(pool: WorkerPool, snapshot: Any, rows: np.ndarray | None, params: Any, cache: dict,
                   still_current: Callable[[], bool]) -> Future | None:
    """Estimate the automatic strengths ``cache`` lacks for ``params`` in the background."""
    if not isinstance(params, SmoothParams) or params.estimate_noise or snapshot is None:
        return None
    base = strength_key(params, rows)
    missing = [axis for axis, flag in AXES if getattr(params, flag) and (base, axis) not in cache]
    if not missing or prefetch_key(base) in cache:
        return None
    ask = replace(params, **{f"{axis}_strength": (None if axis in missing else 50.0) for axis, _ in AXES})

    def work() -> None:
        try:
            estimate = smoothing.estimate_strength(snapshot, rows, params=ask,
                                                   cancelled=lambda: not still_current())
        except smoothing.EstimateCancelled:
            return
        for axis in missing:
            value = getattr(estimate, f"{axis}_strength")
            if np.isfinite(value):
                cache[(base, axis)] = float(value)

    future = pool.submit(work)
    cache[prefetch_key(base)] = future
    return future
