"""What a cleaning tool is, in one value: :class:`ToolDescriptor`.

A descriptor names the tool once (its ``key``) and carries everything the rest
of the program needs to offer it: the function and its parameter dataclass,
the words shown to the user, how each field is shown, where it runs in the
full batch clean, which optional inputs it accepts, and its ``clean``
command-line options. The registry (:mod:`editor.processing.tools`), the tool
panels, the tool dock, the batch pipeline and ``trackwright clean`` all read
the descriptor and nothing else, so adding a tool is writing one descriptor.

Qt-free: the field hints (:class:`ControlSpec`) are plain data that the panels
turn into widgets.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Callable, Mapping

#: The optional keyword inputs a tool may accept, and what each gives it:
#: ``plane`` the track already projected to metres (``cleaning_base.planar``), ``before`` the
#: track's totals before the tool, ``want_std`` whether to compute per-point uncertainty
#: (False, True, or ``"vertical"`` for the elevation band only), ``inserted_marker`` the opaque
#: payload to give points the tool inserts (made by :mod:`editor.model.payload`; ``None``: unmarked),
#: ``terrain`` the user's elevation rasters (an :class:`editor.terrain.Terrain`, or ``None``).
OPTIONAL_INPUTS = frozenset({"plane", "before", "want_std", "inserted_marker", "terrain", "memo"})


@dataclass(frozen=True)
class ControlSpec:
    """How a panel shows one parameter field. ``None`` members fall back to the field's own data.

    ``label`` and ``tip`` are the rider's words: what the setting does, when to change it and its
    unit (the panel adds a line naming the unit it shows, metric or imperial). ``method`` names a
    published method the setting belongs to; the panel shows it as a secondary "Method:" line,
    never as the label. ``scale`` multiplies the stored value for display (100 shows a fraction as
    a percentage); lengths, areas and speeds are converted to the chosen units by the panel.
    """

    label: str | None = None
    tip: str = ""
    method: str = ""
    scale: float = 1.0
    minimum: float | None = None
    maximum: float | None = None
    step: float | None = None
    decimals: int | None = None
    suffix: str | None = None
    choices: tuple | None = None
    auto_text: str = "auto"
    slider: bool = False
    hidden: bool = False
    #: rarely needed: shown under the panel's collapsed "More settings"
    more: bool = False


class _Off:
    """The value an option's ``parse`` returns to switch its tool off (``--smooth off``)."""

    def __repr__(self) -> str:
        return "OFF"


OFF: Any = _Off()


@dataclass(frozen=True)
class CliOption:
    """One ``trackwright clean`` option of a tool.

    Attributes
    ----------
    flag : the option, e.g. ``"--max-gap"``.
    help : its help text; ``{default}`` is replaced by the parameter dataclass's default of
        ``default_field`` (so the help and the behaviour never disagree).
    parse : text -> the parameter fields to set (a dict), or :data:`OFF`; raise ``ValueError``
        with a message for bad text. ``None`` makes a flag without a value that sets ``const``.
    const : the fields a value-less flag sets.
    metavar : the value's name in the help.
    default_field : the field whose default the help quotes.
    turns_on : giving the option runs the tool even when the batch leaves it off by default.
    """

    flag: str
    help: str
    parse: Callable[[str], Any] | None = None
    const: Mapping[str, Any] | None = None
    metavar: str | None = None
    default_field: str | None = None
    turns_on: bool = False


@dataclass(frozen=True)
class ToolDescriptor:
    """Everything about one cleaning tool.

    Attributes
    ----------
    key : the tool's one name: registry key, ``clean`` switch (``--fill-gaps``), the batch
        parameter (``CleanParams(fill_gaps=...)``), a proposal's ``tool``.
    label : the action's name, e.g. "Fill gaps" (also the name of the undo step).
    title : the tab's text. summary : one or two sentences for a rider on what it does.
    method : the published method(s) it uses, shown as a secondary line (never in the summary).
    function : ``f(track, params, *, rows=None, track_index=0, stats_params=..., **optional) -> Proposal``.
    params : the parameter dataclass (every field has a documented default).
    fields : per-field display hints; fields not named still get a control.
    batch_order : place in the full clean (lower runs first); ``None``: the editor only.
    batch_default : whether the full clean runs it unless told otherwise.
    accepts : which of :data:`OPTIONAL_INPUTS` the function takes. requires : those of them
        without which it cannot run (the full clean skips it when one is missing).
    batch_overrides : when this tool runs in the full clean, the fields it changes in other tools'
        parameters, by key (the terrain step takes elevation over from smoothing).
    cli_switch : whether ``clean`` gets ``--key`` / ``--no-key`` (off for tools whose options
        already say on/off). cli_aliases : other spellings of the switch.
    cli_options : further ``clean`` options. panel : ``"standard"``, ``"strength"`` for the
        panel with an automatic-strength button, or ``"terrain"`` for the one with terrain choosers.
    """

    key: str
    label: str
    title: str
    summary: str
    function: Callable[..., Any]
    params: type
    fields: Mapping[str, ControlSpec] = field(default_factory=dict)
    batch_order: int | None = None
    batch_default: bool = True
    accepts: frozenset[str] = frozenset()
    requires: frozenset[str] = frozenset()
    batch_overrides: Mapping[str, Mapping[str, Any]] = field(default_factory=dict)
    cli_switch: bool = True
    cli_aliases: tuple[str, ...] = ()
    cli_options: tuple[CliOption, ...] = ()
    panel: str = "standard"
    method: str = ""

    def __post_init__(self) -> None:
        unknown = set(self.accepts) - OPTIONAL_INPUTS
        if unknown:
            raise ValueError(f"tool {self.key!r}: unknown optional inputs {sorted(unknown)}")
        if not self.requires <= self.accepts:
            raise ValueError(f"tool {self.key!r}: requires inputs it does not accept")
        if not self.key.isidentifier():
            raise ValueError(f"tool key {self.key!r} must be a Python identifier (it is a batch parameter)")

    @property
    def flag(self) -> str:
        """The ``clean`` switch: ``fill_gaps`` -> ``--fill-gaps``."""
        return "--" + self.key.replace("_", "-")

    def can_run_with(self, **available: Any) -> bool:
        """Whether every input the tool requires is among ``available`` and not ``None``."""
        return all(available.get(name) is not None for name in self.requires)

    def optional_inputs(self, **available: Any) -> dict[str, Any]:
        """Those of ``available`` that the tool accepts."""
        return {name: value for name, value in available.items() if name in self.accepts}


__all__ = ["ControlSpec", "CliOption", "ToolDescriptor", "OFF", "OPTIONAL_INPUTS"]
