"""What the map and the profile share: linked drawing layers over one EditorState.

A :class:`LinkedPlot` draws the shown track, the selection, the hover marker
and the pending proposal from the shared :class:`~editor.model.EditorState`
and writes the user's gestures back into it as row indices. It never talks to
another view. Subclasses choose the coordinates (planar metres, or distance
and elevation) and the gestures.
"""
from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6 import QtCore, QtGui, QtWidgets

from ..model.state import EditorState
from .gesture_box import GestureViewBox, PassiveScatter
from .geometry import ChangeHighlight, TrackGeometry, change_highlight, edge_rows, lod_indices, take_with_breaks
from .style import Palette

#: Measured points are drawn as dots only when at most this many are on screen.
POINT_LIMIT = 1500
#: ... and only when consecutive points are at least this far apart on screen (median, pixels).
MIN_POINT_SPACING_PX = 3.0
#: Marker layers (removed, inserted) thin out to about this many on screen.
MARKER_LIMIT = 3000
#: Above this many vertices a line is drawn the cheap way (hairline, or without antialiasing):
#: Qt strokes wide antialiased paths of thousands of short segments several times slower.
DENSE_VERTICES = 3000
#: Tools whose proposals show their kept points instead of removal crosses (simplification
#: removes thousands of points; crosses would hide the result).
SHOW_KEPT_TOOLS = ("simplify",)
#: Pick radius for points, in screen pixels: a click this close to a point selects it, and in
#: "Move points" mode a press this close grabs it (the pointer shows a hand first).
GRAB_PX = 9.0


def _curve(pen) -> pg.PlotCurveItem:
    item = pg.PlotCurveItem(pen=pen, connect="finite", skipFiniteCheck=True)
    return item


class LinkedPlot(pg.PlotWidget):
    """Base of the map and profile views.

    ``lod_columns``: x grows along the track, so the line is thinned per pixel column.

    Subclasses implement :meth:`track_xy` and :meth:`proposal_xy` and may add
    gestures. ``geometry`` is set by the window with :meth:`set_geometry`.
    """

    lod_columns = False
    #: While a point is being moved: what is happening, for the status bar ("" when it ends).
    move_status = QtCore.Signal(str)

    def __init__(self, state: EditorState, palette: Palette, parent=None, **kwargs) -> None:
        self.view_box = GestureViewBox(self)
        super().__init__(parent=parent, viewBox=self.view_box, background=palette["paper"], **kwargs)
        self.state = state
        self.palette = palette
        self.geometry = TrackGeometry.empty()
        self._xy = (np.zeros(0), np.zeros(0))
        self._xy_version = 0  # grows whenever _xy is replaced (keys of the drawn lines)
        self._proposal_xy: tuple[np.ndarray, np.ndarray] | None = None
        self._selected_mask = np.zeros(0, dtype=bool)
        self._breaks = np.zeros(0, dtype=bool)
        self._highlight: ChangeHighlight | None = None
        self.move_mode = False
        self.plotItem.hideButtons()
        self.plotItem.setMenuEnabled(False)
        for axis in ("left", "bottom"):
            ax = self.plotItem.getAxis(axis)
            ax.setPen(pg.mkPen(palette["muted"]))
            ax.setTextPen(pg.mkPen(palette["ink"]))
        self.cache_axes()
        p = palette
        halo = pg.mkPen(p.qcolor("selection"), width=9)
        halo.setCapStyle(QtCore.Qt.PenCapStyle.RoundCap)
        halo.setJoinStyle(QtCore.Qt.PenJoinStyle.RoundJoin)
        self.selection_item = _curve(halo)
        self.track_item = _curve(pg.mkPen(p.qcolor("track"), width=2))
        # During a preview the stretches the proposal changes are drawn faded; the rest stays as is.
        self.faded_item = _curve(pg.mkPen(p.qcolor("track", 90), width=2))
        # Selected points as rings, so one selected point shows too (a one-point line draws nothing).
        self.selected_points_item = PassiveScatter(size=11, pen=pg.mkPen(p.qcolor("ink"), width=1.2),
                                                   brush=pg.mkBrush(p.qcolor("selection")))
        self.points_item = PassiveScatter(size=5, pen=pg.mkPen(p.qcolor("paper"), width=0.8),
                                              brush=pg.mkBrush(p.qcolor("point")))
        self.proposal_item = _curve(pg.mkPen(p.qcolor("proposal"), width=3))
        self.removed_item = PassiveScatter(symbol="x", size=9, pen=pg.mkPen(p.qcolor("removed"), width=1.5),
                                               brush=pg.mkBrush(p.qcolor("removed")))
        self.inserted_item = PassiveScatter(symbol="d", size=9, pen=pg.mkPen(p.qcolor("paper"), width=1),
                                                brush=pg.mkBrush(p.qcolor("inserted")))
        self.kept_item = PassiveScatter(size=6, pen=pg.mkPen(p.qcolor("paper"), width=0.8),
                                        brush=pg.mkBrush(p.qcolor("proposal")))
        self.drag_item = _curve(pg.mkPen(p.qcolor("proposal"), width=2, style=QtCore.Qt.PenStyle.DashLine))
        self.hover_item = PassiveScatter(size=13, pen=pg.mkPen(p.qcolor("hover"), width=2.5),
                                             brush=pg.mkBrush(255, 255, 255, 200))
        for z, item in enumerate((self.selection_item, self.faded_item, self.track_item,
                                  self.selected_points_item, self.points_item,
                                  self.proposal_item, self.removed_item, self.inserted_item, self.kept_item,
                                  self.drag_item, self.hover_item)):
            item.setZValue(10 + z)
            self.view_box.addItem(item, ignoreBounds=True)
        self._refresh_timer = QtCore.QTimer(self, singleShot=True, interval=0)
        self._refresh_timer.timeout.connect(self.refresh_layers)
        self.view_box.sigRangeChanged.connect(lambda *_: self._refresh_timer.start())
        self.view_box.sigResized.connect(lambda *_: self._refresh_timer.start())
        state.selection_changed.connect(self._on_selection)
        state.hover_changed.connect(self._on_hover)
        state.preview_changed.connect(self._on_preview)

    # --- data -----------------------------------------------------------------------------------
    def track_xy(self, geometry: TrackGeometry) -> tuple[np.ndarray, np.ndarray]:
        raise NotImplementedError

    def proposal_xy(self, proposal) -> tuple[np.ndarray, np.ndarray]:
        raise NotImplementedError

    def set_geometry(self, geometry: TrackGeometry, fit: bool = False) -> None:
        """Show a (new or edited) track; ``fit`` zooms to it."""
        self.geometry = geometry
        self._xy = self.track_xy(geometry)
        self._xy_version += 1
        self._breaks = geometry.breaks_after()
        self._selected_mask = np.zeros(len(geometry), dtype=bool)
        sel = self.state.selection
        self._selected_mask[sel[sel < len(geometry)]] = True
        self._proposal_xy = None
        if self.state.preview is not None:
            self._on_preview(self.state.preview)
        self.drag_item.setData([], [])
        if fit:
            self.fit_all()
        self.refresh_layers()
        self._on_hover(self.state.hover)

    def refresh_coordinates(self) -> None:
        """Recompute the view coordinates (after a unit or axis change)."""
        self._xy = self.track_xy(self.geometry)
        self._xy_version += 1
        if self.state.preview is not None:
            self._proposal_xy = self.proposal_xy(self.state.preview)
        self.fit_all()
        self.refresh_layers()
        self._on_hover(self.state.hover)

    def data_rect(self) -> QtCore.QRectF | None:
        x, y = self._xy
        ok = np.isfinite(x) & np.isfinite(y)
        if not ok.any():
            return None
        x0, x1, y0, y1 = x[ok].min(), x[ok].max(), y[ok].min(), y[ok].max()
        return QtCore.QRectF(x0, y0, max(x1 - x0, 1e-6), max(y1 - y0, 1e-6))

    def fit_all(self) -> None:
        rect = self.data_rect()
        if rect is not None:
            self.view_box.setRange(rect, padding=0.06)

    def fit_rows(self, rows: np.ndarray) -> None:
        x, y = self._xy
        rows = np.asarray(rows, dtype=np.int64)
        rows = rows[(rows >= 0) & (rows < len(x))]
        if not len(rows):
            return
        xs, ys = x[rows], y[rows]
        ok = np.isfinite(xs) & np.isfinite(ys)
        if ok.any():
            x0, x1, y0, y1 = xs[ok].min(), xs[ok].max(), ys[ok].min(), ys[ok].max()
            self.view_box.setRange(QtCore.QRectF(x0, y0, max(x1 - x0, 1.0), max(y1 - y0, 1.0)), padding=0.15)

    # --- drawing --------------------------------------------------------------------------------
    def _visible(self) -> tuple[tuple[float, float, float, float], tuple[float, float]]:
        r = self.view_box.viewRect()
        px = self.view_box.viewPixelSize()
        return (r.left(), r.top(), r.right(), r.bottom()), (px[0], px[1])

    def cache_axes(self) -> None:
        """Draw the axes from a pixmap cache: they change only when the view range does, while a
        preview or a drag repaints the plot many times (their tick text cost ~13 ms a paint)."""
        for axis in ("left", "bottom"):
            self.plotItem.getAxis(axis).setCacheMode(QtWidgets.QGraphicsItem.CacheMode.DeviceCoordinateCache)

    def _lod_line(self, item: pg.PlotCurveItem, x: np.ndarray, y: np.ndarray, breaks=None,
                  key: tuple | None = None) -> None:
        """Draw the line through ``x, y`` with as many vertices as the screen can show.

        ``key``: what the arrays were made from; when it equals the key of what ``item`` already
        shows (the unchanged track during a preview, the same view), nothing is recomputed.
        """
        rect, pixel = self._visible()
        if key is not None:
            key = (*key, rect, pixel)
            if getattr(item, "lod_key", None) == key:
                return
        item.lod_key = key
        rows = lod_indices(x, y, rect, pixel, breaks, columns=self.lod_columns)
        # at more than about a vertex per pixel column, antialiasing adds little and costs a lot
        dense = len(rows) > DENSE_VERTICES or (self.lod_columns and len(rows) > 1.5 * self.view_box.width())
        pen = QtGui.QPen(item.opts["pen"])
        base_width = item.base_width if hasattr(item, "base_width") else pen.widthF()
        item.base_width = base_width
        if (item is self.track_item and dense) or item is self.faded_item:
            pen.setWidthF(1.0)           # the hairline path is fast even antialiased
            item.opts["antialias"] = True
        else:
            pen.setWidthF(base_width)
            item.opts["antialias"] = not dense
        item.setPen(pen)
        item.setData(take_with_breaks(x, rows), take_with_breaks(y, rows), connect="finite")

    def _lod_markers(self, item: pg.ScatterPlotItem, x: np.ndarray, y: np.ndarray, limit: int,
                     thin: bool) -> int:
        rect, _ = self._visible()
        with np.errstate(invalid="ignore"):
            inside = np.flatnonzero((x >= rect[0]) & (x <= rect[2]) & (y >= rect[1]) & (y <= rect[3]))
        if len(inside) > limit:
            if not thin:
                item.setData([], [])
                return len(inside)
            inside = inside[:: int(np.ceil(len(inside) / limit))]
        item.setData(x[inside], y[inside])
        return len(inside)

    def _draw_points(self, x: np.ndarray, y: np.ndarray) -> None:
        """Measured points as dots, only while few enough are on screen and they stand apart:
        overlapping dots hide the line and make a point impossible to pick."""
        if self._lod_markers(self.points_item, x, y, POINT_LIMIT, thin=False) <= POINT_LIMIT:
            px, py = self.points_item.getData()
            pw, ph = self.view_box.viewPixelSize()
            with np.errstate(invalid="ignore"):
                steps = np.hypot(np.diff(px) / pw, np.diff(py) / ph)
            if len(steps) > 10 and np.nanmedian(steps) < MIN_POINT_SPACING_PX:
                self.points_item.setData([], [])

    def points_visible(self) -> bool:
        """Whether measured points are currently drawn (the view is zoomed in far enough)."""
        return len(self.points_item.data) > 0

    def _shown_proposal(self):
        """The previewed proposal if it belongs to the shown track and has been laid out here."""
        proposal = self.state.preview
        if proposal is None or self._proposal_xy is None or proposal.track != self.state.track:
            return None
        return proposal

    def refresh_layers(self) -> None:
        x, y = self._xy
        proposal = self._shown_proposal()
        highlight = self._highlight if proposal is not None else None
        if highlight is not None and len(highlight.original) == len(x):
            # Unchanged stretches as the track; changed ones faded under the proposal. Both stay
            # as drawn while the next proposal changes the same rows (a slider being moved).
            changed = (self._xy_version, hash(highlight.original.tobytes()))
            self._lod_line(self.track_item, np.where(highlight.original & ~edge_rows(highlight.original), np.nan, x),
                           y, self._breaks, key=("unchanged", *changed))
            self._lod_line(self.faded_item, np.where(highlight.original, x, np.nan), y, self._breaks,
                           key=("changed", *changed))
        else:
            self._lod_line(self.track_item, x, y, self._breaks, key=("all", self._xy_version))
            self.faded_item.setData([], [])
            self.faded_item.lod_key = None
        if self._selected_mask.any():
            self._lod_line(self.selection_item, np.where(self._selected_mask, x, np.nan), y, self._breaks)
            chosen = np.flatnonzero(self._selected_mask)
            self._lod_markers(self.selected_points_item, x[chosen], y[chosen], POINT_LIMIT, thin=False)
        else:
            self.selection_item.setData([], [])
            self.selected_points_item.setData([], [])
        self._draw_points(x, y)
        if proposal is not None and self._proposal_xy is not None:
            px, py = self._proposal_xy
            breaks = np.zeros(len(px), dtype=bool)
            ends = np.append(proposal.segment_starts[1:], len(px)) - 1
            breaks[ends[(ends >= 0) & (ends < len(px))]] = True
            drawn = highlight.proposed if highlight is not None and len(highlight.proposed) == len(px) else None
            self._lod_line(self.proposal_item, px if drawn is None else np.where(drawn, px, np.nan), py, breaks)
            if proposal.tool in SHOW_KEPT_TOOLS:
                # Thousands of removal crosses hide the result; the kept points are what a rider checks.
                self.removed_item.setData([], [])
                kept = np.flatnonzero(proposal.source_rows >= 0)
                self._lod_markers(self.kept_item, px[kept], py[kept], MARKER_LIMIT, thin=True)
            else:
                self.kept_item.setData([], [])
                removed = proposal.removed[proposal.removed < len(x)]
                self._lod_markers(self.removed_item, x[removed], y[removed], MARKER_LIMIT, thin=True)
            inserted = proposal.inserted
            self._lod_markers(self.inserted_item, px[inserted], py[inserted], MARKER_LIMIT, thin=True)
        else:
            for item in (self.proposal_item, self.removed_item, self.inserted_item, self.kept_item):
                item.setData([], [])
        self.after_refresh()

    def after_refresh(self) -> None:
        """Hook for subclasses (labels, scale bar)."""

    # --- state notifications ---------------------------------------------------------------------
    def _on_selection(self, rows: np.ndarray) -> None:
        self._selected_mask = np.zeros(len(self.geometry), dtype=bool)
        rows = rows[(rows >= 0) & (rows < len(self.geometry))]
        self._selected_mask[rows] = True
        self._refresh_timer.start()

    def _on_hover(self, row: int | None) -> None:
        x, y = self._xy
        if row is None or not 0 <= row < len(x) or not (np.isfinite(x[row]) and np.isfinite(y[row])):
            self.hover_item.setData([], [])
        else:
            self.hover_item.setData([x[row]], [y[row]])

    def _on_preview(self, proposal) -> None:
        self._proposal_xy = None
        self._highlight = None
        if proposal is not None and proposal.track == self.state.track and len(proposal.points):
            self._proposal_xy = self.proposal_xy(proposal)
            self._highlight = change_highlight(proposal.source_rows, proposal.changed, proposal.removed,
                                               len(self._xy[0]))
        # Redraw in the next event-loop turn (all layers in one refresh: one repaint per preview).
        self._refresh_timer.start()

    def detach(self) -> None:
        """Stop listening to the state (the view is being closed)."""
        self.state.selection_changed.disconnect(self._on_selection)
        self.state.hover_changed.disconnect(self._on_hover)
        self.state.preview_changed.disconnect(self._on_preview)

    # --- gestures (subclasses override) ----------------------------------------------------------
    def nearest_row(self, pos: QtCore.QPointF, radius_px: float = GRAB_PX) -> int | None:
        """Row of the point nearest to ``pos`` on screen, if within ``radius_px``."""
        x, y = self._xy
        if not len(x):
            return None
        pw, ph = self.view_box.viewPixelSize()
        with np.errstate(invalid="ignore"):
            d2 = ((x - pos.x()) / pw) ** 2 + ((y - pos.y()) / ph) ** 2
        if not np.isfinite(d2).any():
            return None
        row = int(np.nanargmin(d2))
        return row if d2[row] <= radius_px ** 2 else None

    def set_move_mode(self, on: bool) -> None:
        """In "Move points" mode a press on a shown point grabs it; a plain drag elsewhere still pans.

        Outside the mode every plain drag pans, so looking around can never change the track.
        """
        self.move_mode = bool(on)
        self.update_cursor(None)

    def grabbable_row(self, pos: QtCore.QPointF) -> int | None:
        """The point a press at ``pos`` would grab (only in move mode, with points drawn)."""
        if not self.move_mode or not self.points_visible():
            return None
        return self.nearest_row(pos)

    def update_cursor(self, pos: QtCore.QPointF | None, moving: bool = False) -> None:
        """An open hand over a point that a press would grab, a closed one while it moves."""
        shape = QtCore.Qt.CursorShape
        if moving:
            self.setCursor(shape.ClosedHandCursor)
        elif pos is not None and self.grabbable_row(pos) is not None:
            self.setCursor(shape.OpenHandCursor)
        else:
            self.unsetCursor()

    def wheel_axis(self, modifiers) -> int | None:
        """Which axis the wheel zooms (``None``: both); the profile overrides this."""
        return None

    def wheel_zoomed(self, axis: int | None) -> None:
        """Hook after a wheel zoom."""

    def gesture_started(self, pos: QtCore.QPointF, modifiers) -> str | None:
        return None

    def gesture_moved(self, gesture: str, pos: QtCore.QPointF) -> None:
        pass

    def gesture_finished(self, gesture: str, pos: QtCore.QPointF) -> None:
        pass

    def clicked(self, pos: QtCore.QPointF, modifiers) -> None:
        row = self.nearest_row(pos)
        if row is None:
            self.state.set_selection([])
        elif modifiers & QtCore.Qt.KeyboardModifier.ControlModifier:
            sel = self.state.selection
            self.state.set_selection(np.setdiff1d(sel, [row]) if row in sel else np.append(sel, row))
        else:
            self.state.set_selection([row])

    def leaveEvent(self, ev: QtCore.QEvent) -> None:  # noqa: N802 (Qt override)
        self.state.set_hover(None)
        super().leaveEvent(ev)
