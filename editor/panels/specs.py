"""Words and ranges for each tool's panel: our labels for the tools' parameter fields.

Fields a tool has but this table does not name still get a control, labelled
from the field name; entries for fields a tool does not have are ignored.
"""
from __future__ import annotations

from ..processing.smoothing import STRENGTH_MAX, STRENGTH_MIN
from .controls import ControlSpec

#: The smoothing strength scale is defined once, in editor.processing.smoothing (0 keeps the recording).
STRENGTH = dict(minimum=STRENGTH_MIN, maximum=STRENGTH_MAX, step=1, decimals=0, suffix="", slider=True,
                auto_text="auto")

#: Per tool function name: (tab title, summary, field specs).
TOOL_TEXTS: dict[str, tuple[str, str, dict[str, ControlSpec]]] = {
    "smooth": (
        "Smooth",
        "Kalman filter with a Rauch–Tung–Striebel pass: removes the jitter of the fixes while keeping the "
        "shape of the route. 0 keeps the recording, 100 smooths the most; “auto” picks the strength "
        "that best explains the data.",
        {"horizontal_strength": ControlSpec(label="Position strength", **STRENGTH),
         "vertical_strength": ControlSpec(label="Elevation strength", **STRENGTH),
         "horizontal_sigma_m": ControlSpec(label="Position noise σ", maximum=100, step=0.5, decimals=1),
         "vertical_sigma_m": ControlSpec(label="Elevation noise σ", maximum=100, step=0.5, decimals=1),
         "estimate_noise": ControlSpec(label="Estimate noise too"),
         "smooth_horizontal": ControlSpec(label="Smooth position"),
         "smooth_elevation": ControlSpec(label="Smooth elevation")}),
    "despike": (
        "Spikes",
        "Finds wild fixes (a jump out and straight back, an impossible speed, the drift back to the road after "
        "signal loss) and removes them; the Gaps tool can refill them.",
        {"confidence": ControlSpec(label="Gate confidence", minimum=0.9, maximum=0.999999, step=0.0005,
                                   decimals=6),
         "horizontal_sigma_m": ControlSpec(label="Position scatter σ", maximum=100, step=0.5, decimals=1,
                                           auto_text="estimate"),
         "vertical_sigma_m": ControlSpec(label="Elevation scatter σ", maximum=100, step=0.5, decimals=1,
                                         auto_text="estimate"),
         "min_horizontal_sigma_m": ControlSpec(label="Least position σ", maximum=50, step=0.5, decimals=1),
         "min_vertical_sigma_m": ControlSpec(label="Least elevation σ", maximum=50, step=0.5, decimals=1),
         "check_elevation": ControlSpec(label="Check elevations"),
         "check_speed": ControlSpec(label="Check speeds"),
         "iterations": ControlSpec(label="Rounds", minimum=1, maximum=20),
         "noise_allowance": ControlSpec(label="Noise allowance", maximum=10, step=0.5, decimals=1, suffix="σ"),
         "trust_s": ControlSpec(label="Trust a stretch after", maximum=600, step=1, decimals=0),
         "max_zone_points": ControlSpec(label="Largest zone", minimum=10, maximum=5000, step=50,
                                        suffix="points"),
         "check_catch_up": ControlSpec(label="Check fixes after signal loss"),
         "catch_up_window_s": ControlSpec(label="… for the first", minimum=5, maximum=300, step=5, decimals=0),
         "catch_up_context_s": ControlSpec(label="… judged on the next", minimum=10, maximum=600, step=10,
                                           decimals=0),
         "catch_up_passes": ControlSpec(label="… settled after", minimum=1, maximum=50, suffix="good fixes"),
         "min_gap_s": ControlSpec(label="Signal loss: a gap over", maximum=3600, step=1, decimals=0)}),
    "fill_gaps": (
        "Gaps",
        "Where the signal was lost, adds points along a plausible path so distance and time stay whole. "
        "Added points are estimates.",
        {"gap_factor": ControlSpec(label="Gap: over usual step ×", minimum=1, maximum=100, step=0.5,
                                   decimals=1, suffix=""),
         "min_gap_s": ControlSpec(label="… and at least", maximum=3600, step=1, decimals=0),
         "max_gap_s": ControlSpec(label="Longest gap filled", maximum=7200, step=10, decimals=0),
         "long_gap": ControlSpec(label="Longer gaps", choices=(("leave", "leave as they are"),
                                                              ("split", "split the segment"))),
         "horizontal_sigma_m": ControlSpec(label="Position scatter σ", maximum=100, step=0.5, decimals=1,
                                           auto_text="estimate"),
         "vertical_sigma_m": ControlSpec(label="Elevation scatter σ", maximum=100, step=0.5, decimals=1,
                                         auto_text="estimate"),
         "context_s": ControlSpec(label="Context each side", minimum=5, maximum=3600, step=5, decimals=0),
         "mark_inserted": ControlSpec(label="Mark added points in the file")}),
    "collapse_stops": (
        "Stops",
        "Where you stood still, the receiver wandered. Moves those points onto one place so a pause adds "
        "no distance or climb.",
        {"speed_threshold_mps": ControlSpec(label="Stop speed", maximum=10, step=0.05, decimals=2,
                                            auto_text="from activity"),
         "min_duration_s": ControlSpec(label="Shortest stop", maximum=3600, step=5, decimals=0),
         "window_s": ControlSpec(label="Averaging window", minimum=1, maximum=600, step=1, decimals=0),
         "elevation": ControlSpec(label="Elevation at stops",
                                  choices=(("median", "median of the stop"), ("keep", "keep as recorded")))}),
    "simplify": (
        "Simplify",
        "Removes points that add nothing the tolerance can see, to make a smaller file.",
        {"method": ControlSpec(label="Method", choices=(("rdp", "Ramer–Douglas–Peucker"),
                                                        ("vw", "Visvalingam–Whyatt"))),
         "tolerance_m": ControlSpec(label="Tolerance", maximum=500, step=1, decimals=1),
         "vertical_tolerance_m": ControlSpec(label="Vertical tolerance", maximum=200, step=0.5, decimals=1,
                                             auto_text="ignore"),
         "area_m2": ControlSpec(label="Area (VW)", maximum=100000, step=10, decimals=0),
         "target_points": ControlSpec(label="Keep points (VW)", maximum=10_000_000, step=100,
                                      auto_text="any")}),
}

#: Tab order.
ORDER = ("smooth", "despike", "fill_gaps", "collapse_stops", "simplify")


def activity_spec(activities) -> ControlSpec:
    """Choice control for an ``activity`` field from the tools' activity presets."""
    names = list(activities) if activities is not None else []
    return ControlSpec(label="Activity", choices=tuple([("auto", "auto (from speeds)")] +
                                                       [(n, n) for n in names if n != "auto"]))
