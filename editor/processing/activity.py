"""Activity presets: how fast and how hard a walker, runner, rider or driver can plausibly move.

The cleaning tools use these limits to tell a real movement from a recording
fault. The values are common practice, recalled rather than taken from one
published source, and deliberately generous: a limit that is too tight deletes
real data, one that is too loose only lets a rare fault through, which the
innovation gate and the smoother still see.

======  =================  ===========  ==========  ============  ==========
preset  max speed          max accel.   stop below  q horizontal  q vertical
======  =================  ===========  ==========  ============  ==========
walk    3.5 m/s (13 km/h)  2.0 m/s^2    0.25 m/s    0.5 m^2/s^3   0.05
run     8.0 m/s (29 km/h)  4.0 m/s^2    0.4 m/s     1.0 m^2/s^3   0.1
ride    25 m/s (90 km/h)   4.0 m/s^2    0.6 m/s     2.0 m^2/s^3   0.2
drive   60 m/s (216 km/h)  9.0 m/s^2    1.0 m/s     4.0 m^2/s^3   0.4
======  =================  ===========  ==========  ============  ==========

Why these numbers (common practice, from memory):

* walk: brisk walking is 1.5-2 m/s, hill walkers jog a few steps; 3.5 m/s is a
  fast jog. Stopping or starting on foot takes about a second, so 2 m/s^2.
* run: distance runners hold 3-6 m/s, sprints reach ~10 m/s for seconds only;
  8 m/s covers fast finishes. Sprint starts reach ~4 m/s^2.
* ride: cyclists cruise at 5-12 m/s and descend at up to ~25 m/s; hard braking
  on a bicycle is about 4 m/s^2 before the rear wheel lifts.
* drive: motorway speeds up to ~55 m/s; emergency braking on dry asphalt is about
  9 m/s^2 (close to 1 g), the largest acceleration a road vehicle sustains.

``stop_speed_mps`` is the windowed speed below which the traveller counts as
standing still (see :mod:`editor.processing.stops`). ``process_noise`` and
``vertical_process_noise`` are the spectral densities q of the white-noise
acceleration the Kalman model (:mod:`editor.processing.kalman`, continuous
form) allows horizontally and vertically when the cleaning tools need a model
of their own (spike gate, gap filling): chosen so the activity's ordinary
changes of speed and direction sit well inside one standard deviation of the
model; vertical motion is ten times calmer (a design choice). The smoothing
tool estimates its own q from the data instead.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Activity:
    """Plausibility limits of one kind of travel (SI units)."""

    name: str
    label: str
    max_speed_mps: float
    max_accel_mps2: float
    stop_speed_mps: float
    process_noise: float
    vertical_process_noise: float


ACTIVITIES: dict[str, Activity] = {
    "walk": Activity("walk", "Walk / hike", 3.5, 2.0, 0.25, 0.5, 0.05),
    "run": Activity("run", "Run", 8.0, 4.0, 0.4, 1.0, 0.1),
    "ride": Activity("ride", "Ride (bicycle)", 25.0, 4.0, 0.6, 2.0, 0.2),
    "drive": Activity("drive", "Drive", 60.0, 9.0, 1.0, 4.0, 0.4),
}

#: Name that asks :func:`resolve_activity` to infer the activity from the track's own speeds.
AUTO = "auto"
#: The inferred activity is the first whose max speed exceeds this multiple of the track's
#: 99th-percentile windowed speed: the limit must sit well above what the traveller really did.
INFER_MARGIN = 1.5


def infer_activity(typical_fast_speed_mps: float) -> Activity:
    """The slowest preset whose max speed is ``INFER_MARGIN`` times above ``typical_fast_speed_mps``.

    Parameters
    ----------
    typical_fast_speed_mps : a robust "fast but ordinary" speed of the track in m/s,
        e.g. the 99th percentile of its windowed speed (never a raw point-to-point speed).
    """
    speed = float(typical_fast_speed_mps) if np.isfinite(typical_fast_speed_mps) else 0.0
    for activity in ACTIVITIES.values():
        if activity.max_speed_mps >= INFER_MARGIN * speed:
            return activity
    return ACTIVITIES["drive"]


def resolve_activity(name: str | Activity, typical_fast_speed_mps: float | None = None) -> Activity:
    """Look up a preset by name, or infer it (``"auto"``) from a robust fast speed in m/s."""
    if isinstance(name, Activity):
        return name
    if name == AUTO:
        return infer_activity(np.nan if typical_fast_speed_mps is None else typical_fast_speed_mps)
    try:
        return ACTIVITIES[name]
    except KeyError:
        raise ValueError(f"unknown activity {name!r}; choose one of {', '.join(ACTIVITIES)} or {AUTO}") from None


__all__ = ["Activity", "ACTIVITIES", "AUTO", "INFER_MARGIN", "infer_activity", "resolve_activity"]
