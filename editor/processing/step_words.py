"""What each step of a Clean up did, in a rider's words (with the method and its numbers as secondary text).

Qt-free so the wording is tested without a window. A step this module has no
words for (a tool registered later) is described by its counts of moved,
removed and added points.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Callable

from ..units import METRIC, UnitSystem
from .clean_up import StepOutcome


@dataclass(frozen=True)
class StepWords:
    """``name``: the step ("Spikes"); ``text``: what it did ("removed 12 points"); ``detail``: how (the
    method and its settings), for a secondary line."""

    name: str
    text: str
    detail: str = ""


def _count(n: int, word: str, plural: str | None = None) -> str:
    return f"{n:,} {word if n == 1 else (plural or word + 's')}"


def duration_words(seconds: float) -> str:
    """``"2 min 24 s"``, ``"1 h 5 min"``, ``"40 s"``: a length of time as a rider says it."""
    s = int(round(seconds)) if math.isfinite(seconds) else 0
    if s >= 3600:
        return f"{s // 3600} h {s % 3600 // 60} min"
    if s >= 60:
        return f"{s // 60} min {s % 60} s" if s % 60 else f"{s // 60} min"
    return f"{s} s"


def _moved_removed_added(outcome: StepOutcome) -> str:
    p = outcome.proposal
    assert p is not None
    parts = []
    moved = int(p.changed.sum())
    if moved:
        parts.append(f"moved {_count(moved, 'point')}")
    if len(p.removed):
        parts.append(f"removed {_count(len(p.removed), 'point')}")
    if len(p.inserted):
        parts.append(f"added {_count(len(p.inserted), 'point')}")
    return ", ".join(parts) if parts else "changed nothing"


def _spikes(outcome: StepOutcome, _units: UnitSystem) -> tuple[str, str]:
    p, info = outcome.proposal, outcome.proposal.info if outcome.proposal else {}
    assert p is not None
    removed = len(p.removed)
    text = f"removed {_count(removed, 'point')}" if removed else "found no wild points"
    kinds = [(int(info.get("spikes", 0)), "wild point", "wild points"),
             (int(info.get("speed", 0)), "impossible speed", "impossible speeds"),
             (int(info.get("catch_up", 0)), "after signal loss", "after signal loss")]
    said = [f"{n:,} {one if n == 1 else many}" for n, one, many in kinds if n]
    confidence = info.get("confidence")
    method = "Kalman innovation test"
    if isinstance(confidence, float):
        method += f", {confidence * 100:g} % confidence"
    return text, " · ".join([", ".join(said), method] if said else [method])


def _gaps(outcome: StepOutcome, _units: UnitSystem) -> tuple[str, str]:
    p = outcome.proposal
    assert p is not None
    info = p.info
    filled, unfilled, split = int(info.get("filled", 0)), int(info.get("unfilled", 0)), int(info.get("split", 0))
    if filled:
        text = f"filled {_count(filled, 'gap')} ({_count(len(p.inserted), 'point')} added)"
    else:
        text = "no gap to fill" if not (unfilled or split) else "filled no gap"
    if unfilled:
        text += f"; {_count(unfilled, 'longer gap')} left as recorded"
    if split:
        text += f"; {_count(split, 'longer gap')} split"
    longest = getattr(outcome.params, "max_gap_s", None)
    detail = "along the Kalman/RTS smoother's path"
    if isinstance(longest, (int, float)) and math.isfinite(longest):
        detail += f" · up to {longest:g} s as recorded"
    return text, detail


def _stops(outcome: StepOutcome, units: UnitSystem) -> tuple[str, str]:
    p = outcome.proposal
    assert p is not None
    info = p.info
    stops = int(info.get("stops", 0))
    if stops:
        text = (f"{_count(stops, 'stop')}, {duration_words(float(info.get('stopped_s', 0.0)))} standing still "
                f"({units.short(float(info.get('distance_removed_m', 0.0)))} of wander removed)")
    else:
        text = "found no stop"
    detail = "points moved onto one place"
    speed = info.get("stop_speed_mps")
    if isinstance(speed, (int, float)) and math.isfinite(speed):
        detail = f"slower than {units.speed(float(speed))} on average · " + detail
    return text, detail


def _smoothing(outcome: StepOutcome, _units: UnitSystem) -> tuple[str, str]:
    p = outcome.proposal
    assert p is not None
    info = p.info
    axes = []
    params = outcome.params
    if getattr(params, "smooth_horizontal", True):
        axes.append(("position", info.get("horizontal_strength"), info.get("estimated_horizontal")))
    if getattr(params, "smooth_elevation", True):
        axes.append(("elevation", info.get("vertical_strength"), info.get("estimated_vertical")))
    shown = [(name, float(value), bool(estimated)) for name, value, estimated in axes
             if isinstance(value, (int, float)) and math.isfinite(value)]
    if not shown:
        return _moved_removed_added(outcome), "Kalman filter with Rauch–Tung–Striebel smoother"
    estimated = all(e for _n, _v, e in shown)
    how = " (estimated)" if estimated else ""
    if len({round(v) for _n, v, _e in shown}) == 1:
        text = f"strength {shown[0][1]:.0f}{how}"
        if len(shown) == 1:
            text = f"{shown[0][0]} strength {shown[0][1]:.0f}{how}"
    else:
        text = "strength " + ", ".join(f"{v:.0f} {n}" for n, v, _e in shown) + how
    detail = "Kalman/RTS smoother"
    if estimated:
        detail += ", strength by maximum likelihood"
    return text, detail + f" · {_moved_removed_added(outcome)}"


def _elevation(outcome: StepOutcome, _units: UnitSystem) -> tuple[str, str]:
    p = outcome.proposal
    assert p is not None
    info = p.info
    mode = {"combine": "combined with the recorded heights", "replace": "replaced every height",
            "fill": "filled missing heights"}.get(str(info.get("mode")), "heights from terrain")
    detail = str(info.get("terrain_report", ""))
    count = int(info.get("disagreement_count") or 0)
    if count:
        detail += f" · {_count(count, 'stretch', 'stretches')} off the terrain (bridge, tunnel?) keep the recording"
    return f"terrain {mode}", detail


#: Words per tool key; other tools get their counts.
DESCRIBERS: dict[str, Callable[[StepOutcome, UnitSystem], tuple[str, str]]] = {
    "despike": _spikes, "fill_gaps": _gaps, "collapse_stops": _stops, "smooth": _smoothing,
    "elevation": _elevation,
}


def describe(outcome: StepOutcome, units: UnitSystem = METRIC) -> StepWords:
    """What ``outcome`` did, for the Clean up list; the step's own notes (what it left alone) are added
    to the secondary text."""
    name = outcome.tool.title
    if not outcome.on or outcome.proposal is None:
        return StepWords(name, "switched off", "")
    describer = DESCRIBERS.get(outcome.tool.key)
    text, detail = describer(outcome, units) if describer else (_moved_removed_added(outcome), "")
    notes: Any = outcome.proposal.info.get("notes") or ()
    if notes:
        detail = " · ".join(filter(None, [detail, "left alone: " + "; ".join(str(n) for n in notes)]))
    return StepWords(name, text, detail)


__all__ = ["DESCRIBERS", "StepWords", "describe", "duration_words"]
