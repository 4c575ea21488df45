"""The elevation profile: elevation against distance along the track (or against time)."""
from __future__ import annotations

import math

import numpy as np
import pyqtgraph as pg
from PySide6 import QtCore, QtGui, QtWidgets

from ..geo.distance import step_lengths
from ..model.state import EditorState
from .base import LinkedPlot
from .geometry import TrackGeometry, band_outline, lod_indices, take_with_breaks
from .style import Palette
from ..units import METRIC, UnitSystem, format_clock

#: Width of the uncertainty band in standard deviations (a 95 % interval of a normal distribution).
BAND_SIGMAS = 1.96


class ProfileView(LinkedPlot):
    """Elevation (short units) against distance (long units) or clock time.

    Gestures: a drag pans; the wheel zooms distance (elevation follows what is in view) and
    shift+wheel zooms elevation; click selects a point; shift+drag selects a distance range
    (its edges can be dragged); in "Move points" mode a press on a point drags its elevation.

    The distance axis is in the long unit (km, mi), or in the short one (m, ft) for a track
    shorter than one long unit, always without a scale factor in the label.

    Signals
    -------
    elevation_dragged(int row, float ele_m) : an elevation drag finished.
    readout_changed(str) : the text describing the hovered point.
    """

    lod_columns = True
    elevation_dragged = QtCore.Signal(int, float)
    readout_changed = QtCore.Signal(str)

    def __init__(self, state: EditorState, palette: Palette, parent=None) -> None:
        super().__init__(state, palette, parent)
        self.units = METRIC
        self.against_time = False
        self.utc_offset_h = 0.0
        self.x_unit_m, self.x_unit_name = self.units.long_m, self.units.long_name
        self.view_box.setMouseEnabled(x=True, y=True)
        self.plotItem.showGrid(x=True, y=True, alpha=0.25)
        self.plotItem.getAxis("left").setWidth(52)
        p = palette
        # The band's edges (data only, not drawn) and the area between them as one path built from
        # arrays: pyqtgraph's fill-between item rebuilt it in Python (22 ms at 100,000 points).
        self.band_upper = pg.PlotCurveItem(connect="finite")
        self.band_lower = pg.PlotCurveItem(connect="finite")
        self.band_item = QtWidgets.QGraphicsPathItem()
        self.band_item.setBrush(pg.mkBrush(p.rgba("band", 60)))
        self.band_item.setPen(QtGui.QPen(QtCore.Qt.PenStyle.NoPen))
        self.band_item.setZValue(12)
        self.view_box.addItem(self.band_item, ignoreBounds=True)
        # the terrain's own profile under an elevation-from-terrain preview (the ground, for comparison)
        self.terrain_item = pg.PlotCurveItem(connect="finite", pen=pg.mkPen(
            p.qcolor("ink", 140), width=1.2, style=QtCore.Qt.PenStyle.DashLine))
        self.terrain_item.setZValue(13)
        self.view_box.addItem(self.terrain_item, ignoreBounds=True)
        crosshair_pen = pg.mkPen(p.qcolor("hover", 150), width=1, style=QtCore.Qt.PenStyle.DotLine)
        self.v_line = pg.InfiniteLine(angle=90, movable=False, pen=crosshair_pen)
        self.h_line = pg.InfiniteLine(angle=0, movable=False, pen=crosshair_pen)
        for line in (self.v_line, self.h_line):
            line.setZValue(50)
            line.hide()
            self.view_box.addItem(line, ignoreBounds=True)
        self.region = pg.LinearRegionItem(brush=pg.mkBrush(p.rgba("selection", 60)),
                                          pen=pg.mkPen(p.qcolor("ink", 160), width=1.5), swapMode="sort")
        self.region.setZValue(5)
        # Dragging inside a selected stretch pans like anywhere else; its edges still adjust it.
        self.region.setMovable(False)
        for line in self.region.lines:
            line.setMovable(True)
        self.region.hide()
        self.view_box.addItem(self.region, ignoreBounds=True)
        self.region.sigRegionChanged.connect(self._region_moved)
        self._region_start = 0.0
        self._drag_row: int | None = None
        self._setting_region = False
        self.scene().sigMouseMoved.connect(self._mouse_moved)
        for axis in ("left", "bottom"):
            self.plotItem.getAxis(axis).enableAutoSIPrefix(False)
        self._update_labels()

    # --- configuration ----------------------------------------------------------------------------
    def set_units(self, units: UnitSystem) -> None:
        self.units = units
        self._choose_x_unit(self.geometry)
        self._update_labels()
        self.refresh_coordinates()

    def set_time_axis(self, against_time: bool, utc_offset_h: float) -> None:
        """Draw against clock time (at ``utc_offset_h`` hours from UTC) instead of distance."""
        if against_time and not self.geometry.has_time and len(self.geometry):
            against_time = False
        if against_time != self.against_time or not hasattr(self, "_axis_kind"):
            axis = pg.DateAxisItem(orientation="bottom", utcOffset=0) if against_time else pg.AxisItem("bottom")
            axis.setPen(pg.mkPen(self.palette["muted"]))
            axis.setTextPen(pg.mkPen(self.palette["ink"]))
            axis.enableAutoSIPrefix(False)
            self.plotItem.setAxisItems({"bottom": axis})
            self.cache_axes()
            self._axis_kind = against_time
        self.against_time, self.utc_offset_h = against_time, utc_offset_h
        self._update_labels()
        self.refresh_coordinates()

    def refresh_coordinates(self) -> None:
        super().refresh_coordinates()
        # A new axis learns the view's range only when the range next changes; when the refit
        # leaves the range as it was (same numbers), it would keep its default 0..1 ticks.
        self.plotItem.getAxis("bottom").linkedViewChanged(self.view_box)
        self._on_selection(self.state.selection)  # the selected stretch in the new axis units

    def _choose_x_unit(self, geometry: TrackGeometry) -> bool:
        """Metres (feet) for a track shorter than one km (mile); returns whether the unit changed."""
        length = float(geometry.distance_m[-1]) if len(geometry) else 0.0
        u = self.units
        unit = (u.short_m, u.short_name) if 0 < length < u.long_m else (u.long_m, u.long_name)
        changed = unit != (self.x_unit_m, self.x_unit_name)
        self.x_unit_m, self.x_unit_name = unit
        return changed

    def set_geometry(self, geometry: TrackGeometry, fit: bool = False) -> None:
        changed = self._choose_x_unit(geometry)
        if changed:
            self._update_labels()
        super().set_geometry(geometry, fit=fit or (changed and not self.against_time))

    def _update_labels(self) -> None:
        style = {"color": self.palette["ink"], "font-size": "9pt"}
        self.plotItem.setLabel("left", f"Elevation ({self.units.short_name})", **style)
        if self.against_time:
            from ..units import offset_label
            self.plotItem.setLabel("bottom", f"Time ({offset_label(self.utc_offset_h)})", **style)
        else:
            self.plotItem.setLabel("bottom", f"Distance ({self.x_unit_name})", **style)

    # --- wheel ------------------------------------------------------------------------------------
    def wheel_axis(self, modifiers) -> int | None:
        """The wheel zooms distance; with shift it zooms elevation."""
        return 1 if modifiers & QtCore.Qt.KeyboardModifier.ShiftModifier else 0

    def wheel_zoomed(self, axis: int | None) -> None:
        if axis == 0:
            self.fit_elevation_to_view()

    def fit_elevation_to_view(self) -> None:
        """Elevation range of the points within the shown distance (or time) range."""
        x, y = self._xy
        (x0, x1), _ = self.view_box.viewRange()
        with np.errstate(invalid="ignore"):
            inside = (x >= x0) & (x <= x1) & np.isfinite(y)
        if not inside.any():
            return
        lo, hi = float(y[inside].min()), float(y[inside].max())
        pad = max((hi - lo) * 0.08, 2.0 / self.units.short_m)
        self.view_box.setYRange(lo - pad, hi + pad, padding=0)

    # --- coordinates ------------------------------------------------------------------------------
    def x_axis_values(self, geometry: TrackGeometry) -> np.ndarray:
        if self.against_time:
            return geometry.time_s + self.utc_offset_h * 3600.0
        return geometry.distance_m / self.x_unit_m

    def track_xy(self, geometry: TrackGeometry):
        return self.x_axis_values(geometry), geometry.ele_m / self.units.short_m

    def proposal_xy(self, proposal):
        if self.against_time:
            x = proposal.points.time_s() + self.utc_offset_h * 3600.0
        else:
            x = self._proposal_distance(proposal)
        return x, proposal.points.ele / self.units.short_m

    def _proposal_distance(self, proposal) -> np.ndarray:
        """Distance axis (display units) for a proposal's rows.

        A row that comes from an original row sits exactly where that row sits, so the two
        curves line up point for point; inserted rows share out the stretch between the kept
        rows around them in proportion to their distance along the proposed path (the core's
        step lengths), so the axis stays in order.
        """
        x_orig = self._xy[0]
        src = proposal.source_rows
        known = (src >= 0) & (src < len(x_orig))
        x = np.full(len(src), np.nan)
        x[known] = x_orig[src[known]]
        if known.all() or not known.any():
            return x
        p = proposal.points
        steps = np.nan_to_num(step_lengths(p.lat, p.lon), nan=0.0) / self.x_unit_m
        along = np.concatenate(([0.0], np.cumsum(steps)))
        idx = np.arange(len(src))
        before = np.maximum.accumulate(np.where(known, idx, -1))
        after = np.minimum.accumulate(np.where(known, idx, len(src))[::-1])[::-1]
        inside = ~known & (before >= 0) & (after < len(src))
        b, a = before[inside], after[inside]
        span = along[a] - along[b]
        with np.errstate(invalid="ignore", divide="ignore"):
            share = np.where(span > 0, (along[inside] - along[b]) / span, 0.5)
        x[inside] = x[b] + (x[a] - x[b]) * share
        # Rows added before the first or after the last kept row continue along the path.
        head, tail = ~known & (before < 0), ~known & (after >= len(src))
        if head.any():
            first = int(np.argmax(known))
            x[head] = x[first] - (along[first] - along[head])
        if tail.any():
            last = len(src) - 1 - int(np.argmax(known[::-1]))
            x[tail] = x[last] + along[tail] - along[last]
        return x

    def refresh_layers(self) -> None:
        super().refresh_layers()
        proposal = self.state.preview
        self._draw_terrain(proposal)
        sigma = None if proposal is None else proposal.sigma_v_m
        if sigma is None or self._proposal_xy is None or proposal.track != self.state.track:
            self._set_band(np.zeros(0), np.zeros(0), np.zeros(0))
            return
        px, py = self._proposal_xy
        if self._highlight is not None and len(self._highlight.proposed) == len(py):
            py = np.where(self._highlight.proposed, py, np.nan)  # the band only where the track changes
        half = BAND_SIGMAS * np.asarray(sigma, dtype=np.float64) / self.units.short_m
        rect, pixel = self._visible()
        rows = lod_indices(px, py, rect, pixel, columns=True)
        self._set_band(take_with_breaks(px, rows), take_with_breaks(py + half, rows),
                       take_with_breaks(py - half, rows))

    def _set_band(self, x: np.ndarray, upper: np.ndarray, lower: np.ndarray) -> None:
        self.band_upper.setData(x, upper, connect="finite")
        self.band_lower.setData(x, lower, connect="finite")
        outline = band_outline(x, upper, lower)
        self.band_item.setPath(pg.arrayToQPath(*outline, connect="finite") if len(outline[0])
                               else QtGui.QPainterPath())

    def _draw_terrain(self, proposal) -> None:
        """The terrain heights a proposal carries (``info["terrain_profile"]``, per proposed row) as a line."""
        ground = None if proposal is None else proposal.info.get("terrain_profile")
        if (ground is None or self._proposal_xy is None or proposal.track != self.state.track
                or len(ground) != len(self._proposal_xy[0])):
            self.terrain_item.setData([], [])
            return
        px, _ = self._proposal_xy
        gy = np.asarray(ground, dtype=np.float64) / self.units.short_m
        rect, pixel = self._visible()
        rows = lod_indices(px, gy, rect, pixel, columns=True)
        self.terrain_item.setData(take_with_breaks(px, rows), take_with_breaks(gy, rows), connect="finite")

    # --- hover and readout ------------------------------------------------------------------------
    def _row_at_x(self, x_value: float) -> int | None:
        xs = self._xy[0]
        if not len(xs):
            return None
        if not self.against_time:
            i = int(np.clip(np.searchsorted(xs, x_value), 0, len(xs) - 1))
            if i > 0 and abs(xs[i - 1] - x_value) <= abs(xs[i] - x_value):
                i -= 1
            return i
        d = np.abs(xs - x_value)
        return int(np.nanargmin(d)) if np.isfinite(d).any() else None

    def _mouse_moved(self, scene_pos: QtCore.QPointF) -> None:
        if self._drag_row is not None or not self.view_box.sceneBoundingRect().contains(scene_pos):
            return
        pos = self.view_box.mapSceneToView(scene_pos)
        self.state.set_hover(self._row_at_x(pos.x()))
        self.update_cursor(pos)

    def _on_hover(self, row):
        super()._on_hover(row)
        x, y = self._xy
        if row is None or not 0 <= row < len(x) or not np.isfinite(x[row]):
            self.v_line.hide()
            self.h_line.hide()
            self.readout_changed.emit("")
            return
        self.v_line.setPos(x[row])
        self.v_line.show()
        if np.isfinite(y[row]):
            self.h_line.setPos(y[row])
            self.h_line.show()
        else:
            self.h_line.hide()
        self.readout_changed.emit(self.readout(row))

    def readout(self, row: int) -> str:
        """Distance, elevation, grade, speed and time of ``row``, in the chosen units."""
        g = self.geometry
        u = self.units
        grade = g.grade_at(row)
        parts = [f"point {row + 1:,}",
                 f"distance {u.long(g.distance_m[row])}",
                 f"elevation {u.short(g.ele_m[row])}",
                 "grade –" if not math.isfinite(grade) else f"grade {grade * 100:+.1f} %"]
        if g.has_time:
            parts.append(f"speed {u.speed(g.speed_at(row))}")
            parts.append(format_clock(g.time_s[row], self.utc_offset_h))
        return "   ".join(parts)

    # --- selection region -------------------------------------------------------------------------
    def _on_selection(self, rows):
        super()._on_selection(rows)
        x = self._xy[0]
        rows = rows[(rows >= 0) & (rows < len(x))]
        if len(rows) < 2 or self._setting_region:
            if not self._setting_region:
                self.region.hide()
            return
        lo, hi = np.nanmin(x[rows]), np.nanmax(x[rows])
        if not (np.isfinite(lo) and np.isfinite(hi)):
            return
        self._setting_region = True
        try:
            self.region.setRegion((lo, hi))
            self.region.show()
        finally:
            self._setting_region = False

    def _region_moved(self) -> None:
        if self._setting_region or not self.region.isVisible():
            return
        self.select_x_range(*self.region.getRegion())

    def select_x_range(self, low: float, high: float) -> None:
        """Select the rows whose x (distance or time, axis units) lies in ``[low, high]``."""
        self._setting_region = True
        try:
            self.state.set_selection(self.geometry.rows_in_range(self._xy[0], min(low, high), max(low, high)))
        finally:
            self._setting_region = False

    # --- gestures ---------------------------------------------------------------------------------
    def gesture_started(self, pos, modifiers):
        if modifiers & QtCore.Qt.KeyboardModifier.ShiftModifier:
            self._region_start = pos.x()
            self._setting_region = True
            self.region.setRegion((pos.x(), pos.x()))
            self.region.show()
            self._setting_region = False
            return "region"
        row = self.grabbable_row(pos)
        if row is not None:
            self._drag_row = row
            self.state.set_hover(row)
            self.update_cursor(pos, moving=True)
            self.move_status.emit(f"Changing the elevation of point {row + 1:,}: release to keep it")
            return "point"
        return None  # a plain drag pans

    def gesture_moved(self, gesture, pos):
        if gesture == "region":
            self._setting_region = True
            self.region.setRegion((self._region_start, pos.x()))
            self._setting_region = False
            self.select_x_range(self._region_start, pos.x())
        elif gesture == "point":
            self.show_drag(self._drag_row, pos.y())

    def show_drag(self, row: int, y_value: float) -> None:
        """Rubber band of a point whose elevation is being dragged to ``y_value`` (display units)."""
        x, y = self._xy
        lo, hi = max(row - 1, 0), min(row + 2, len(x))
        ys = y[lo:hi].copy()
        ys[row - lo] = y_value
        self.drag_item.setData(x[lo:hi], ys)
        self.hover_item.setData([x[row]], [y_value])
        self.h_line.setPos(y_value)

    def gesture_finished(self, gesture, pos):
        if gesture == "region":
            self.select_x_range(self._region_start, pos.x())
            if len(self.state.selection) == 0:
                self.region.hide()
        elif gesture == "point":
            row, self._drag_row = self._drag_row, None
            self.drag_item.setData([], [])
            self.update_cursor(pos)
            self.move_status.emit("")
            if row is not None:
                ele_m = float(pos.y()) * self.units.short_m
                if ele_m != self.geometry.ele_m[row]:
                    self.elevation_dragged.emit(row, ele_m)
            self._on_hover(self.state.hover)
