"""Clean up: the batch clean's steps on one track, offered as one proposal the window can preview and apply.

The window's "Clean up" runs exactly what ``trackwright clean`` runs on a track
(:func:`editor.processing.pipeline.plan_track` and
:func:`~editor.processing.pipeline.run_track_steps`, with the same
:class:`~editor.processing.pipeline.CleanParams`), then spells the whole
sequence as one :class:`~editor.processing.proposal.Proposal` relative to the
track as it was, so that the views preview it like any single tool and Apply
makes one undo step.

Each step's proposal says, per row of its result, which row of its input the
row came from (``source_rows``, -1 for an added point). Following those maps
from the last step back to the first (:func:`chain_source_rows`) gives, per row
of the cleaned track, its row in the original; that is what the combined
proposal's undo step (:func:`editor.model.transition.transition_edit`) and the
views' highlight of changed stretches need.

Cleaned tracks are estimates, not surveyed data, and are not for navigation.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Iterable

import numpy as np

from ..model.document import Document, Track
from .descriptor import ToolDescriptor
from .pipeline import CleanParams, plan_track, run_track_steps
from .proposal import Proposal, make_proposal
from .tools import batch_tools

#: The combined proposal's tool name and the name of its undo step.
CLEAN_UP_KEY = "clean_up"
CLEAN_UP_LABEL = "Clean up"


def offered_steps(terrain: Any = None) -> list[ToolDescriptor]:
    """The steps Clean up offers, in the batch clean's order: those the batch runs by default
    (``batch_default``) and that can run with what is available (the terrain step only with terrain)."""
    return [tool for tool in batch_tools() if tool.batch_default and tool.can_run_with(terrain=terrain)]


def clean_up_params(switched_off: Iterable[str] = (), base: CleanParams | None = None) -> CleanParams:
    """The batch clean's parameters (``base``, by default ``CleanParams()``: what ``trackwright clean``
    uses without options) with the steps in ``switched_off`` left out."""
    base = base if base is not None else CleanParams()
    steps = dict(base.steps)
    for key in switched_off:
        if key not in steps:
            raise KeyError(f"no batch step called {key!r}")
        steps[key] = None
    return CleanParams(activity=base.activity, stats_params=base.stats_params, **steps)


def chain_source_rows(maps: Iterable[np.ndarray], n_original: int) -> np.ndarray:
    """Compose ``source_rows`` maps of steps applied one after the other.

    ``maps[k][i]`` is the row of step ``k``'s input that row ``i`` of its result came from (-1: the
    step added it). Returns, per row of the last result, its row among the ``n_original`` rows of
    the first input (-1: added by some step, or derived from an added row).
    """
    rows = np.arange(n_original, dtype=np.int64)
    for step in maps:
        step = np.asarray(step, dtype=np.int64)
        if np.any(step >= len(rows)):
            raise ValueError(f"a step refers to row {int(step.max())} of an input with {len(rows)} rows")
        out = np.full(len(step), -1, dtype=np.int64)
        kept = step >= 0
        out[kept] = rows[step[kept]]
        rows = out
    return rows


@dataclass
class StepOutcome:
    """One offered step: whether it ran, and what it proposed (relative to the step before it).

    ``proposal`` is ``None`` for a step switched off; ``params`` the parameters it ran with.
    """

    tool: ToolDescriptor
    on: bool
    proposal: Proposal | None = None
    params: Any = None


@dataclass
class CleanUpResult:
    """The combined proposal and every offered step's outcome, in order; ``activity`` the activity
    the steps ran with (``"ride"``, ...: from the track's speeds unless given)."""

    proposal: Proposal
    steps: list[StepOutcome] = field(default_factory=list)
    activity: str = ""


def combine(original: Track, track_index: int, result: Track, proposals: list[Proposal],
            stats_params: Any = None) -> Proposal:
    """One proposal that turns ``original`` into ``result``, which ``proposals`` (each relative to the
    track the one before it left; no-ops included, they are skipped) produced one after the other.

    Its ``edit()`` is one reversible step; its ``before`` totals are the first step's, ``after`` the
    totals of ``result``.
    """
    applied = [p for p in proposals if not p.is_noop()]
    source_rows = chain_source_rows((p.source_rows for p in applied), len(original.points))
    kwargs: dict[str, Any] = {} if stats_params is None else {"stats_params": stats_params}
    before = proposals[0].before if proposals else None
    combined = make_proposal(CLEAN_UP_KEY, CLEAN_UP_LABEL, track_index, original, result.points,
                             result.segment_starts, source_rows, before=before,
                             segment_extra=list(result.segment_extra), **kwargs)
    inserted_reasons = combined.inserted
    if len(inserted_reasons):
        combined.reasons["inserted"] = inserted_reasons
    return combined


def clean_up_track(track: Track, track_index: int = 0, params: CleanParams | None = None, *,
                   inserted_marker: Any = None, terrain: Any = None) -> CleanUpResult:
    """Run the batch clean's steps on ``track`` (which is not changed) and combine them.

    ``params``: as for :func:`editor.processing.pipeline.clean_document` (the batch's defaults when
    ``None``; a step set to ``None`` is switched off). ``track_index``: the track's place in its
    document, which the combined proposal's edit applies to. The steps themselves run on a private
    one-track document, exactly as :func:`~editor.processing.pipeline.clean_document` runs them.
    """
    params = params if params is not None else CleanParams()
    scratch = Document(tracks=[track.snapshot()])
    plan = plan_track(scratch.tracks[0], params, terrain=terrain)
    proposals = run_track_steps(scratch, 0, plan, params.stats_params, inserted_marker=inserted_marker,
                                terrain=terrain)
    ran = {tool.key: (step_params, proposal) for (tool, step_params), proposal in zip(plan.steps, proposals)}
    outcomes = []
    for tool in offered_steps(terrain):
        step_params, proposal = ran.get(tool.key, (None, None))
        outcomes.append(StepOutcome(tool=tool, on=tool.key in ran, proposal=proposal, params=step_params))
    combined = combine(track, track_index, scratch.tracks[0], proposals, params.stats_params)
    combined.info = {"activity": plan.activity, "steps": [o.tool.key for o in outcomes if o.on]}
    return CleanUpResult(proposal=combined, steps=outcomes, activity=plan.activity)


__all__ = ["CLEAN_UP_KEY", "CLEAN_UP_LABEL", "CleanUpResult", "StepOutcome", "chain_source_rows", "clean_up_params",
           "clean_up_track", "combine", "offered_steps"]
