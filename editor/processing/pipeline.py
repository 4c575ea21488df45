"""The full clean of a document: every track through despike, gap filling, stops, smoothing, simplification.

Each step is the same tool the editor offers, and its proposal is applied with
``proposal.edit().apply(doc)`` on a copy of the document: the code path of the
editor's "apply", so the batch command and the window cannot disagree.

Order of the steps, and why
---------------------------
1. **Remove spikes** first: a wild fix inflates everything after it, the noise
   and process-noise estimates, the gap filler's context, the stop detector's
   window means and the smoother's maximum-likelihood strength (which would
   loosen to follow the spike). This step also removes the catch-up after a
   signal-loss gap.
2. **Fill gaps** next: it needs clean context on both sides, and it refills the
   holes the spike step leaves where a catch-up run was removed. Removing a
   catch-up lengthens its gap; the longest gap filled is measured on the gap as
   recorded, i.e. ``max_gap_s`` is raised by the longest catch-up removed
   (``info["catch_up_extra_s"]`` of the spike step), so that a gap short enough
   to fill stays fillable.
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
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING

import numpy as np

from ..model.document import Document, Route, Track
from .activity import Activity
from .cleaning_base import activity_for, planar, replan
from .elevation import ElevationParams, terrain_elevation
from .gaps import GapParams, fill_gaps
from .smoothing import SmoothParams, smooth
from .spikes import SpikeParams, despike
from .stats import StatsParams, Totals, track_totals
from .stops import StopParams, collapse_stops

if TYPE_CHECKING:  # simplify (and shapely) is imported only when the step is asked for
    from .simplify import SimplifyParams

CAUTION = "Cleaned tracks are estimates, not surveyed data, and are not for navigation."


@dataclass(frozen=True)
class CleanParams:
    """What :func:`clean_document` does; a step set to ``None`` is skipped.

    Attributes
    ----------
    activity : ``"auto"`` (default: inferred per track from its own speeds) or a preset name;
        given to every step that has an ``activity``.
    despike, fill_gaps, collapse_stops : on by default with their documented defaults (gaps
        up to :attr:`GapParams.max_gap_s` = 120 s are filled).
    smooth : on by default with automatic (maximum-likelihood) strength.
    simplify : off by default.
    elevation : elevation from terrain (:mod:`.elevation`); runs only with ``terrain`` given.
    terrain : an :class:`editor.terrain.Terrain` (the user's elevation rasters), or ``None``.
    stats_params : thresholds of the reported totals.
    """

    activity: str = "auto"
    despike: SpikeParams | None = field(default_factory=SpikeParams)
    fill_gaps: GapParams | None = field(default_factory=GapParams)
    collapse_stops: StopParams | None = field(default_factory=StopParams)
    smooth: SmoothParams | None = field(default_factory=SmoothParams)
    simplify: SimplifyParams | None = None
    elevation: ElevationParams | None = field(default_factory=ElevationParams)
    terrain: object | None = field(default=None, compare=False, repr=False)
    stats_params: StatsParams = field(default_factory=StatsParams)


@dataclass(frozen=True)
class StepReport:
    """What one step did to one track (counts of rows; ``info`` keeps the tool's scalar numbers)."""

    tool: str
    label: str
    track: int
    removed: int
    inserted: int
    changed: int
    before: Totals
    after: Totals
    info: dict


@dataclass
class CleanReport:
    """Totals of the whole document before and after, and every step's report."""

    before: Totals
    after: Totals
    steps: list[StepReport] = field(default_factory=list)
    activities: list[str] = field(default_factory=list)
    caution: str = CAUTION


def copy_document(doc: Document) -> Document:
    """An independent copy: new point tables and segment lists; opaque payloads are immutable and shared."""
    tracks = [Track(points=t.points.copy(), segment_starts=t.segment_starts.copy(), name=t.name, extra=t.extra,
                    segment_extra=list(t.segment_extra)) for t in doc.tracks]
    routes = [Route(points=r.points.copy(), name=r.name, extra=r.extra) for r in doc.routes]
    return Document(tracks=tracks, routes=routes, waypoints=doc.waypoints.copy(), extra=doc.extra,
                    source_path=None, warnings=list(doc.warnings))


def _steps(params: CleanParams, activity: Activity):
    """``(function, params)`` in the documented order, the activity filled in."""
    def with_activity(p):
        # a step whose own activity is "auto" gets the track's; an explicit one is kept
        return replace(p, activity=activity) if getattr(p, "activity", None) == "auto" else p

    with_terrain = params.terrain is not None and params.elevation is not None
    smoothing = params.smooth
    if with_terrain and smoothing is not None:
        # the elevation step models the recorded elevation itself: smoothing it first would hide the
        # recording's noise from that step's estimates and smooth it twice
        smoothing = replace(smoothing, smooth_elevation=False)
    chosen = [(despike, params.despike), (fill_gaps, params.fill_gaps), (collapse_stops, params.collapse_stops),
              (smooth, smoothing)]
    if with_terrain:
        chosen.append((terrain_elevation, params.elevation))
    if params.simplify is not None:
        from .simplify import simplify

        chosen.append((simplify, params.simplify))
    return [(fn, with_activity(p)) for fn, p in chosen if p is not None]


#: Extra arguments of the steps that take them: the shared plane, known totals, no unused std.
_TAKES_PLANE = {despike, fill_gaps, collapse_stops, smooth, terrain_elevation}
_EXTRA = {smooth: {"want_std": False}, terrain_elevation: {"want_std": False}}


def _scalars(info: dict) -> dict:
    return {k: v for k, v in info.items()
            if isinstance(v, (bool, int, float, str, np.integer, np.floating)) and not isinstance(v, np.ndarray)}


def clean_document(doc: Document, params: CleanParams = CleanParams(),
                   progress: Callable[[float, str], None] | None = None) -> tuple[Document, CleanReport]:
    """Clean every track of ``doc``; return the cleaned copy and a report. ``doc`` is not changed.

    ``progress(fraction, step_label)`` is called before each step and once at the end (1.0).
    Waypoints, routes, metadata, extensions and every point the steps did not touch are kept.
    """
    out = copy_document(doc)
    report = CleanReport(before=Totals(), after=Totals())
    plans, planes = [], []
    for index, track in enumerate(out.tracks):
        plane = planar(track) if len(track.points) else None
        activity = activity_for(plane, params.activity) if plane is not None else None
        report.activities.append(activity.name if activity else "")
        plans.append(_steps(params, activity) if activity else [])
        planes.append(plane)
    total = max(1, sum(len(p) for p in plans))
    done = 0
    for index, steps in enumerate(plans):
        plane, before = planes[index], None
        for number, (fn, step_params) in enumerate(steps):
            if progress is not None:
                progress(done / total, f"track {index + 1}: {fn.__name__.replace('_', ' ')}")
            track = out.tracks[index]
            extra = dict(_EXTRA.get(fn, {}))
            if fn in _TAKES_PLANE:
                extra.update(plane=plane, before=before)
            if fn is terrain_elevation:
                extra["terrain"] = params.terrain
            proposal = fn(track, step_params, track_index=index, stats_params=params.stats_params, **extra)
            if not proposal.is_noop():
                proposal.edit().apply(out)
                if number + 1 < len(steps):
                    plane = replan(plane, out.tracks[index], proposal.source_rows, proposal.changed)
            before = proposal.after
            if fn is despike and proposal.info.get("catch_up_extra_s", 0.0) > 0:
                steps[number + 1:] = [(f, replace(p, max_gap_s=p.max_gap_s + proposal.info["catch_up_extra_s"]))
                                      if f is fill_gaps else (f, p) for f, p in steps[number + 1:]]
            report.steps.append(StepReport(
                tool=proposal.tool, label=proposal.label, track=index, removed=len(proposal.removed),
                inserted=len(proposal.inserted), changed=int(proposal.changed.sum()), before=proposal.before,
                after=proposal.after, info=_scalars(proposal.info)))
            done += 1
    # every step's proposal already carries the totals before and after it: reuse them per track
    for index, track in enumerate(out.tracks):
        steps = [s for s in report.steps if s.track == index]
        if steps:
            report.before, report.after = report.before + steps[0].before, report.after + steps[-1].after
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


__all__ = ["CAUTION", "CleanParams", "CleanReport", "StepReport", "clean_document", "copy_document", "summary_line"]
