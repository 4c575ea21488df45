"""What every map background is: a graphics item under the track that follows the view.

A background never takes mouse events (the track's gestures pass through it) and never blocks the
UI thread: anything slow (fetching, reading an archive, shading terrain) happens elsewhere and
arrives by signal, after which the layer calls ``update()``.

To add a kind of background (the shaded relief, for example), subclass :class:`BackgroundLayer`,
implement :meth:`paint` (in map metres: the painter is already set up by the view) and
:meth:`attribution`, and react to :meth:`set_view`; the map view does the rest
(``MapView.set_background``).
"""
from __future__ import annotations

import pyqtgraph as pg
from PySide6 import QtCore

from ...geo.projection import LocalProjection

#: Z value of backgrounds: below every track layer (those start at 10).
BACKGROUND_Z = -100


class BackgroundLayer(pg.GraphicsObject):
    """Base of map backgrounds.

    Signals
    -------
    status_changed(str) : one quiet line for the status bar ("" when all is well).
    """

    status_changed = QtCore.Signal(str)

    def __init__(self) -> None:
        super().__init__()
        self.setAcceptedMouseButtons(QtCore.Qt.MouseButton.NoButton)
        self.setAcceptHoverEvents(False)
        self.setAcceptTouchEvents(False)
        self.setFlag(self.GraphicsItemFlag.ItemIsFocusable, False)
        self.setZValue(BACKGROUND_Z)
        self.setCacheMode(self.CacheMode.DeviceCoordinateCache)
        self.setFlag(self.GraphicsItemFlag.ItemUsesExtendedStyleOption, True)  # paint gets the exposed rect
        self.projection = LocalProjection(0.0, 0.0)
        self._rect = QtCore.QRectF()
        self.view_rect = QtCore.QRectF()
        self.metres_per_px = 1.0
        self.device_ratio = 1.0

    # --- what the map view calls --------------------------------------------------------------------
    def set_projection(self, projection: LocalProjection) -> None:
        """The map's projection changed (a new document)."""
        self.projection = projection
        self.prepareGeometryChange()
        self._rect = QtCore.QRectF()  # the next set_view starts afresh
        self.view_rect = QtCore.QRectF()
        self.update()

    def set_view(self, rect: QtCore.QRectF, metres_per_px: float, device_ratio: float = 1.0) -> bool:
        """The visible rectangle (metres) and scale; returns whether they changed (subclasses then
        start loading what the new view needs).

        The layer's bounds reach a view's size beyond the view on every side and change only when
        the view leaves them or the scale changes: Qt then keeps the drawn layer in a device pixmap
        (``DeviceCoordinateCache``), so a pan repaints only the newly exposed strip and a drag over
        the layer repaints none of it. Subclasses call ``update(region)`` when their content changes.
        """
        if rect == self.view_rect and metres_per_px == self.metres_per_px and device_ratio == self.device_ratio:
            return False
        self.view_rect = QtCore.QRectF(rect)
        if not self._rect.contains(rect) or metres_per_px != self.metres_per_px or device_ratio != self.device_ratio:
            self.prepareGeometryChange()
            self._rect = rect.adjusted(-rect.width(), -rect.height(), rect.width(), rect.height())
            self.bounds_changed()
            self.update()
        self.metres_per_px = metres_per_px
        self.device_ratio = device_ratio
        return True

    def bounds_changed(self) -> None:
        """Hook: the layer's bounds (``boundingRect()``) were recomputed; everything will be redrawn."""

    def attribution(self) -> str:
        """The credit line the source requires on the map ("" if none)."""
        return ""

    def shutdown(self) -> None:
        """The layer is being removed: stop background work."""

    # --- QGraphicsItem ----------------------------------------------------------------------------
    def boundingRect(self) -> QtCore.QRectF:  # noqa: N802 (Qt override)
        return self._rect

    def shape(self):  # never hit by the mouse: an empty shape
        from PySide6 import QtGui
        return QtGui.QPainterPath()
