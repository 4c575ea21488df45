"""Totals of the shown track, and before → after while a proposal is previewed.

The numbers come from :mod:`editor.processing.stats` (the proposal carries its
own before/after totals computed there); this panel only formats them.
"""
from __future__ import annotations

import math

from PySide6 import QtCore, QtWidgets

# the caution shown above the numbers is the one a saved copy's record carries
from .. import CAUTION
from ..processing.stats import Totals
from ..units import METRIC, UnitSystem, format_duration

#: (label, how to format a Totals in given units)
ROWS = (
    ("Distance", lambda t, u: u.long(t.distance_m)),
    ("Ascent", lambda t, u: u.short(t.ascent_m)),
    ("Descent", lambda t, u: u.short(t.descent_m)),
    ("Moving time", lambda t, u: format_duration(t.moving_time_s)),
    ("Duration", lambda t, u: format_duration(t.duration_s)),
    ("Max speed", lambda t, u: u.speed(t.max_speed_mps)),
    ("Points", lambda t, u: f"{t.points:,}"),
    ("Segments", lambda t, u: f"{t.segments:,}"),
)


def _change(before: Totals, after: Totals, label: str, units: UnitSystem) -> str:
    key = {"Distance": "distance_m", "Ascent": "ascent_m", "Descent": "descent_m",
           "Moving time": "moving_time_s", "Duration": "duration_s", "Max speed": "max_speed_mps",
           "Points": "points", "Segments": "segments"}[label]
    a, b = float(getattr(before, key)), float(getattr(after, key))
    if not (math.isfinite(a) and math.isfinite(b)) or a == b:
        return ""
    diff = b - a
    if key == "distance_m":
        text = units.long(abs(diff))
    elif key in ("ascent_m", "descent_m"):
        text = units.short(abs(diff))
    elif key.endswith("_s"):
        text = format_duration(abs(diff))
    elif key == "max_speed_mps":
        text = units.speed(abs(diff))
    else:
        text = f"{abs(int(diff)):,}"
    # the typographic minus, as in the difference itself ("−2.46 km (−6 %)")
    pct = f" ({diff / a * 100:+.0f} %)".replace("-", "\u2212") if a else ""
    return ("+" if diff > 0 else "−") + text + pct


def spike_note(totals: Totals | None, limit_mps: float | None, activity_label: str, units: UnitSystem,
               which: str = "The track") -> str:
    """A rider's note when the max speed is above what the activity plausibly reaches, else ``""``."""
    if totals is None or limit_mps is None or not math.isfinite(totals.max_speed_mps):
        return ""
    if totals.max_speed_mps <= limit_mps:
        return ""
    return (f"{which}'s max speed is probably a spike: faster than the {units.speed(limit_mps, 0)} limit "
            f"for “{activity_label}”.")


SPIKE_TIP = ("A wrong position fix makes one step look impossibly fast. The limit is that of the activity the "
             "track's own speeds suggest; the Spikes tool finds and removes such fixes.")


class TotalsPanel(QtWidgets.QWidget):
    """A small table: the track's totals, and when previewing, the proposal's and the change."""

    def __init__(self, parent=None) -> None:
        super().__init__(parent)
        self.setObjectName("panelBody")
        self.units = METRIC
        self._before: Totals | None = None
        self._after: Totals | None = None
        self._limit_mps: float | None = None
        self._activity_label = ""
        grid = QtWidgets.QGridLayout(self)
        grid.setContentsMargins(8, 6, 8, 6)
        grid.setHorizontalSpacing(12)
        grid.setVerticalSpacing(3)
        # the header says what the numbers are: measured from a recording, and after a clean, estimates
        self.caution = QtWidgets.QLabel(CAUTION)
        self.caution.setObjectName("caution")
        self.caution.setWordWrap(True)
        grid.addWidget(self.caution, 0, 0, 1, 4)
        self.header_now = QtWidgets.QLabel("Track")
        self.header_after = QtWidgets.QLabel("→ Proposal")
        self.header_change = QtWidgets.QLabel("Change")
        for col, label in enumerate((self.header_now, self.header_after, self.header_change), start=1):
            label.setObjectName("totalsHeader")
            label.setAlignment(QtCore.Qt.AlignmentFlag.AlignRight)
            grid.addWidget(label, 1, col)
        self.cells: dict[str, tuple[QtWidgets.QLabel, ...]] = {}
        for row, (name, _) in enumerate(ROWS, start=2):
            name_label = QtWidgets.QLabel(name)
            now, after, change = (QtWidgets.QLabel("–"), QtWidgets.QLabel(""), QtWidgets.QLabel(""))
            after.setObjectName("totalsAfter")
            for col, label in enumerate((now, after, change), start=1):
                label.setAlignment(QtCore.Qt.AlignmentFlag.AlignRight)
                label.setTextInteractionFlags(QtCore.Qt.TextInteractionFlag.TextSelectableByMouse)
                grid.addWidget(label, row, col)
            grid.addWidget(name_label, row, 0)
            self.cells[name] = (now, after, change)
        self.spike_label = QtWidgets.QLabel("")
        self.spike_label.setObjectName("spikeNote")
        self.spike_label.hide()
        # below the last row (rows start at 2, after the caution and the headers)
        grid.addWidget(self.spike_label, len(ROWS) + 2, 0, 1, 4)
        grid.setColumnStretch(0, 1)
        grid.setRowStretch(len(ROWS) + 3, 1)
        self._show_after(False)

    def _show_after(self, visible: bool) -> None:
        if getattr(self, "_after_visible", None) == visible:
            return  # re-laying out the grid costs more than the numbers
        self._after_visible = visible
        self.header_after.setVisible(visible)
        self.header_change.setVisible(visible)
        for now, after, change in self.cells.values():
            after.setVisible(visible)
            change.setVisible(visible)

    def set_units(self, units: UnitSystem) -> None:
        self.units = units
        self._redraw()

    def set_speed_limit(self, limit_mps: float | None, activity_label: str = "") -> None:
        """The highest plausible speed of the track's activity; a max speed above it is flagged."""
        self._limit_mps, self._activity_label = limit_mps, activity_label
        self._redraw()

    def set_track_activity(self, track, geometry, projection) -> None:
        """Flag a max speed above what the activity that the shown track's own speeds suggest can reach.

        ``geometry``: the views' :class:`~editor.views.geometry.TrackGeometry` of ``track`` (its
        planar metres in ``projection`` are reused, nothing is projected again).
        """
        from ..processing.cleaning_base import PlanarTrack, activity_for

        if track is None or len(geometry) != len(track.points) or not geometry.has_time:
            self.set_speed_limit(None)
            return
        plane = PlanarTrack(geometry.x_m, geometry.y_m, geometry.ele_m, geometry.time_s, track.segment_bounds(),
                            projection)
        activity = activity_for(plane, "auto")
        self.set_speed_limit(activity.max_speed_mps, activity.label)

    def set_totals(self, before: Totals | None, after: Totals | None = None) -> None:
        """Show ``before`` (the document) and, when given, ``after`` (the previewed proposal)."""
        self._before, self._after = before, after
        self._redraw()

    def text_of(self, name: str) -> tuple[str, str]:
        """The shown (now, after) texts of one row, e.g. ``"Ascent"``."""
        now, after, _ = self.cells[name]
        return now.text(), after.text()

    def _redraw(self) -> None:
        before, after = self._before, self._after
        self._show_after(after is not None)
        for name, fmt in ROWS:
            now, after_label, change = self.cells[name]
            now.setText("–" if before is None else fmt(before, self.units))
            if after is not None and before is not None:
                after_label.setText(fmt(after, self.units))
                change.setText(_change(before, after, name, self.units))
            else:
                after_label.setText("")
                change.setText("")
        self._flag_speed(before, after)

    def _flag_speed(self, before: Totals | None, after: Totals | None) -> None:
        notes = [spike_note(before, self._limit_mps, self._activity_label, self.units)]
        if after is not None:
            notes.append(spike_note(after, self._limit_mps, self._activity_label, self.units, "The proposal"))
        now, after_label, _ = self.cells["Max speed"]
        for label, note in ((now, notes[0]), (after_label, notes[-1] if after is not None else "")):
            if note:
                label.setText(label.text() + " ⚠")
            label.setToolTip(f"{note} {SPIKE_TIP}" if note else "")
            label.setProperty("flagged", bool(note))
        text = " ".join(n for n in notes if n)
        # One short line fits the dock at any size; the whole explanation is the tooltip.
        short = ("⚠ Max speed: probably a spike" + ("" if notes[0] else " (proposal)")
                 + (f" — over {self.units.speed(self._limit_mps, 0)}" if self._limit_mps else ""))
        self.spike_label.setText(short if text else "")
        self.spike_label.setToolTip(f"{text} {SPIKE_TIP}" if text else "")
        self.spike_label.setVisible(bool(text))
