"""The cleaning tools the program ships with: one :class:`ToolDescriptor` each.

Order of the full clean (``batch_order``), and why, is explained in
:mod:`editor.processing.pipeline`. A new tool gets its descriptor here (or is
registered from elsewhere with :func:`editor.processing.tools.register`).
"""

from __future__ import annotations

from typing import Any

from .descriptor import OFF, CliOption, ControlSpec, ToolDescriptor
from .elevation import MODES, ElevationParams, terrain_elevation
from .gaps import GapParams, fill_gaps
from .simplify import SimplifyParams, simplify
from .smoothing import STRENGTH_MAX, STRENGTH_MIN, SmoothParams, smooth
from .spikes import SpikeParams, despike
from .stops import StopParams, collapse_stops

#: The strength sliders; the scale is defined once, in editor.processing.smoothing (0 keeps the recording).
STRENGTH: dict[str, Any] = dict(minimum=STRENGTH_MIN, maximum=STRENGTH_MAX, step=1, decimals=0, suffix="",
                                slider=True, auto_text="auto")
#: The measurement scatter fields of the tools that estimate it from the track unless told.
SCATTER = {
    "horizontal_sigma_m": ControlSpec(label="Position scatter σ", maximum=100, step=0.5, decimals=1,
                                      auto_text="estimate", more=True),
    "vertical_sigma_m": ControlSpec(label="Elevation scatter σ", maximum=100, step=0.5, decimals=1,
                                    auto_text="estimate", more=True),
}
#: Every tool that works in metres and reports totals can reuse the shared plane and the totals before it.
PLANE_AND_TOTALS = frozenset({"plane", "before"})


def positive(text: str) -> float:
    """A positive number of metres or seconds."""
    try:
        value = float(text)
    except ValueError:
        raise ValueError(f"expected a number, got {text!r}") from None
    if not value > 0:
        raise ValueError(f"expected a positive number, got {text!r}")
    return value


def _smooth_option(text: str) -> Any:
    """``auto`` (strengths by maximum likelihood), ``off``, or one strength for both axes on the smoothing
    panel's scale (:data:`editor.processing.smoothing.STRENGTH_LOG10_Q`: 0 keeps the recording exactly,
    100 is the smoothest model the automatic estimate may pick)."""
    value = text.strip().lower()
    if value == "auto":
        return {}
    if value == "off":
        return OFF
    try:
        strength = float(value)
    except ValueError:
        raise ValueError(f"expected auto, off or a strength {STRENGTH_MIN:g}..{STRENGTH_MAX:g}, got {text!r}") from None
    if not STRENGTH_MIN <= strength <= STRENGTH_MAX:
        raise ValueError(f"strength must be between {STRENGTH_MIN:g} and {STRENGTH_MAX:g}, got {text!r}")
    return {"horizontal_strength": strength, "vertical_strength": strength}


def _simplify_option(text: str) -> dict:
    # the vertical tolerance follows the horizontal one unless --simplify-vertical says otherwise,
    # so climb totals survive thinning
    metres = positive(text)
    return {"tolerance_m": metres, "vertical_tolerance_m": metres}


def _simplify_vertical_option(text: str) -> dict:
    return {"vertical_tolerance_m": None if text.strip().lower() == "off" else positive(text)}


SMOOTH = ToolDescriptor(
    key="smooth",
    label="Smooth track",
    title="Smooth",
    summary=(
        "Kalman filter with a Rauch–Tung–Striebel pass: removes the jitter of the fixes while keeping the "
        "shape of the route. 0 keeps the recording, 100 smooths the most; “auto” picks the strength "
        "that best explains the data."
    ),
    function=smooth,
    params=SmoothParams,
    panel="strength",
    fields={
        "horizontal_strength": ControlSpec(label="Position strength", **STRENGTH),
        "vertical_strength": ControlSpec(label="Elevation strength", **STRENGTH),
        "horizontal_sigma_m": ControlSpec(label="Position noise σ", maximum=100, step=0.5, decimals=1, more=True),
        "vertical_sigma_m": ControlSpec(label="Elevation noise σ", maximum=100, step=0.5, decimals=1, more=True),
        "estimate_noise": ControlSpec(label="Estimate noise too", more=True),
        "smooth_horizontal": ControlSpec(label="Smooth position"),
        "smooth_elevation": ControlSpec(label="Smooth elevation"),
    },
    batch_order=40,
    accepts=PLANE_AND_TOTALS | {"want_std", "memo"},
    cli_switch=False,
    cli_options=(
        CliOption(
            "--smooth",
            "smoothing: auto (maximum likelihood, default), off, or a strength as in the editor's "
            "smoothing panel: 0 keeps the recording exactly, 100 is the smoothest",
            parse=_smooth_option,
            metavar="auto|off|STRENGTH",
        ),
    ),
)

DESPIKE = ToolDescriptor(
    key="despike",
    label="Remove spikes",
    title="Spikes",
    summary=(
        "Finds wild fixes (a jump out and straight back, an impossible speed, the drift back to the road after "
        "signal loss) and removes them; the Gaps tool can refill them."
    ),
    function=despike,
    params=SpikeParams,
    fields={
        "confidence": ControlSpec(label="Gate confidence", minimum=0.9, maximum=0.999999, step=0.0005, decimals=6),
        **SCATTER,
        "min_horizontal_sigma_m": ControlSpec(label="Least position σ", maximum=50, step=0.5, decimals=1, more=True),
        "min_vertical_sigma_m": ControlSpec(label="Least elevation σ", maximum=50, step=0.5, decimals=1, more=True),
        "check_elevation": ControlSpec(label="Check elevations"),
        "check_speed": ControlSpec(label="Check speeds"),
        "iterations": ControlSpec(label="Rounds", minimum=1, maximum=20, more=True),
        "noise_allowance": ControlSpec(label="Noise allowance", maximum=10, step=0.5, decimals=1, suffix="σ",
                                       more=True),
        "trust_s": ControlSpec(label="Trust a stretch after", maximum=600, step=1, decimals=0, more=True),
        "max_zone_points": ControlSpec(label="Largest zone", minimum=10, maximum=5000, step=50, suffix="points",
                                       more=True),
        "check_catch_up": ControlSpec(label="Check fixes after signal loss"),
        "catch_up_window_s": ControlSpec(label="… for the first", minimum=5, maximum=300, step=5, decimals=0,
                                         more=True),
        "catch_up_context_s": ControlSpec(label="… judged on the next", minimum=10, maximum=600, step=10, decimals=0,
                                          more=True),
        "catch_up_passes": ControlSpec(label="… settled after", minimum=1, maximum=50, suffix="good fixes", more=True),
        "min_gap_s": ControlSpec(label="Signal loss: a gap over", maximum=3600, step=1, decimals=0, more=True),
    },
    batch_order=10,
    accepts=PLANE_AND_TOTALS,
)

FILL_GAPS = ToolDescriptor(
    key="fill_gaps",
    label="Fill gaps",
    title="Gaps",
    summary=(
        "Where the signal was lost, adds points along a plausible path so distance and time stay whole. "
        "Added points are estimates."
    ),
    function=fill_gaps,
    params=GapParams,
    fields={
        "gap_factor": ControlSpec(
            label="Gap: over usual step ×", minimum=1, maximum=100, step=0.5, decimals=1, suffix=""
        ),
        "min_gap_s": ControlSpec(label="… and at least", maximum=3600, step=1, decimals=0),
        "max_gap_s": ControlSpec(label="Longest gap filled", maximum=7200, step=10, decimals=0),
        "long_gap": ControlSpec(
            label="Longer gaps", choices=(("leave", "leave as they are"), ("split", "split the segment"))
        ),
        **SCATTER,
        "context_s": ControlSpec(label="Context each side", minimum=5, maximum=3600, step=5, decimals=0, more=True),
        "mark_inserted": ControlSpec(label="Mark added points in the file", more=True),
    },
    batch_order=20,
    accepts=PLANE_AND_TOTALS | {"inserted_marker"},
    cli_options=(
        CliOption(
            "--max-gap",
            "longest gap to fill, seconds, as recorded: the catch-up removed after a gap "
            "does not count (default {default:g})",
            parse=lambda text: {"max_gap_s": positive(text)},
            metavar="SECONDS",
            default_field="max_gap_s",
        ),
        CliOption(
            "--split-long-gaps",
            "start a new segment at gaps longer than --max-gap instead of leaving them",
            const={"long_gap": "split"},
        ),
    ),
)

COLLAPSE_STOPS = ToolDescriptor(
    key="collapse_stops",
    label="Collapse stops",
    title="Stops",
    summary=(
        "Where you stood still, the receiver wandered. Moves those points onto one place so a pause adds "
        "no distance or climb."
    ),
    function=collapse_stops,
    params=StopParams,
    fields={
        "speed_threshold_mps": ControlSpec(
            label="Stop speed", maximum=10, step=0.05, decimals=2, auto_text="from activity"
        ),
        "min_duration_s": ControlSpec(label="Shortest stop", maximum=3600, step=5, decimals=0),
        "window_s": ControlSpec(label="Averaging window", minimum=1, maximum=600, step=1, decimals=0, more=True),
        "elevation": ControlSpec(
            label="Elevation at stops", choices=(("median", "median of the stop"), ("keep", "keep as recorded"))
        ),
    },
    batch_order=30,
    accepts=PLANE_AND_TOTALS,
    cli_aliases=("--stops",),
)

SIMPLIFY = ToolDescriptor(
    key="simplify",
    label="Simplify track",
    title="Simplify",
    summary=("Removes points that add nothing the tolerance can see, to make a smaller file."),
    function=simplify,
    params=SimplifyParams,
    fields={
        "method": ControlSpec(label="Method", choices=(("rdp", "Ramer–Douglas–Peucker"), ("vw", "Visvalingam–Whyatt"))),
        "tolerance_m": ControlSpec(label="Tolerance", maximum=500, step=1, decimals=1),
        "vertical_tolerance_m": ControlSpec(
            label="Vertical tolerance", maximum=200, step=0.5, decimals=1, auto_text="ignore"
        ),
        "area_m2": ControlSpec(label="Area (VW)", maximum=100000, step=10, decimals=0),
        "target_points": ControlSpec(label="Keep points (VW)", maximum=10_000_000, step=100, auto_text="any"),
    },
    # last, and only on request: thinning is a presentation choice
    batch_order=50,
    batch_default=False,
    cli_switch=False,
    cli_options=(
        CliOption(
            "--simplify",
            "thin the cleaned track to this horizontal tolerance in metres (default off)",
            parse=_simplify_option,
            metavar="METRES",
            turns_on=True,
        ),
        CliOption(
            "--simplify-vertical",
            "vertical tolerance of --simplify, so climbs survive (default: "
            "the same number of metres as --simplify; off: horizontal only)",
            parse=_simplify_vertical_option,
            metavar="METRES|off",
        ),
    ),
)



def _elevation_mode(text: str) -> dict:
    mode = text.strip().lower()
    if mode not in MODES:
        raise ValueError(f"expected one of {', '.join(MODES)}, got {text!r}")
    return {"mode": mode}


ELEVATION = ToolDescriptor(
    key="elevation",
    label="Heights from terrain",
    title="Elevation",
    summary=(
        "Takes heights from terrain files you have (elevation rasters such as GeoTIFF tiles): fills missing "
        "heights, replaces them, or combines them with your recording so its drift goes away. Terrain heights "
        "are the ground, not a bridge or a tunnel; where the two disagree for a stretch your recording's "
        "shape is kept and the stretch is reported."
    ),
    function=terrain_elevation,
    params=ElevationParams,
    fields={
        "mode": ControlSpec(label="Use terrain to", choices=(
            ("auto", "combine if the track has heights, else replace"),
            ("combine", "combine with the recorded heights"),
            ("replace", "replace every height"),
            ("fill", "fill missing heights only"))),
        "terrain_sigma_m": ControlSpec(label="Terrain height error σ", maximum=50, step=0.5, decimals=1),
        "position_sigma_m": ControlSpec(label="Position error left σ", maximum=50, step=0.5, decimals=1, more=True),
        "disagreement_sigmas": ControlSpec(label="Disagreement over", minimum=2, maximum=20, step=0.5,
                                           decimals=1, suffix="σ"),
        "min_stretch_points": ControlSpec(label="… for at least", minimum=1, maximum=1000, suffix="points", more=True),
    },
    batch_order=45,
    accepts=PLANE_AND_TOTALS | {"want_std", "terrain"},
    requires=frozenset({"terrain"}),
    # the elevation step models the recorded elevation itself: smoothing it first would hide the
    # recording's noise from that step's estimates and smooth it twice
    batch_overrides={"smooth": {"smooth_elevation": False}},
    cli_switch=False,
    cli_options=(
        CliOption(
            "--elevation",
            "with --dem: fill (only points without elevation), replace (terrain only) or combine "
            "(recording and terrain together); default auto: combine when the track has elevation",
            parse=_elevation_mode,
            metavar="auto|fill|replace|combine",
        ),
    ),
    panel="terrain",
)

#: The shipped tools, in the editor's tab order.
BUILTIN = (SMOOTH, DESPIKE, FILL_GAPS, COLLAPSE_STOPS, ELEVATION, SIMPLIFY)
