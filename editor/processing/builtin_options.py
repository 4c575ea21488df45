"""How the shipped tools' ``trackwright clean`` options read their text (see ``builtin_tools``).

Each function takes the option's text and returns the parameter fields it sets, or :data:`OFF`;
bad text raises ``ValueError`` with a message for the command line.
"""
from __future__ import annotations

from typing import Any

from .descriptor import OFF
from .elevation import MODES
from .smoothing import STRENGTH_MAX, STRENGTH_MIN


def positive(text: str) -> float:
    """A positive number of metres or seconds."""
    try:
        value = float(text)
    except ValueError:
        raise ValueError(f"expected a number, got {text!r}") from None
    if not value > 0:
        raise ValueError(f"expected a positive number, got {text!r}")
    return value


def smooth_option(text: str) -> Any:
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


def simplify_option(text: str) -> dict:
    # the vertical tolerance follows the horizontal one unless --simplify-vertical says otherwise,
    # so climb totals survive thinning
    metres = positive(text)
    return {"tolerance_m": metres, "vertical_tolerance_m": metres}


def simplify_vertical_option(text: str) -> dict:
    return {"vertical_tolerance_m": None if text.strip().lower() == "off" else positive(text)}


def elevation_mode(text: str) -> dict:
    mode = text.strip().lower()
    if mode not in MODES:
        raise ValueError(f"expected one of {', '.join(MODES)}, got {text!r}")
    return {"mode": mode}
