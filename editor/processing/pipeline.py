"""The full clean of a document: every track through despike, gap filling, stops, smoothing, simplification.

Each step is the same tool the editor offers, and its proposal is applied with
``proposal.edit().apply(doc)`` on a copy of the document: the code path of the
editor's "apply", so the batch command and the window cannot disagree. The window's
Clean up runs the very same per-track functions (:func:`plan_track`,
:func:`run_track_steps`) through :mod:`editor.processing.clean_up`.

Order of the steps, and why
---------------------------
1. **Remove spikes** first: a wild fix inflates everything after it, the noise
   and process-noise estimates, the gap filler's context, the stop detector's
   window means and the smoother's maximum-likelihood strength (which would
   loosen to follow the spike). This step also removes the catch-up after a
   signal-loss gap.
2. **Fill gaps** next: it needs clean context on both sides, and it refills the
   holes the spike step leaves where a catch-up run was removed. Removing a
   catch-up lengthens its gap; the spike step marks the fix after it with the gap
   as recorded and the gap tool holds its limit against that (see
   :mod:`editor.model.payload`), so a gap short enough to fill stays fillable, in
   the window's tools applied one by one exactly as here.
3. **Collapse stops** before smoothing: the smoother then sees a traveller who
   really stands still instead of metres of jitter, so the strength it picks
   fits the moving parts, and the stops add no distance.
4. **Smooth**: the estimate of the actual path, on the cleaned measurements.
5. **Elevation from terrain**, only when terrain files are given: after smoothing, so the terrain is
   read along clean positions (the tool smooths positions again for its sampling; on smoothed
   positions that changes little). With terrain, the smoothing step leaves elevation alone: the
   elevation step models the recorded elevation itself.
6. **Simplify** last, and only on request: thinning is a presentation choice,
   and on raw data it would keep the noise (the farthest points from a chord are
   the wildest).

The order is each tool's ``batch_order`` (:mod:`editor.processing.builtin_tools`); steps
pass nothing to each other but the track (and the marks its points carry), so the window's
tools applied one by one in this order give the same result. One exception is declared in
the descriptors (``batch_overrides``): with terrain, smoothing leaves elevation to step 5.
Steps that need timestamps (spikes, gaps, stops) leave untimed segments alone.
Cleaned tracks are estimates, not surveyed data, and are not for navigation.

Work done once: each track is projected to the plane once
(:func:`editor.processing.cleaning_base.planar`, centred on the track as
read) and after each step only the rows it moved or inserted are projected
again (:func:`~editor.processing.cleaning_base.replan`); each step is given the
totals the previous step computed as its ``before``; the smoother skips its
posterior standard deviations, which the batch result does not keep.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Any, Callable, Mapping

import numpy as np

from .. import CAUTION
from ..model.document import Document, Track
from .activity import Activity
from .cleaning_base import activity_for, planar, replan
from .descriptor import ToolDescriptor
from .proposal import Proposal
from .stats import StatsParams, Totals, track_totals
from .tools import TOOLS, batch_tools



class CleanParams:
    """What :func:`clean_document` does: each batch tool's parameters by key; a step set to ``None`` is skipped.

    ``CleanParams(activity="walk", smooth=SmoothParams(...), collapse_stops=None)``: a tool not named
    runs with its parameter dataclass's defaults when its descriptor's ``batch_default`` is on
    (despike, fill_gaps, collapse_stops and smooth; gaps up to ``GapParams.max_gap_s`` are filled,
    smoothing picks its strength by maximum likelihood), and is skipped otherwise (simplify).

    Attributes
    ----------
    activity : ``"auto"`` (default: inferred per track from its own speeds) or a preset name;
        given to every step whose parameters have an ``activity`` of ``"auto"``.
    stats_params : thresholds of the reported totals.
    steps : the parameters of every batch tool, by key (``None``: skipped).
    """

    def __init__(self, activity: str = "auto", stats_params: StatsParams | None = None, **steps: Any) -> None:
        known = {d.key: d for d in batch_tools()}
        unknown = sorted(set(steps) - set(known))
        if unknown:
            raise TypeError(f"no batch tool called {', '.join(unknown)} (known: {', '.join(known)})")
        self.activity = activity
        self.stats_params = stats_params if stats_params is not None else StatsParams()
        self.steps: dict[str, Any] = {
            key: steps[key] if key in steps else (d.params() if d.batch_default else None) for key, d in known.items()}

    def __getattr__(self, key: str) -> Any:
        steps = self.__dict__.get("steps")
        if steps is not None and key in steps:
            return steps[key]
        raise AttributeError(key)

    def __repr__(self) -> str:
        return f"CleanParams(activity={self.activity!r}, {', '.join(f'{k}={v!r}' for k, v in self.steps.items())})"


@dataclass(frozen=True)
class StepReport:
    """What one step did to one track (counts of rows; ``info`` keeps the tool's scalar numbers;
    ``notes`` what the tool left alone and why, for a rider; ``params`` the parameters it ran with)."""

    tool: str
    label: str
    track: int
    removed: int
    inserted: int
    changed: int
    before: Totals
    after: Totals
    info: dict
    notes: tuple[str, ...] = ()
    params: object = None


@dataclass
class CleanReport:
    """Totals of the whole document before and after, and every step's report."""

    before: Totals
    after: Totals
    steps: list[StepReport] = field(default_factory=list)
    activities: list[str] = field(default_factory=list)
    caution: str = CAUTION


def _steps(params: CleanParams, activity: Activity, **available: Any) -> list[tuple[ToolDescriptor, Any]]:
    """``(descriptor, params)`` in the documented order, the activity filled in; ``available``: the
    optional inputs the caller gives (``terrain``)."""
    def with_activity(p: Any) -> Any:
        # a step whose own activity is "auto" gets the track's; an explicit one is kept
        return replace(p, activity=activity) if getattr(p, "activity", None) == "auto" else p

    chosen = [(TOOLS[key], p) for key, p in params.steps.items() if p is not None]
    # a tool that cannot run without an input it was not given (terrain) is left out, and a tool that
    # runs may take part of another's job over (the terrain step models elevation: smoothing leaves it)
    chosen = [(tool, p) for tool, p in chosen if tool.can_run_with(**available)]
    overrides: dict[str, dict[str, Any]] = {}
    for tool, _p in chosen:
        for key, changes in tool.batch_overrides.items():
            overrides.setdefault(key, {}).update(changes)
    return [(tool, with_activity(replace(p, **overrides[tool.key]) if tool.key in overrides else p))
            for tool, p in chosen]


def _scalars(info: Mapping[str, Any]) -> dict:
    return {k: v for k, v in info.items()
            if isinstance(v, (bool, int, float, str, np.integer, np.floating)) and not isinstance(v, np.ndarray)}


@dataclass
class TrackPlan:
    """What the clean does to one track: the activity it runs with (``""`` for an empty track), the
    track in metres (``None`` when empty) and the steps in order with their parameters."""

    activity: str
    plane: Any
    steps: list[tuple[ToolDescriptor, Any]]


def plan_track(track: Track, params: CleanParams, *, terrain: Any = None) -> TrackPlan:
    """The steps :func:`clean_document` runs on ``track`` with ``params`` (and the optional ``terrain``).

    The window's Clean up plans with this too, so both run the same steps with the same settings.
    """
    plane = planar(track) if len(track.points) else None
    activity = activity_for(plane, params.activity) if plane is not None else None
    return TrackPlan(activity=activity.name if activity else "", plane=plane,
                     steps=_steps(params, activity, terrain=terrain) if activity else [])


def run_track_steps(doc: Document, index: int, plan: TrackPlan, stats_params: StatsParams = StatsParams(), *,
                    inserted_marker: Any = None, terrain: Any = None,
                    step_starts: Callable[[ToolDescriptor], None] | None = None) -> list[Proposal]:
    """Run ``plan`` on track ``index`` of ``doc``, applying each step's proposal to ``doc`` in turn
    (``proposal.edit().apply``: the window's Apply). Returns every step's proposal in order, no-ops too;
    each is relative to the track the step before it left. ``step_starts(tool)`` is called before each step.
    """
    plane, before = plan.plane, None
    proposals = []
    for number, (tool, step_params) in enumerate(plan.steps):
        if step_starts is not None:
            step_starts(tool)
        track = doc.tracks[index]
        # the shared plane and the known totals; no posterior standard deviations (the batch keeps none)
        optional = tool.optional_inputs(plane=plane, before=before, want_std=False,
                                        inserted_marker=inserted_marker, terrain=terrain)
        proposal = tool.function(track, step_params, track_index=index, stats_params=stats_params, **optional)
        if not proposal.is_noop():
            proposal.edit().apply(doc)
            if plane is not None and number + 1 < len(plan.steps):
                plane = replan(plane, doc.tracks[index], proposal.source_rows, proposal.changed)
        before = proposal.after
        proposals.append(proposal)
    return proposals


def clean_document(doc: Document, params: CleanParams | None = None,
                   progress: Callable[[float, str], None] | None = None, *,
                   inserted_marker: Any = None, terrain: Any = None) -> tuple[Document, CleanReport]:
    """Clean every track of ``doc``; return the cleaned copy and a report. ``doc`` is not changed.

    ``inserted_marker``: the payload of points a step inserts (the caller's file format makes it,
    e.g. :data:`editor.model.payload.GAP_FILL_MARKER`); ``None`` leaves them unmarked.
    ``terrain``: the user's elevation rasters (:class:`editor.terrain.Terrain`); the elevation step
    runs only with it.

    ``progress(fraction, step_label)`` is called before each step and once at the end (1.0).
    Waypoints, routes, metadata, extensions and every point the steps did not touch are kept.
    """
    params = params if params is not None else CleanParams()
    out = doc.copy()
    report = CleanReport(before=Totals(), after=Totals())
    plans = [plan_track(track, params, terrain=terrain) for track in out.tracks]
    report.activities.extend(plan.activity for plan in plans)
    total = max(1, sum(len(plan.steps) for plan in plans))
    done = 0
    for index, plan in enumerate(plans):
        def step_starts(tool: ToolDescriptor, index: int = index) -> None:
            nonlocal done
            if progress is not None:
                progress(done / total, f"track {index + 1}: {tool.label.lower()}")
            done += 1

        proposals = run_track_steps(out, index, plan, params.stats_params, inserted_marker=inserted_marker,
                                    terrain=terrain, step_starts=step_starts)
        for (_tool, step_params), proposal in zip(plan.steps, proposals):
            report.steps.append(StepReport(
                tool=proposal.tool, label=proposal.label, track=index, removed=len(proposal.removed),
                inserted=len(proposal.inserted), changed=int(proposal.changed.sum()), before=proposal.before,
                after=proposal.after, info=_scalars(proposal.info), notes=tuple(proposal.info.get("notes", ())),
                params=step_params))
    # every step's proposal already carries the totals before and after it: reuse them per track
    for index, track in enumerate(out.tracks):
        done_steps = [s for s in report.steps if s.track == index]
        if done_steps:
            report.before = report.before + done_steps[0].before
            report.after = report.after + done_steps[-1].after
        else:
            totals = track_totals(track, params.stats_params)
            report.before, report.after = report.before + totals, report.after + totals
    if progress is not None:
        progress(1.0, "done")
    return out, report


def summary_line(report: CleanReport) -> str:
    """One line: distance, ascent and points before -> after."""
    b, a = report.before, report.after

    def km(v: float) -> str:
        return f"{v / 1000:.2f}" if math.isfinite(v) else "n/a"

    return (f"distance {km(b.distance_m)} -> {km(a.distance_m)} km, "
            f"ascent {b.ascent_m:.0f} -> {a.ascent_m:.0f} m, points {b.points} -> {a.points}")


__all__ = ["CleanParams", "CleanReport", "StepReport", "TrackPlan", "clean_document", "plan_track", "run_track_steps",
           "summary_line"]
