"""The planar map: the track in metres of the local projection, north up, 1:1."""
from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6 import QtCore, QtGui, QtWidgets

from ..geo.projection import LocalProjection
from ..model.state import EditorState
from .background.attribution import AttributionLabel
from .background.layer import BackgroundLayer
from .base import GRAB_PX, LinkedPlot
from .gesture_box import PassiveScatter
from .geometry import TrackGeometry, lod_indices, take_with_breaks
from .style import Palette
from ..units import METRIC, UnitSystem

#: Waypoint names are drawn for at most this many waypoints.
LABEL_LIMIT = 200


class ScaleBar(pg.GraphicsWidgetAnchor, pg.GraphicsObject):
    """A round-length bar in the chosen units and a north arrow, in the view's lower left corner."""

    def __init__(self, palette: Palette) -> None:
        pg.GraphicsObject.__init__(self)
        pg.GraphicsWidgetAnchor.__init__(self)
        self.setAcceptedMouseButtons(QtCore.Qt.MouseButton.NoButton)
        self._palette = palette
        self._units = METRIC
        self._bar_px = 0.0
        self._label = ""

    def set_units(self, units: UnitSystem) -> None:
        self._units = units
        self.update_bar()

    def update_bar(self) -> None:
        view = self.parentItem()
        if view is None:
            return
        metres_per_px = view.viewPixelSize()[0]
        length_m, self._label = self._units.nice_length(140 * metres_per_px)
        self._bar_px = length_m / metres_per_px if metres_per_px > 0 else 0.0
        self.prepareGeometryChange()
        self.update()

    def boundingRect(self) -> QtCore.QRectF:
        return QtCore.QRectF(-4, -70, 200, 76)

    def paint(self, painter: QtGui.QPainter, *args) -> None:
        ink = self._palette.qcolor("ink")
        painter.setRenderHint(QtGui.QPainter.RenderHint.Antialiasing)
        painter.setPen(QtGui.QPen(ink, 1.5))
        painter.setBrush(QtGui.QColor(255, 255, 255, 200))
        w = self._bar_px
        if w > 0:
            painter.fillRect(QtCore.QRectF(0, -6, w / 2, 6), ink)
            painter.drawRect(QtCore.QRectF(0, -6, w, 6))
            font = painter.font()
            font.setPointSizeF(9.5)
            font.setBold(True)
            painter.setFont(font)
            painter.drawText(QtCore.QPointF(0, -10), self._label)
        # North arrow: the projection's y axis points to grid north at the origin.
        arrow = QtGui.QPolygonF([QtCore.QPointF(12, -62), QtCore.QPointF(19, -42), QtCore.QPointF(12, -47),
                                 QtCore.QPointF(5, -42)])
        painter.setBrush(ink)
        painter.drawPolygon(arrow)
        painter.drawText(QtCore.QPointF(24, -46), "N")


class MapView(LinkedPlot):
    """Track lines per segment, points when zoomed in, segment ends and waypoints.

    Besides the shown track it draws the file's other tracks (thin, muted) and its routes
    (dashed, with their route points) for context; only the shown track is edited.

    Gestures: a drag pans; click selects a point; shift+drag (or any drag in box mode)
    selects a box; in "Move points" mode a press on a point (the pointer shows a hand)
    drags it.

    Signals
    -------
    point_dragged(int row, float x_m, float y_m) : a point drag finished at planar (x, y).
    """

    point_dragged = QtCore.Signal(int, float, float)

    def __init__(self, state: EditorState, palette: Palette, parent=None) -> None:
        super().__init__(state, palette, parent)
        self.projection = LocalProjection(0.0, 0.0)
        self.box_mode = False
        self.units = METRIC
        self.view_box.setAspectLocked(True, 1.0)
        self.plotItem.hideAxis("left")
        self.plotItem.hideAxis("bottom")
        p = palette
        self.start_item = PassiveScatter(symbol="o", size=11, pen=pg.mkPen("w", width=1.5),
                                             brush=pg.mkBrush(p.qcolor("inserted")))
        self.end_item = PassiveScatter(symbol="s", size=10, pen=pg.mkPen("w", width=1.5),
                                           brush=pg.mkBrush(p.qcolor("ink")))
        self.waypoint_item = PassiveScatter(symbol="star", size=15, pen=pg.mkPen("w", width=1),
                                                brush=pg.mkBrush(p.qcolor("waypoint")))
        self.other_tracks_item = pg.PlotCurveItem(pen=pg.mkPen(p.qcolor("muted", 170), width=1.5),
                                                  connect="finite", skipFiniteCheck=True)
        self.routes_item = pg.PlotCurveItem(pen=pg.mkPen(p.qcolor("waypoint"), width=2,
                                                         style=QtCore.Qt.PenStyle.DashLine),
                                            connect="finite", skipFiniteCheck=True)
        self.route_points_item = PassiveScatter(symbol="t1", size=8, pen=pg.mkPen("w", width=1),
                                                brush=pg.mkBrush(p.qcolor("waypoint")))
        for z, item in enumerate((self.other_tracks_item, self.routes_item, self.route_points_item)):
            item.setZValue(2 + z)  # under the shown track
            self.view_box.addItem(item, ignoreBounds=True)
        empty = np.zeros(0)
        self._context = {"tracks": (empty, empty), "routes": (empty, empty), "waypoints": (empty, empty)}
        for z, item in enumerate((self.start_item, self.end_item, self.waypoint_item)):
            item.setZValue(40 + z)
            self.view_box.addItem(item, ignoreBounds=True)
        self._labels: list[pg.TextItem] = []
        self._box = QtWidgets.QGraphicsRectItem()
        self._box.setPen(pg.mkPen(p.qcolor("ink"), width=1, style=QtCore.Qt.PenStyle.DashLine))
        self._box.setBrush(pg.mkBrush(p.rgba("selection", 70)))
        self._box.setZValue(60)
        self._box.hide()
        self.view_box.addItem(self._box, ignoreBounds=True)
        self._box_start: QtCore.QPointF | None = None
        self._drag_row: int | None = None
        self.scale_bar = ScaleBar(palette)
        self.scale_bar.setParentItem(self.view_box)
        self.scale_bar.anchor(itemPos=(0, 1), parentPos=(0, 1), offset=(14, -12))
        self.background: BackgroundLayer | None = None
        self.background_opacity = 1.0
        self.attribution_label = AttributionLabel()
        self.attribution_label.setParentItem(self.view_box)
        self.attribution_label.anchor(itemPos=(1, 1), parentPos=(1, 1), offset=(-2, -2))
        self.attribution_label.set_text("")
        self.scene().sigMouseMoved.connect(self._mouse_moved)

    # --- background -------------------------------------------------------------------------------
    def set_background(self, layer: BackgroundLayer | None) -> None:
        """Draw ``layer`` under the track (``None``: no background); the previous layer is shut down."""
        if self.background is not None:
            self.view_box.removeItem(self.background)
            self.background.shutdown()
        self.background = layer
        self.attribution_label.set_text(layer.attribution() if layer is not None else "")
        if layer is not None:
            layer.set_projection(self.projection)
            layer.setOpacity(self.background_opacity)
            self.view_box.addItem(layer, ignoreBounds=True)
            self._update_background()

    def set_background_opacity(self, opacity: float) -> None:
        self.background_opacity = min(max(float(opacity), 0.0), 1.0)
        if self.background is not None:
            self.background.setOpacity(self.background_opacity)

    def _update_background(self) -> None:
        # Nothing shown yet (no document): ask for no tiles, so starting the editor fetches nothing.
        if self.background is not None and (len(self.geometry) or len(self.waypoint_item.data)):
            px = self.view_box.viewPixelSize()[0]
            self.background.set_view(self.view_box.viewRect(), px, self.devicePixelRatioF())

    def set_units(self, units: UnitSystem) -> None:
        self.units = units
        self.scale_bar.set_units(units)

    def set_projection(self, projection: LocalProjection) -> None:
        self.projection = projection
        if self.background is not None:
            self.background.set_projection(projection)

    def track_xy(self, geometry: TrackGeometry):
        return geometry.x_m, geometry.y_m

    def prepare_proposal_xy(self, proposal, xy: tuple[np.ndarray, np.ndarray]) -> None:
        """Planar coordinates of ``proposal`` computed elsewhere (a worker), used when it is shown."""
        self._prepared = (proposal, xy)

    def _on_preview(self, proposal) -> None:
        if proposal is None:
            self._prepared = None  # do not keep a discarded proposal alive
        super()._on_preview(proposal)

    def proposal_xy(self, proposal):
        prepared = getattr(self, "_prepared", None)
        if prepared is not None and prepared[0] is proposal:
            return prepared[1]
        return self.projection.to_xy(proposal.points.lat, proposal.points.lon)

    def set_waypoints(self, lat: np.ndarray, lon: np.ndarray, names: np.ndarray) -> None:
        for label in self._labels:
            self.view_box.removeItem(label)
        self._labels = []
        if not len(lat):
            self.waypoint_item.setData([], [])
            self._context["waypoints"] = (np.zeros(0), np.zeros(0))
            return
        x, y = self.projection.to_xy(lat, lon)
        self._context["waypoints"] = (x, y)
        self.waypoint_item.setData(x, y)
        for xi, yi, name in list(zip(x, y, names))[:LABEL_LIMIT]:
            if not name:
                continue
            label = pg.TextItem(str(name), color=self.palette["waypoint"], anchor=(0, 1.2),
                                fill=pg.mkBrush(255, 255, 255, 170))
            label.setPos(xi, yi)
            label.setZValue(45)
            self.view_box.addItem(label, ignoreBounds=True)
            self._labels.append(label)

    def set_context(self, tracks: list[tuple[np.ndarray, np.ndarray]],
                    routes: list[tuple[np.ndarray, np.ndarray]]) -> None:
        """The file's other tracks and its routes, as (lat, lon) arrays, drawn for context.

        Call before :meth:`set_geometry` with ``fit`` so the fitted view includes them.
        """
        def joined(lines):
            xs, ys = [], []
            for lat, lon in lines:
                if len(lat):
                    x, y = self.projection.to_xy(np.asarray(lat), np.asarray(lon))
                    xs += [x, [np.nan]]
                    ys += [y, [np.nan]]
            return (np.concatenate(xs), np.concatenate(ys)) if xs else (np.zeros(0), np.zeros(0))

        self._context["tracks"] = joined(tracks)
        self._context["routes"] = joined(routes)
        rx, ry = self._context["routes"]
        ok = np.isfinite(rx)
        self.route_points_item.setData(rx[ok], ry[ok])
        self._refresh_timer.start()

    def data_rect(self) -> QtCore.QRectF | None:
        """The shown track with everything else in the file (other tracks, routes, waypoints)."""
        xs = [self._xy[0]] + [c[0] for c in self._context.values()]
        ys = [self._xy[1]] + [c[1] for c in self._context.values()]
        x, y = np.concatenate(xs), np.concatenate(ys)
        ok = np.isfinite(x) & np.isfinite(y)
        if not ok.any():
            return None
        x0, x1, y0, y1 = x[ok].min(), x[ok].max(), y[ok].min(), y[ok].max()
        return QtCore.QRectF(x0, y0, max(x1 - x0, 1e-6), max(y1 - y0, 1e-6))

    def set_geometry(self, geometry: TrackGeometry, fit: bool = False) -> None:
        super().set_geometry(geometry, fit)
        starts = geometry.segment_starts[geometry.segment_starts < len(geometry)]
        ends = geometry.segment_ends()
        self.start_item.setData(geometry.x_m[starts], geometry.y_m[starts])
        self.end_item.setData(geometry.x_m[ends], geometry.y_m[ends])

    def after_refresh(self) -> None:
        rect, pixel = self._visible()
        for item, key in ((self.other_tracks_item, "tracks"), (self.routes_item, "routes")):
            x, y = self._context[key]
            rows = lod_indices(x, y, rect, pixel)
            item.setData(take_with_breaks(x, rows), take_with_breaks(y, rows), connect="finite")
        self.scale_bar.update_bar()
        self._update_background()

    # --- gestures -------------------------------------------------------------------------------
    def _mouse_moved(self, scene_pos: QtCore.QPointF) -> None:
        if self._drag_row is not None or not self.view_box.sceneBoundingRect().contains(scene_pos):
            return
        pos = self.view_box.mapSceneToView(scene_pos)
        self.state.set_hover(self.nearest_row(pos, radius_px=3 * GRAB_PX))
        self.update_cursor(pos)

    def gesture_started(self, pos, modifiers):
        shift = bool(modifiers & QtCore.Qt.KeyboardModifier.ShiftModifier)
        if shift or self.box_mode:
            self._box_start = pos
            self._box.setRect(QtCore.QRectF(pos, pos))
            self._box.show()
            return "box"
        row = self.grabbable_row(pos)
        if row is not None:
            self._drag_row = row
            self.state.set_hover(row)
            if row not in self.state.selection:
                self.state.set_selection([row])
            self.update_cursor(pos, moving=True)
            self.move_status.emit(f"Moving point {row + 1:,}: release to put it there")
            return "point"
        return None  # a plain drag pans

    def gesture_moved(self, gesture, pos):
        if gesture == "box":
            self._box.setRect(QtCore.QRectF(self._box_start, pos).normalized())
        elif gesture == "point":
            self.show_drag(self._drag_row, pos.x(), pos.y())

    def show_drag(self, row: int, x_m: float, y_m: float) -> None:
        """Draw the rubber band of a point being moved to planar ``(x_m, y_m)``."""
        gx, gy = self.geometry.x_m, self.geometry.y_m
        seg = int(self.geometry.segment_of(row))
        start = int(self.geometry.segment_starts[seg])
        stop = int(self.geometry.segment_starts[seg + 1]) if seg + 1 < len(self.geometry.segment_starts) \
            else len(gx)
        xs, ys = [x_m], [y_m]
        if row - 1 >= start:
            xs.insert(0, gx[row - 1])
            ys.insert(0, gy[row - 1])
        if row + 1 < stop:
            xs.append(gx[row + 1])
            ys.append(gy[row + 1])
        self.drag_item.setData(np.array(xs), np.array(ys))
        self.hover_item.setData([x_m], [y_m])

    def gesture_finished(self, gesture, pos):
        if gesture == "box":
            self._box.hide()
            rect = QtCore.QRectF(self._box_start, pos).normalized()
            x, y = self._xy
            with np.errstate(invalid="ignore"):
                inside = (x >= rect.left()) & (x <= rect.right()) & (y >= rect.top()) & (y <= rect.bottom())
            self.state.set_selection(np.flatnonzero(inside))
        elif gesture == "point":
            row, self._drag_row = self._drag_row, None
            self.drag_item.setData([], [])
            self.update_cursor(pos)
            self.move_status.emit("")
            if row is not None and (pos.x(), pos.y()) != (self._xy[0][row], self._xy[1][row]):
                self.point_dragged.emit(row, float(pos.x()), float(pos.y()))
            self._on_hover(self.state.hover)

    def detach(self) -> None:
        self.set_background(None)  # stops the background's worker thread
        super().detach()
