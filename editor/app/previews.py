"""Tool previews off the UI thread, apply and discard, and long jobs with a progress bar.

A :class:`PreviewController` runs a tool on the session's snapshot of the shown
track in a worker; only the newest result becomes the preview. Values a preview
can reuse (the automatic smoothing strengths, the track's totals and its plane
projection) live in the session's per-revision cache.
"""
from __future__ import annotations

from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, Any, Callable

import numpy as np
from PySide6 import QtCore

from ..geo.projection import LocalProjection
from ..model.payload import GAP_FILL_MARKER
from ..io.provenance import StepRecord, params_record
from ..processing.cleaning_base import planar
from ..processing.descriptor import ToolDescriptor
from ..processing import smoothing
from ..processing.smoothing import SmoothParams
from ..processing.stats import track_totals
from ..processing.simplify import rank_by_area_ahead
from .auto_strength import start_prefetch, strength_key, wait_for_prefetch
from .session import Session
from .workers import LongJob, PreviewRunner, WorkerPool

if TYPE_CHECKING:
    from .window import MainWindow


@dataclass(frozen=True)
class AppliedHint:
    """What an applied proposal already computed for the state it produced (document revision
    ``revision``, track ``track``): its planar coordinates and totals, reused by the views."""

    revision: int
    track: int
    lat: np.ndarray
    lon: np.ndarray
    xy: tuple
    totals: Any

    def fits(self, session: Session) -> bool:
        return (self.revision, self.track) == (session.revision, session.state.track)


def _projected(cache: dict, key: tuple, lat: np.ndarray, lon: np.ndarray,
               project: Callable[[np.ndarray, np.ndarray], tuple]) -> tuple:
    """``project(lat, lon)``, or the last preview's map coordinates when its positions were the
    same (an elevation-only change leaves every position as it was)."""
    last = cache.get(("xy", key))
    if last is not None and np.array_equal(last[0], lat, equal_nan=True) and np.array_equal(last[1], lon,
                                                                                           equal_nan=True):
        return last[2]
    xy = project(lat, lon)
    cache[("xy", key)] = (lat, lon, xy)
    return xy


#: Longest track whose bend-size ranking is prepared ahead (about 2 s of background work).
RANK_AHEAD_MAX_POINTS = 300_000


class PreviewController(QtCore.QObject):
    """Previews, apply, discard and long jobs of one window."""

    def __init__(self, window: MainWindow, session: Session, pool: WorkerPool, long_pool: WorkerPool) -> None:
        super().__init__(window)
        self.window = window
        self.session = session
        self.pool = pool
        self.long_pool = long_pool
        self.runner = PreviewRunner(pool, self)
        self.runner.result_ready.connect(self._preview_ready)
        self.runner.failed.connect(self._preview_failed)
        self.runner.started.connect(lambda: window.tool_dock.set_status("Computing the proposal…"))
        self.long_job: LongJob | None = None
        self.applied_hint: AppliedHint | None = None
        self._prefetch_inputs: tuple | None = None

    # --- tool previews ----------------------------------------------------------------------------
    def request_preview(self, tool: ToolDescriptor, params: Any, selection_only: bool,
                        immediately: bool = False) -> None:
        """Compute ``tool.function(snapshot, params, rows=..., track_index=...)`` in the background."""
        session, state = self.session, self.session.state
        snapshot = session.snapshot()
        if snapshot is None or not len(snapshot.points):
            self.window.tool_dock.set_status("The shown track has no points to work on (the file may hold "
                                             "only waypoints or routes).")
            return
        rows = state.selection.copy() if selection_only and len(state.selection) else None
        track_index = state.track
        lat0, lon0 = self.window.projection.lat0, self.window.projection.lon0
        cache = session.preview_cache()
        strengths = self._cached_strengths(params, rows, cache)
        # only the profile draws an uncertainty band; "before" and "plane" are filled in by the worker
        kwargs_wanted = tool.optional_inputs(before=None, plane=None, want_std="vertical",
                                             inserted_marker=GAP_FILL_MARKER, memo=None)
        function = tool.function

        def work():
            kwargs = dict(kwargs_wanted)
            if "before" in kwargs:  # the shown track's totals, once per track state
                if cache.get("before") is None:
                    cache["before"] = track_totals(snapshot)
                kwargs["before"] = cache["before"]
            if "plane" in kwargs:  # the shown track in metres, once per track state
                if cache.get("plane") is None:
                    cache["plane"] = planar(snapshot)
                kwargs["plane"] = cache["plane"]
            if "memo" in kwargs:  # what the tool may reuse between previews of this track state
                kwargs["memo"] = cache.setdefault(("memo", tool.key), {})
            proposal = function(snapshot, strengths(snapshot, params), rows=rows, track_index=track_index,
                                **kwargs)
            proposal.params = params  # as the user set them ("auto" stays auto) for the cleaning record
            # Project the proposal for the map here, off the UI thread (pyproj objects stay
            # in the thread that made them).
            xy = _projected(cache, (tool.key, lat0, lon0), proposal.points.lat, proposal.points.lon,
                            lambda lat, lon: LocalProjection(lat0, lon0).to_xy(lat, lon))
            proposal.edit()  # the undo step's "what changed" is worked out here, not when applying
            return proposal, xy

        self._prefetch_inputs = (snapshot, rows, cache, (session.revision, track_index))
        if state.preview is None:
            self.runner.forget_shown()
        key = (tool.key, params, None if rows is None else rows.tobytes(), session.revision, track_index,
               lat0, lon0)
        self.runner.request(work, immediately=immediately, key=key)

    @staticmethod
    def _cached_strengths(params: Any, rows: np.ndarray | None, cache: dict) -> Callable[[Any, Any], Any]:
        """For smoothing with an automatic strength: estimate it once per track state, not per preview.

        Moving one strength control re-runs the tool; the other axis' maximum-likelihood
        estimate does not change with it, so it is kept (per track state, selection and noise
        settings) and handed to the tool as a fixed strength. Returns a function
        ``(snapshot, params) -> params`` for the worker.
        """
        if not isinstance(params, SmoothParams) or params.estimate_noise:
            return lambda _snapshot, p: p
        base = strength_key(params, rows)
        wanted = {axis: getattr(params, f"{axis}_strength") is None and getattr(params, f"smooth_{flag}")
                  for axis, flag in (("horizontal", "horizontal"), ("vertical", "elevation"))}

        def fill(snapshot, p):
            missing = [axis for axis, auto in wanted.items() if auto and (base, axis) not in cache]
            if missing:  # being estimated ahead (auto_strength.py)? then that result, not a second search
                wait_for_prefetch(cache, base)
                missing = [axis for axis, auto in wanted.items() if auto and (base, axis) not in cache]
            if missing:
                # Estimate only the axes not known yet; the others get a placeholder fixed strength.
                ask = replace(p, **{f"{axis}_strength": (None if axis in missing else 50.0) for axis in wanted})
                estimate = smoothing.estimate_strength(snapshot, rows, params=ask)
                for axis in missing:
                    value = getattr(estimate, f"{axis}_strength")
                    if np.isfinite(value):
                        cache[(base, axis)] = float(value)
            known = {f"{axis}_strength": cache[(base, axis)] for axis, auto in wanted.items()
                     if auto and (base, axis) in cache}
            return replace(p, **known) if known else p

        return fill

    def _preview_ready(self, result: tuple) -> None:
        proposal, xy = result
        if proposal is None or proposal.track != self.session.state.track:
            return
        self.window.map_view.prepare_proposal_xy(proposal, xy)
        self.session.state.set_preview(proposal)
        self._prefetch_automatic(proposal)

    def _prefetch_automatic(self, proposal) -> None:
        """While a preview is shown the window is idle: prepare what the next settings will need. For a
        hand-set smoothing preview, what "auto" needs (auto_strength.py); for Simplify, the bend-size ranking."""
        if self.runner.busy or self._prefetch_inputs is None or (self.long_job is not None and self.long_job.running):
            return
        snapshot, rows, cache, state_key = self._prefetch_inputs
        session = self.session

        def still_current() -> bool:
            return (session.revision, session.state.track) == state_key

        if proposal.tool == "simplify":
            # With Simplify open, rank by bend size ahead: each bend-size setting then only reads it.
            # Not on very long tracks: it would hold the long-job thread for seconds.
            if ("ranked", "simplify") in cache or len(snapshot.points) > RANK_AHEAD_MAX_POINTS:
                return
            cache[("ranked", "simplify")] = self.long_pool.submit(
                lambda: rank_by_area_ahead(snapshot, rows, cache.setdefault(("memo", "simplify"), {}),
                                           still_current))
            return
        start_prefetch(self.long_pool, snapshot, rows, proposal.params, cache, still_current)

    def _preview_failed(self, message: str) -> None:
        first = message.splitlines()[0]
        self.window.tool_dock.set_status(f"The tool could not run: {first}")
        self.window.statusBar().showMessage(f"Tool failed: {first}", 8000)

    def apply_preview(self) -> bool:
        """Commit the previewed proposal as one undo step."""
        status = self.window.statusBar()
        proposal = self.session.state.preview
        if proposal is None:
            status.showMessage("There is no proposal to apply yet.", 5000)
            return False
        self.runner.cancel()
        xy = self.window.map_view.proposal_xy(proposal)  # projected by the worker: not again on the UI thread
        self.session.state.set_preview(None)
        if proposal.is_noop():
            status.showMessage("The proposal changes nothing.", 5000)
            return False
        # a combined proposal (Clean up) brings its own record: one entry per step it ran
        record = proposal.info.get("cleaning_record") or StepRecord(
            proposal.tool, proposal.label, proposal.track, params_record(proposal.params, proposal.info))
        if not self.window.editing.push_edit(proposal.edit(), proposal.label, record):
            return False
        # the views redraw in the next event-loop turn and take this instead of projecting again
        self.applied_hint = AppliedHint(self.session.revision, self.session.state.track,
                                        proposal.points.lat, proposal.points.lon, xy, proposal.after)
        self.window.recovery.record_now()
        status.showMessage(f"Applied: {proposal.label}", 5000)
        return True

    def discard_preview(self) -> None:
        self.runner.cancel()
        self.session.state.set_preview(None)

    # --- long jobs --------------------------------------------------------------------------------
    def start_long_job(self, title: str, work: Callable[..., Any], on_done: Callable[[Any], None]) -> LongJob | None:
        """Run ``work(progress, cancelled)`` with a progress bar and a Cancel button."""
        window = self.window
        if self.long_job is not None and self.long_job.running:
            window.statusBar().showMessage("Another computation is still running.", 5000)
            return None
        job = LongJob(self.long_pool, work, self)
        self.long_job = job
        window.progress.setValue(0)
        window.progress.setFormat(f"{title} %p%")
        window.progress.show()
        window.cancel_button.show()
        job.progress.connect(lambda f: window.progress.setValue(int(f * 1000)))

        def finished(result: Any = None, error: str | None = None) -> None:
            window.progress.hide()
            window.cancel_button.hide()
            if error is None:
                on_done(result)
            elif error == "cancelled":
                window.statusBar().showMessage(f"{title}: cancelled.", 5000)
            else:
                window.statusBar().showMessage(f"{title} failed: {error.splitlines()[0]}", 8000)

        job.done.connect(lambda result: finished(result))
        job.failed.connect(lambda error: finished(error=error))
        job.start()
        return job

    def cancel_long_job(self) -> None:
        if self.long_job is not None and self.long_job.running:
            self.long_job.cancel()
