"""The document's tracks and their segments; picking one decides what the views show."""
from __future__ import annotations

from PySide6 import QtCore, QtWidgets

from ..model.document import Document


class TrackList(QtWidgets.QTreeWidget):
    """Tracks as top-level items, segments as children.

    Signals
    -------
    track_chosen(int) : show this track.
    segment_chosen(int, int) : show this track and select the segment's points.
    """

    track_chosen = QtCore.Signal(int)
    segment_chosen = QtCore.Signal(int, int)

    def __init__(self, parent=None) -> None:
        super().__init__(parent)
        self.setHeaderLabels(["Track / segment", "Points"])
        self.setRootIsDecorated(True)
        self.setUniformRowHeights(True)
        self.itemActivated.connect(self._activated)
        self.itemClicked.connect(self._activated)

    def set_document(self, doc: Document, shown_track: int) -> None:
        """Show ``doc``'s tracks; items are updated in place when the structure is unchanged."""
        same_shape = self.topLevelItemCount() == len(doc.tracks) and all(
            self.topLevelItem(ti).childCount() == t.segment_count for ti, t in enumerate(doc.tracks))
        if same_shape:
            for ti, track in enumerate(doc.tracks):
                item = self.topLevelItem(ti)
                item.setText(1, f"{len(track.points):,}")
                for si, (a, b) in enumerate(track.segment_bounds()):
                    item.child(si).setText(1, f"{b - a:,}")
            return
        self.blockSignals(True)
        self.clear()
        for ti, track in enumerate(doc.tracks):
            name = track.name or f"Track {ti + 1}"
            item = QtWidgets.QTreeWidgetItem([name, f"{len(track.points):,}"])
            item.setData(0, QtCore.Qt.ItemDataRole.UserRole, (ti, None))
            for si, (a, b) in enumerate(track.segment_bounds()):
                child = QtWidgets.QTreeWidgetItem([f"Segment {si + 1}", f"{b - a:,}"])
                child.setData(0, QtCore.Qt.ItemDataRole.UserRole, (ti, si))
                item.addChild(child)
            self.addTopLevelItem(item)
            item.setExpanded(ti == shown_track)
            if ti == shown_track:
                self.setCurrentItem(item)
        self.resizeColumnToContents(0)
        self.blockSignals(False)

    def _activated(self, item: QtWidgets.QTreeWidgetItem, _column: int = 0) -> None:
        track, segment = item.data(0, QtCore.Qt.ItemDataRole.UserRole)
        if segment is None:
            self.track_chosen.emit(track)
        else:
            self.segment_chosen.emit(track, segment)
