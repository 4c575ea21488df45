"""The registry of cleaning tools: the one place the editor, the batch pipeline and ``clean`` find them.

Every tool has the same shape::

    tool(track, params=Params(), *, rows=None, track_index=0, stats_params=StatsParams(), **optional) -> Proposal

``rows`` is the user's selection (sorted row indices; only those rows may
change, the whole track is context); ``optional`` are the inputs its
descriptor ``accepts``. :data:`TOOLS` maps each tool's key to its
:class:`~editor.processing.descriptor.ToolDescriptor`. A tool module that
fails to import fails here, loudly: there is no fallback list.

Cleaned tracks are estimates, not surveyed data, and are not for navigation.
"""
from __future__ import annotations

from .builtin_tools import BUILTIN
from .descriptor import ToolDescriptor

#: Every registered tool by key, in the editor's tab order.
TOOLS: dict[str, ToolDescriptor] = {}


def register(descriptor: ToolDescriptor) -> ToolDescriptor:
    """Add a tool; its key must be new. Returns the descriptor."""
    if descriptor.key in TOOLS:
        raise ValueError(f"a tool with the key {descriptor.key!r} is already registered")
    TOOLS[descriptor.key] = descriptor
    return descriptor


def unregister(key: str) -> None:
    """Remove a tool (tests that register one of their own)."""
    del TOOLS[key]


def batch_tools() -> list[ToolDescriptor]:
    """The tools of the full clean, in the order they run."""
    return sorted((d for d in TOOLS.values() if d.batch_order is not None), key=lambda d: d.batch_order or 0)


for _descriptor in BUILTIN:
    register(_descriptor)

__all__ = ["TOOLS", "ToolDescriptor", "register", "unregister", "batch_tools"]
