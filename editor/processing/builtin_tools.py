"""The cleaning tools the program ships with: one :class:`ToolDescriptor` each.

Order of the full clean (``batch_order``), and why, is explained in
:mod:`editor.processing.pipeline`. A new tool gets its descriptor here (or is
registered from elsewhere with :func:`editor.processing.tools.register`).
"""

from __future__ import annotations

from typing import Any

from .builtin_options import elevation_mode, positive, simplify_option, simplify_vertical_option, smooth_option
from .descriptor import CliOption, ControlSpec, ToolDescriptor
from .elevation import ElevationParams, terrain_elevation
from .gaps import GapParams, fill_gaps
from .simplify import SimplifyParams, simplify
from .smoothing import STRENGTH_MAX, STRENGTH_MIN, SmoothParams, smooth
from .spikes import SpikeParams, despike
from .stops import StopParams, collapse_stops

#: The strength sliders; the scale is defined once, in editor.processing.smoothing (0 keeps the recording).
STRENGTH: dict[str, Any] = dict(minimum=STRENGTH_MIN, maximum=STRENGTH_MAX, step=1, decimals=0, suffix="",
                                slider=True, auto_text="auto",
                                method="the strength sets the Kalman filter's process noise; “auto” finds it "
                                       "by maximum likelihood")
#: One name for the receiver's random error everywhere (the glossary's "scatter"): its words and range.
POSITION_SCATTER = ("How far a recorded point typically lies from where you really were, in one direction. "
                    "Small under open sky, several times larger under trees or between tall buildings.")
ELEVATION_SCATTER = ("How far a recorded height typically lies from the true height. GPS heights scatter "
                     "several times more than positions; a recorder with a barometer scatters much less.")
#: The secondary line of every scatter and error setting: what the number is, in a statistician's words.
ONE_SIGMA = "taken as one standard deviation of a normal error"
SCATTER_RANGE: dict[str, Any] = dict(maximum=100, step=0.5, decimals=1, method=ONE_SIGMA)
#: The scatter fields of the tools that estimate it from the track unless told.
SCATTER = {
    "horizontal_sigma_m": ControlSpec(
        label="Position scatter", auto_text="estimate", more=True, **SCATTER_RANGE,
        tip=POSITION_SCATTER + " Leave “estimate” ticked to measure it on this track; set it when the "
        "estimate is thrown by a bad stretch."),
    "vertical_sigma_m": ControlSpec(
        label="Elevation scatter", auto_text="estimate", more=True, **SCATTER_RANGE,
        tip=ELEVATION_SCATTER + " Leave “estimate” ticked to measure it on this track."),
}
#: Every tool that works in metres and reports totals can reuse the shared plane and the totals before it.
PLANE_AND_TOTALS = frozenset({"plane", "before"})


SMOOTH = ToolDescriptor(
    key="smooth",
    label="Smooth track",
    title="Smooth",
    summary=(
        "Removes the jitter of the points while keeping the shape of the route. 0 keeps the recording, "
        "100 smooths the most; “auto” picks the strength that best explains the track."
    ),
    method="Kalman filter with a Rauch–Tung–Striebel smoother",
    function=smooth,
    params=SmoothParams,
    panel="strength",
    fields={
        "horizontal_strength": ControlSpec(
            label="Position strength", **STRENGTH,
            tip="How much the line on the map is smoothed, from 0 (as recorded) to 100 (the smoothest). "
            "Leave “auto” ticked to let the track decide; lower it if corners are cut, raise it if the "
            "line still zigzags. Unit: none, a 0–100 scale."),
        "vertical_strength": ControlSpec(
            label="Elevation strength", **STRENGTH,
            tip="How much the heights are smoothed, from 0 (as recorded) to 100 (the smoothest). Leave "
            "“auto” ticked to let the track decide; lower it if short climbs flatten out, raise it if the "
            "ascent still counts noise. Unit: none, a 0–100 scale."),
        "horizontal_sigma_m": ControlSpec(
            label="Position scatter", more=True, **SCATTER_RANGE,
            tip=POSITION_SCATTER + " The smoother trusts each point less the larger this is. Used as set "
            "unless “Estimate scatter from the track” is ticked. Raise it for a track recorded under trees "
            "or in a city."),
        "vertical_sigma_m": ControlSpec(
            label="Elevation scatter", more=True, **SCATTER_RANGE,
            tip=ELEVATION_SCATTER + " Lower it for a barometric recorder, or tick “Estimate scatter from "
            "the track”."),
        "estimate_noise": ControlSpec(
            label="Estimate scatter from the track", more=True, method="maximum likelihood",
            tip="Measure the position and elevation scatter on this track instead of using the values "
            "above. Tick it for a recorder whose accuracy you do not know, for example one with a barometer."),
        "smooth_horizontal": ControlSpec(
            label="Smooth position", tip="Smooth the line on the map. Untick to change heights only."),
        "smooth_elevation": ControlSpec(
            label="Smooth elevation", tip="Smooth the heights (and with them the ascent and descent). Untick "
            "to change the line on the map only, for example when the Elevation tool takes heights from "
            "terrain."),
    },
    batch_order=40,
    accepts=PLANE_AND_TOTALS | {"want_std", "memo"},
    cli_switch=False,
    cli_options=(
        CliOption(
            "--smooth",
            "smoothing: auto (the strength estimated from the track, default), off, or a strength as "
            "in the editor's Smooth tab: 0 keeps the recording exactly, 100 is the smoothest",
            parse=smooth_option,
            metavar="auto|off|STRENGTH",
        ),
    ),
)

DESPIKE = ToolDescriptor(
    key="despike",
    label="Remove spikes",
    title="Spikes",
    summary=(
        "Finds wild points (a jump out and straight back, an impossible speed, the drift back to the road after "
        "signal loss) and removes them; the Gaps tool can refill them."
    ),
    method="Kalman filter innovation gate, then a speed and acceleration check",
    function=despike,
    params=SpikeParams,
    fields={
        "confidence": ControlSpec(
            label="Certainty to remove", minimum=0.9, maximum=0.999999, step=0.0005, decimals=4, scale=100,
            suffix="%", method="chi-square innovation gate",
            tip="How sure the tool must be that a point is wrong before it removes it. At 99.9 % about one "
            "good point in a thousand is questioned by chance. Lower it if obvious spikes stay; raise it if "
            "real corners or quick descents are removed."),
        **SCATTER,
        "min_horizontal_sigma_m": ControlSpec(
            label="Lowest position scatter", maximum=50, step=0.5, decimals=1, more=True,
            tip="The estimated position scatter is never taken below this. Recorders that smooth their own "
            "output look steadier than they are, and too small a scatter would question real turns. Lower it for "
            "a survey-grade receiver."),
        "min_vertical_sigma_m": ControlSpec(
            label="Lowest elevation scatter", maximum=50, step=0.5, decimals=1, more=True,
            tip="The estimated elevation scatter is never taken below this, so heights stored in whole "
            "units are not mistaken for exact ones. Lower it for a recorder that stores heights to the centimetre."),
        "check_elevation": ControlSpec(
            label="Check elevations",
            tip="Also remove points whose height jumps away and back. Untick for a track whose heights you "
            "will replace from terrain anyway."),
        "check_speed": ControlSpec(
            label="Check speeds",
            tip="Remove points you could only have reached faster than the activity allows, such as a run "
            "of wild points after a cold start. Untick it for a track that mixes ways of travelling, such as a "
            "train ride in the middle of a walk."),
        "iterations": ControlSpec(
            label="Look again up to", minimum=1, maximum=20, suffix="times", more=True,
            tip="After removing spikes the tool looks again, because a spike can hide the one next to it. "
            "Raise it for a track with clusters of spikes."),
        "noise_allowance": ControlSpec(
            label="Speed check leeway", maximum=10, step=0.5, decimals=1, suffix="× scatter", more=True,
            tip="The speed check forgives a step this many times the position scatter, so jitter alone never "
            "makes a speed impossible. Raise it if good points are removed at low speed."),
        "trust_s": ControlSpec(
            label="Trust a steady stretch of", maximum=600, step=1, decimals=0, more=True,
            tip="A run of believable points lasting this long is taken as real track by the speed check, "
            "and the points between such runs are the ones judged. Raise it if a short wrong stretch is kept."),
        "max_zone_points": ControlSpec(
            label="Largest doubtful stretch", minimum=10, maximum=5000, step=50, suffix="points", more=True,
            tip="A doubtful stretch with more points than this is left alone (and reported), which keeps "
            "the check quick. Raise it if a long wrong stretch is reported as left alone."),
        "check_catch_up": ControlSpec(
            label="Check the catch-up after gaps",
            tip="After a gap (a tunnel, a pocket) the first points often arrive from far away and converge on "
            "the road. Remove them, so the Gaps tool can fill a plausible path instead. Untick it if good points "
            "after short gaps are removed."),
        "catch_up_window_s": ControlSpec(
            label="… within the first", minimum=5, maximum=300, step=5, decimals=0, more=True,
            tip="How long after a gap to look for the catch-up. Raise it if the receiver takes longer to "
            "find the road again."),
        "catch_up_context_s": ControlSpec(
            label="… judged on the next", minimum=10, maximum=600, step=10, decimals=0, more=True,
            tip="How much of the track after the catch-up (and before the gap) shows where you really went. "
            "Lower it when gaps come close together."),
        "catch_up_passes": ControlSpec(
            label="… over after", minimum=1, maximum=50, suffix="good points", more=True,
            tip="The catch-up ends at this many good points in a row. Raise it if the tail of a catch-up stays."),
        "min_gap_s": ControlSpec(
            label="Shortest gap checked", maximum=3600, step=1, decimals=0, more=True,
            tip="A step at least this long counts as a gap (lost signal) whose catch-up is checked. Raise it to "
            "leave short drop-outs unchecked."),
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
    method="Kalman filter with a Rauch–Tung–Striebel smoother across each gap",
    function=fill_gaps,
    params=GapParams,
    fields={
        "gap_factor": ControlSpec(
            label="Gap: a step over", minimum=1, maximum=100, step=0.5, decimals=1, suffix="× the usual",
            tip="A step counts as a gap when it takes this many times longer than the usual time between "
            "points. Raise it if a recorder with an uneven rhythm gets points added everywhere."),
        "min_gap_s": ControlSpec(
            label="… and at least", maximum=3600, step=1, decimals=0,
            tip="A gap must also last at least this long. Raise it to leave short drop-outs as they are."),
        "max_gap_s": ControlSpec(
            label="Longest gap filled", maximum=7200, step=10, decimals=0,
            tip="Longer gaps are not filled: the further the guess reaches, the less it is worth. Counted as "
            "recorded, before the Spikes tool removed points beside the gap. Raise it for slow travel, where a "
            "minute covers little ground."),
        "long_gap": ControlSpec(
            label="Longer gaps", choices=(("leave", "leave as they are"), ("split", "split the segment")),
            tip="What happens at a gap too long to fill: leave it, or start a new segment there so that "
            "the straight jump adds no distance or time. Choose split when a long gap was a train ride or a "
            "drive you do not want counted."),
        **SCATTER,
        "context_s": ControlSpec(
            label="Track used each side", minimum=5, maximum=3600, step=5, decimals=0, more=True,
            tip="How much of the track before and after a gap shapes the added path. Lower it on a twisty "
            "road, raise it on a straight one."),
        "mark_inserted": ControlSpec(
            label="Mark added points in the file", more=True,
            tip="Saved copies say which points were added, so they can be told apart from recorded points later. "
            "Untick it if another program you use stumbles over the marks."),
    },
    batch_order=20,
    accepts=PLANE_AND_TOTALS | {"inserted_marker"},
    cli_options=(
        CliOption(
            "--max-gap",
            "longest gap filled, in seconds, counted as recorded: the catch-up removed after a gap "
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
    method="speed from averaged positions",
    function=collapse_stops,
    params=StopParams,
    fields={
        "speed_threshold_mps": ControlSpec(
            label="Stop speed", maximum=10, step=0.05, decimals=2, auto_text="from activity",
            tip="Slower than this, averaged over a few seconds, counts as standing still. Leave “from "
            "activity” for the activity's own value; raise it if shuffling about at a stop still adds "
            "distance, lower it if slow climbs are taken for stops."),
        "min_duration_s": ControlSpec(
            label="Shortest stop", maximum=3600, step=5, decimals=0,
            tip="Stops shorter than this are left alone: a traffic light or a gate adds little and is "
            "often slow movement. Lower it to collapse short waits too."),
        "window_s": ControlSpec(
            label="Speed averaged over", minimum=1, maximum=600, step=1, decimals=0, more=True,
            tip="The speed is measured between the average positions this long before and after each point, "
            "which evens out jitter. Raise it for a jittery recorder, lower it for a short stop."),
        "elevation": ControlSpec(
            label="Elevation at stops", choices=(("median", "median of the stop"), ("keep", "keep as recorded")),
            tip="Give a stop one height (so waiting adds no climb), or keep its heights as recorded. Choose keep "
            "if you stopped on something that moves up or down, such as a lift."),
    },
    batch_order=30,
    accepts=PLANE_AND_TOTALS,
    cli_aliases=("--stops",),
)

SIMPLIFY = ToolDescriptor(
    key="simplify",
    label="Simplify track",
    title="Simplify",
    summary=("Removes points that change the track by less than you allow, to make a smaller file."),
    method="Ramer–Douglas–Peucker (distance) or Visvalingam–Whyatt (bend size)",
    function=simplify,
    params=SimplifyParams,
    accepts=frozenset({"memo"}),  # the window resumes the bend-size ranking between settings
    fields={
        "method": ControlSpec(
            label="Thin by", choices=(("rdp", "distance from the line"), ("vw", "size of each bend")),
            method="Ramer–Douglas–Peucker (distance) or Visvalingam–Whyatt (bend size)",
            tip="Distance keeps every point that lies further than the largest shift from the thinned line. "
            "Bend size drops the smallest bends first: choose it to keep the look of a winding road."),
        "tolerance_m": ControlSpec(
            label="Largest shift", maximum=500, step=1, decimals=1,
            tip="When thinning by distance: how far the thinned track may pass from a removed point. "
            "Raise it for a smaller file, lower it to keep more detail."),
        "vertical_tolerance_m": ControlSpec(
            label="Largest height shift", maximum=200, step=0.5, decimals=1, auto_text="ignore",
            tip="When thinning by distance: also keep points whose height is further than this from the "
            "thinned profile, so climbs survive. “ignore” looks at the map line only; set it when the ascent "
            "of the thinned track matters."),
        "area_m2": ControlSpec(
            label="Smallest bend kept", maximum=100000, step=10, decimals=0,
            tip="When thinning by bend size: bends smaller than this area (a point and its two neighbours) "
            "are removed. Raise it for a smaller file."),
        "target_points": ControlSpec(
            label="Thin down to", maximum=10_000_000, step=100, suffix="points", auto_text="any",
            tip="When thinning by bend size: remove the smallest bends until this many points remain, "
            "whatever their size. “any” uses the smallest bend kept instead. Set it to meet a device's limit "
            "on points per track."),
    },
    # last, and only on request: thinning is a presentation choice
    batch_order=50,
    batch_default=False,
    cli_switch=False,
    cli_options=(
        CliOption(
            "--simplify",
            "thin the cleaned track by distance: the largest shift, in metres, of the thinned track "
            "from a removed point (default off)",
            parse=simplify_option,
            metavar="METRES",
            turns_on=True,
        ),
        CliOption(
            "--simplify-vertical",
            "largest height shift of --simplify, in metres, so climbs survive (default: "
            "the same number of metres as --simplify; off: the map line only)",
            parse=simplify_vertical_option,
            metavar="METRES|off",
        ),
    ),
)



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
    method="Kalman smoother of the recording and the terrain together (combine), or of the terrain alone",
    function=terrain_elevation,
    params=ElevationParams,
    fields={
        "mode": ControlSpec(label="Use terrain to", choices=(
            ("auto", "combine if the track has heights, else replace"),
            ("combine", "combine with the recorded heights"),
            ("replace", "replace every height"),
            ("fill", "fill missing heights only")),
            tip="Combine keeps the small ups and downs your recorder saw and takes the drift out with the "
            "terrain. Replace uses the terrain only; fill adds heights where the recording has none. Choose fill "
            "when only a few points lack a height."),
        "terrain_sigma_m": ControlSpec(
            label="Terrain height error", maximum=50, step=0.5, decimals=1, method=ONE_SIGMA,
            tip="How far the terrain files' heights typically are from the true ground, from one point to "
            "the next. Raise it for coarse or old terrain, lower it for survey-grade terrain."),
        "position_sigma_m": ControlSpec(
            label="Position error after smoothing", maximum=50, step=0.5, decimals=1, more=True,
            method=ONE_SIGMA,
            tip="How far the smoothed positions may still be off. On steep ground this makes a terrain "
            "height less certain, since a small shift sideways reads a different height. Raise it if the "
            "positions are poor or were not smoothed."),
        "disagreement_sigmas": ControlSpec(
            label="Terrain set aside when off by", minimum=2, maximum=20, step=0.5, decimals=1,
            suffix="× the expected error",
            tip="Where terrain and recording differ by more than this many times the error both are "
            "expected to have (a bridge, a tunnel), the terrain is left out and the stretch reported. "
            "Lower it to catch smaller bridges."),
        "min_stretch_points": ControlSpec(
            label="… for at least", minimum=1, maximum=1000, suffix="points", more=True,
            tip="Shorter disagreements are treated as terrain error, not a bridge or a tunnel. Raise it if a short "
            "dip of the terrain is reported as a bridge."),
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
            parse=elevation_mode,
            metavar="auto|fill|replace|combine",
        ),
    ),
    panel="terrain",
)

#: The shipped tools, in the editor's tab order.
BUILTIN = (SMOOTH, DESPIKE, FILL_GAPS, COLLAPSE_STOPS, ELEVATION, SIMPLIFY)
