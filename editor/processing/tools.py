"""The one place the editor (and the batch command) imports the cleaning tools from.

Every tool has the same shape::

    tool(track, params=Params(), *, rows=None, track_index=0, stats_params=StatsParams()) -> Proposal

``rows`` is the user's selection (sorted row indices; only those rows may
change, the whole track is context). :data:`TOOLS` maps each tool's name to
``(function, parameter class, human label)``; the label is also the undo
step's name.

Cleaned tracks are estimates, not surveyed data, and are not for navigation.
"""
from __future__ import annotations

from typing import Callable, NamedTuple

from .activity import ACTIVITIES, AUTO, Activity, resolve_activity
from .gaps import GapParams, fill_gaps
from .simplify import SimplifyParams, simplify
from .smoothing import SmoothParams, estimate_strength, smooth
from .spikes import SpikeParams, despike
from .stops import StopParams, collapse_stops


class ToolEntry(NamedTuple):
    """A registered tool: the function, its parameter dataclass and its label."""

    function: Callable
    params: type
    label: str


TOOLS: dict[str, ToolEntry] = {
    "smooth": ToolEntry(smooth, SmoothParams, "Smooth track"),
    "despike": ToolEntry(despike, SpikeParams, "Remove spikes"),
    "gaps": ToolEntry(fill_gaps, GapParams, "Fill gaps"),
    "stops": ToolEntry(collapse_stops, StopParams, "Collapse stops"),
    "simplify": ToolEntry(simplify, SimplifyParams, "Simplify track"),
}

__all__ = ["TOOLS", "ToolEntry", "ACTIVITIES", "AUTO", "Activity", "resolve_activity",
           "smooth", "estimate_strength", "SmoothParams", "despike", "SpikeParams",
           "fill_gaps", "GapParams", "collapse_stops", "StopParams", "simplify", "SimplifyParams"]
