"""How numbers are shown: metric or imperial lengths and speeds, durations, clock times.

Qt-free so the formatting is tested without a window. Everything is stored in
SI units (metres, seconds, UTC); conversion happens only here, at display time.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime, timedelta, timezone


@dataclass(frozen=True)
class UnitSystem:
    """Display units for one system.

    Attributes
    ----------
    key : settings key, ``"metric"`` or ``"imperial"``.
    long_name, long_m : unit for distances along the track and its size in metres.
    short_name, short_m : unit for elevations and short lengths and its size in metres.
    speed_name, speed_mps : speed unit and its size in metres per second.
    """

    key: str
    long_name: str
    long_m: float
    short_name: str
    short_m: float
    speed_name: str
    speed_mps: float

    def long(self, metres: float, digits: int = 2) -> str:
        if not math.isfinite(metres):
            return "–"
        return f"{metres / self.long_m:,.{digits}f} {self.long_name}"

    def short(self, metres: float, digits: int = 0) -> str:
        if not math.isfinite(metres):
            return "–"
        return f"{metres / self.short_m:,.{digits}f} {self.short_name}"

    def speed(self, mps: float, digits: int = 1) -> str:
        if not math.isfinite(mps):
            return "–"
        return f"{mps / self.speed_mps:,.{digits}f} {self.speed_name}"

    def setting_unit(self, stored_unit: str) -> tuple[float, str]:
        """How a tool setting stored in ``stored_unit`` is shown in this system.

        Returns the size of one shown unit in the stored unit, and the shown unit's name: metres
        become the short unit (m, ft), square metres its square, metres per second the speed unit
        (km/h, mph). Any other unit (seconds, points, %) is shown as it is stored.
        """
        if stored_unit == "m":
            return self.short_m, self.short_name
        if stored_unit == "m²":
            return self.short_m ** 2, self.short_name + "²"
        if stored_unit == "m/s":
            return self.speed_mps, self.speed_name
        return 1.0, stored_unit

    def nice_length(self, max_metres: float) -> tuple[float, str]:
        """Largest round length (1, 2 or 5 × 10^k of a unit) not above ``max_metres``.

        Returns the length in metres and its label; used by the map's scale bar.
        Below one long unit the short unit is used (m or ft).
        """
        if not (max_metres > 0 and math.isfinite(max_metres)):
            return 0.0, ""
        for unit_m, name in ((self.long_m, self.long_name), (self.short_m, self.short_name)):
            value = max_metres / unit_m
            if value >= 1.0 or unit_m == self.short_m:
                exponent = math.floor(math.log10(value))
                base = 10.0 ** exponent
                step = max(s for s in (1.0, 2.0, 5.0) if s * base <= value * (1 + 1e-12))
                nice = step * base
                label = f"{nice:g} {name}"
                return nice * unit_m, label
        raise AssertionError("unreachable")


#: International metre-based units.
METRIC = UnitSystem("metric", "km", 1000.0, "m", 1.0, "km/h", 1000.0 / 3600.0)
#: International mile (1609.344 m) and foot (0.3048 m), by the 1959 international yard and pound agreement.
IMPERIAL = UnitSystem("imperial", "mi", 1609.344, "ft", 0.3048, "mph", 1609.344 / 3600.0)
UNIT_SYSTEMS = {u.key: u for u in (METRIC, IMPERIAL)}
#: The words for the units a setting may be shown in (its tooltip names the unit in full).
UNIT_WORDS = {"m": "metres", "ft": "feet", "m²": "square metres", "ft²": "square feet", "s": "seconds",
              "km/h": "kilometres per hour", "mph": "miles per hour", "m/s": "metres per second",
              "%": "percent", "km": "kilometres", "mi": "miles"}


def format_duration(seconds: float) -> str:
    """``h:mm:ss``; "–" when unknown."""
    if not math.isfinite(seconds):
        return "–"
    s = int(round(seconds))
    sign = "-" if s < 0 else ""
    s = abs(s)
    return f"{sign}{s // 3600}:{s % 3600 // 60:02d}:{s % 60:02d}"


def offset_label(offset_h: float) -> str:
    """``"UTC"`` or ``"UTC+02:00"`` / ``"UTC-03:30"``."""
    if offset_h == 0:
        return "UTC"
    minutes = int(round(abs(offset_h) * 60))
    sign = "+" if offset_h > 0 else "-"
    return f"UTC{sign}{minutes // 60:02d}:{minutes % 60:02d}"


def format_clock(time_s: float, offset_h: float = 0.0, with_date: bool = True) -> str:
    """A UTC epoch time (seconds) as wall-clock time at a fixed offset from UTC."""
    if not math.isfinite(time_s):
        return "–"
    tz = timezone(timedelta(hours=offset_h))
    moment = datetime.fromtimestamp(time_s, tz)
    text = moment.strftime("%Y-%m-%d %H:%M:%S" if with_date else "%H:%M:%S")
    return f"{text} {offset_label(offset_h)}"
