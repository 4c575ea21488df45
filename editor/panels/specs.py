"""Display hints the panels add to every tool's own (:attr:`ToolDescriptor.fields`).

Fields a tool has but its descriptor does not name still get a control, labelled
from the field name.
"""
from __future__ import annotations

from ..processing.activity import ACTIVITIES, AUTO
from ..processing.descriptor import ControlSpec, ToolDescriptor

#: The choice control of every ``activity`` field: the presets, or inferred from the track's speeds.
ACTIVITY_SPEC = ControlSpec(
    label="Activity", choices=tuple([(AUTO, "Guess from the speeds")] +
                                    [(n, a.label) for n, a in ACTIVITIES.items() if n != AUTO]),
    tip="How you travelled. It sets the fastest believable speed, how quickly you can speed up and what "
        "counts as standing still. Choose it when the guess from the track's speeds is wrong, for example "
        "a slow ride taken for a run.")


def panel_specs(tool: ToolDescriptor) -> dict[str, ControlSpec]:
    """The tool's field hints, with the shared activity control."""
    specs = dict(tool.fields)
    specs.setdefault("activity", ACTIVITY_SPEC)
    return specs
