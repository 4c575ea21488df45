"""The window's editing side: hand edits as undo commands, tool previews, apply and discard."""
from __future__ import annotations

import inspect
from typing import Any

import numpy as np
from PySide6 import QtWidgets

from ..commands import EditCommand
from ..commands import hand_edits
from ..geo.projection import LocalProjection
from ..model.document import Track
from ..processing.cleaning_base import planar
from ..processing.stats import track_totals
from .workers import LongJob, PreviewRunner, snapshot_track


class EditOps:
    """Mixin for :class:`~editor.app.window.MainWindow`; needs ``doc``, ``state``, ``undo_stack``."""

    def _init_editing(self) -> None:
        self.preview_runner = PreviewRunner(self.pool, self)
        self.preview_runner.result_ready.connect(self._preview_ready)
        self.preview_runner.failed.connect(self._preview_failed)
        self.preview_runner.started.connect(lambda: self.tool_dock.set_status("Computing the proposal…"))
        self.long_job: LongJob | None = None
        self.revision = 0
        self.pending_selection = None
        self._snapshot: tuple[int, int, Track] | None = None
        self._preview_cache: dict = {}
        self.cancel_button.clicked.connect(self.cancel_long_job)

    # --- hand edits -------------------------------------------------------------------------------
    def push_edit(self, edit, label: str) -> bool:
        """Apply ``edit`` as one undo step named ``label`` (refused while the document is read-only)."""
        if self.read_only:
            self.statusBar().showMessage(
                "These points were salvaged from a damaged file and are read-only: "
                "save a cleaned copy first (Ctrl+S), then edit the copy.", 8000)
            self._rebuild_timer.start()  # a drag already drew the point moved: show the model again
            return False
        self.undo_stack.push(EditCommand(self.doc, edit, label))
        return True

    def _hand_edit(self, build, label: str) -> bool:
        track = self.track()
        if track is None:
            return False
        try:
            edit = build(track)
        except hand_edits.HandEditError as err:
            self.statusBar().showMessage(str(err), 6000)
            return False
        return self.push_edit(edit, label)

    def move_point(self, row: int, x_m: float, y_m: float) -> None:
        self._hand_edit(lambda t: hand_edits.move_point(t, self.state.track, row, x_m, y_m, self.projection),
                        f"Move point {row + 1:,}")

    def set_point_elevation(self, row: int, ele_m: float) -> None:
        self._hand_edit(lambda t: hand_edits.set_elevation(self.state.track, row, ele_m),
                        f"Change elevation of point {row + 1:,}")

    def delete_selection(self) -> None:
        n = len(self.state.selection)
        track = self.track()
        if track is not None and n and n >= len(track.points):
            buttons = QtWidgets.QMessageBox.StandardButton
            answer = QtWidgets.QMessageBox.question(
                self, "Delete every point?",
                f"The selection holds all {n:,} points of this track. Deleting them leaves an empty track.\n\n"
                "Delete every point? (Undo brings them back.)", buttons.Yes | buttons.Cancel, buttons.Cancel)
            if answer != buttons.Yes:
                return
        self._hand_edit(lambda t: hand_edits.delete_points(t, self.state.track, self.state.selection),
                        f"Delete {n:,} point{'s' if n != 1 else ''}")

    def trim_before(self) -> None:
        self._hand_edit(lambda t: hand_edits.trim_before(t, self.state.track, self.state.selection),
                        "Trim before selection")

    def trim_after(self) -> None:
        self._hand_edit(lambda t: hand_edits.trim_after(t, self.state.track, self.state.selection),
                        "Trim after selection")

    def split_segment(self) -> None:
        self._hand_edit(lambda t: hand_edits.split_segment(t, self.state.track, self.state.selection),
                        "Split segment")

    def merge_segments(self) -> None:
        self._hand_edit(lambda t: hand_edits.merge_segments(t, self.state.track, self.state.selection),
                        "Join segments")

    def sort_by_time(self) -> None:
        self._hand_edit(lambda t: hand_edits.sort_by_time(t, self.state.track), "Sort points by time")

    def offer_time_sort(self) -> None:
        """After opening: if the shown track has points out of time order, offer to sort them."""
        track = self.track()
        count = hand_edits.backward_time_count(track) if track is not None else 0
        if not count:
            return
        answer = QtWidgets.QMessageBox.question(
            self, "Times out of order",
            f"{count:,} point{'s' if count != 1 else ''} of this track "
            f"{'have times' if count != 1 else 'has a time'} earlier than the point before.\n\n"
            "Sort each segment's points by time? (One undo step; Edit ▸ Sort points by time does the same.)")
        if answer == QtWidgets.QMessageBox.StandardButton.Yes:
            self.sort_by_time()

    def insert_point(self) -> None:
        sel = self.state.selection
        after = int(sel[-1]) if len(sel) else None
        if after is not None:
            self.pending_selection = [after + 1]  # the new point, once the views are rebuilt
        if not self._hand_edit(lambda t: hand_edits.insert_point_after(t, self.state.track, sel, self.projection),
                               "Insert point"):
            self.pending_selection = None

    # --- selection by keyboard --------------------------------------------------------------------
    def select_all(self) -> None:
        track = self.track()
        if track is not None:
            self.state.select_range(0, len(track.points))

    def clear_selection(self) -> None:
        self.state.set_selection([])

    def step_selection(self, delta: int, extend: bool = False) -> None:
        """Move the selection by ``delta`` points, or grow it at that end when ``extend``."""
        track = self.track()
        if track is None or not len(track.points):
            return
        sel = self.state.selection
        n = len(track.points)
        if not len(sel):
            row = 0 if delta > 0 else n - 1
            self.state.set_selection([row])
        elif extend:
            lo, hi = int(sel[0]), int(sel[-1])
            lo, hi = (lo, min(hi + delta, n - 1)) if delta > 0 else (max(lo + delta, 0), hi)
            self.state.select_range(lo, hi + 1)
        else:
            row = int(np.clip((sel[-1] if delta > 0 else sel[0]) + delta, 0, n - 1))
            self.state.set_selection([row])
        self.state.set_hover(int(self.state.selection[-1 if delta > 0 else 0]))

    # --- tool previews ----------------------------------------------------------------------------
    def snapshot(self) -> Track | None:
        """An immutable copy of the shown track, taken once per document revision."""
        track = self.track()
        if track is None:
            return None
        key = (self.revision, self.state.track)
        if self._snapshot is None or self._snapshot[:2] != key:
            self._snapshot = (*key, snapshot_track(track))
        return self._snapshot[2]

    def request_preview(self, function, params: Any, selection_only: bool, immediately: bool = False) -> None:
        """Compute ``function(snapshot, params, rows=..., track_index=...)`` in the background."""
        snapshot = self.snapshot()
        if snapshot is None or not len(snapshot.points):
            self.tool_dock.set_status("The shown track has no points to work on (the file may hold only "
                                      "waypoints or routes).")
            return
        rows = self.state.selection.copy() if selection_only and len(self.state.selection) else None
        track_index = self.state.track

        lat0, lon0 = self.projection.lat0, self.projection.lon0
        # What previews may reuse (estimated strengths, totals, the track in metres) belongs to one track state.
        state_key = (self.revision, self.state.track)
        if self._preview_cache.get("state") != state_key:
            self._preview_cache = {"state": state_key}
        strengths = self._cached_strengths(function, params, rows)

        extra = self._tool_extras(function)
        cache = self._preview_cache

        def work():
            kwargs = dict(extra)
            if "before" in kwargs:  # the shown track's totals, once per track state
                if cache.get("before") is None:
                    cache["before"] = track_totals(snapshot)
                kwargs["before"] = cache["before"]
            if "plane" in kwargs:  # the shown track in metres, once per track state
                if cache.get("plane") is None:
                    cache["plane"] = planar(snapshot)
                kwargs["plane"] = cache["plane"]
            proposal = function(snapshot, strengths(snapshot, params), rows=rows, track_index=track_index,
                                **kwargs)
            # Project the proposal for the map here, off the UI thread (pyproj objects stay
            # in the thread that made them).
            xy = LocalProjection(lat0, lon0).to_xy(proposal.points.lat, proposal.points.lon)
            return proposal, xy

        self.preview_runner.request(work, immediately=immediately)

    @staticmethod
    def _tool_extras(function) -> dict:
        """Keyword arguments that save a tool work in previews, for the tools that take them."""
        accepted = inspect.signature(function).parameters
        extra = {name: None for name in ("before", "plane") if name in accepted}
        if "want_std" in accepted:
            extra["want_std"] = "vertical"  # only the profile draws an uncertainty band
        return extra

    def _cached_strengths(self, function, params: Any, rows):
        """For smoothing with an automatic strength: estimate it once per track state, not per preview.

        Moving one strength control re-runs the tool; the other axis' maximum-likelihood
        estimate does not change with it, so it is kept (per track state, selection and noise
        settings) and handed to the tool as a fixed strength. Returns a function
        ``(snapshot, params) -> params`` for the worker.
        """
        from dataclasses import replace

        from ..processing.smoothing import SmoothParams, estimate_strength

        if not isinstance(params, SmoothParams) or params.estimate_noise:
            return lambda _snapshot, p: p
        base = (None if rows is None else rows.tobytes(),
                params.horizontal_sigma_m, params.vertical_sigma_m)
        cache = self._preview_cache
        wanted = {axis: getattr(params, f"{axis}_strength") is None and getattr(params, f"smooth_{flag}")
                  for axis, flag in (("horizontal", "horizontal"), ("vertical", "elevation"))}

        def fill(snapshot, p):
            missing = [axis for axis, auto in wanted.items() if auto and (base, axis) not in cache]
            if missing:
                # Estimate only the axes not known yet; the others get a placeholder fixed strength.
                ask = replace(p, **{f"{axis}_strength": (None if axis in missing else 50.0) for axis in wanted})
                estimate = estimate_strength(snapshot, rows, params=ask)
                for axis in missing:
                    value = getattr(estimate, f"{axis}_strength")
                    if np.isfinite(value):
                        cache[(base, axis)] = float(value)
            known = {f"{axis}_strength": cache[(base, axis)] for axis, auto in wanted.items()
                     if auto and (base, axis) in cache}
            return replace(p, **known) if known else p

        return fill

    def _preview_ready(self, result) -> None:
        proposal, xy = result
        if proposal is None or proposal.track != self.state.track:
            return
        self.map_view.prepare_proposal_xy(proposal, xy)
        self.state.set_preview(proposal)

    def _preview_failed(self, message: str) -> None:
        first = message.splitlines()[0]
        self.tool_dock.set_status(f"The tool could not run: {first}")
        self.statusBar().showMessage(f"Tool failed: {first}", 8000)

    def apply_preview(self) -> bool:
        """Commit the previewed proposal as one undo step."""
        proposal = self.state.preview
        if proposal is None:
            self.statusBar().showMessage("There is no proposal to apply yet.", 5000)
            return False
        self.preview_runner.cancel()
        self.state.set_preview(None)
        if proposal.is_noop():
            self.statusBar().showMessage("The proposal changes nothing.", 5000)
            return False
        if not self.push_edit(proposal.edit(), proposal.label):
            return False
        self.recovery.record_now()
        self.statusBar().showMessage(f"Applied: {proposal.label}", 5000)
        return True

    def discard_preview(self) -> None:
        if hasattr(self, "preview_runner"):
            self.preview_runner.cancel()
        self.state.set_preview(None)

    # --- long jobs --------------------------------------------------------------------------------
    def start_long_job(self, title: str, work, on_done) -> LongJob | None:
        """Run ``work(progress, cancelled)`` with a progress bar and a Cancel button."""
        if self.long_job is not None and self.long_job.running:
            self.statusBar().showMessage("Another computation is still running.", 5000)
            return None
        job = LongJob(self.long_pool, work, self)
        self.long_job = job
        self.progress.setValue(0)
        self.progress.setFormat(f"{title} %p%")
        self.progress.show()
        self.cancel_button.show()
        job.progress.connect(lambda f: self.progress.setValue(int(f * 1000)))

        def finished(result=None, error: str | None = None):
            self.progress.hide()
            self.cancel_button.hide()
            if error is None:
                on_done(result)
            elif error == "cancelled":
                self.statusBar().showMessage(f"{title}: cancelled.", 5000)
            else:
                self.statusBar().showMessage(f"{title} failed: {error.splitlines()[0]}", 8000)

        job.done.connect(lambda result: finished(result))
        job.failed.connect(lambda error: finished(error=error))
        job.start()
        return job

    def cancel_long_job(self) -> None:
        if self.long_job is not None and self.long_job.running:
            self.long_job.cancel()
