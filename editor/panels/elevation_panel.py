"""The elevation panel: heights from the user's terrain files, alone or together with the recording.

The tool is the ``elevation`` descriptor (:mod:`editor.processing.builtin_tools`). Besides the
generated controls the panel holds the chosen terrain (files or a folder, indexed from their
headers) and says what the heights refer to. ``terrain_changed(object)`` tells the window, which can
hand the same terrain to the map's shaded relief (``MapView.set_terrain``).
"""
from __future__ import annotations

from dataclasses import replace

from PySide6 import QtCore, QtWidgets

from ..processing.descriptor import ToolDescriptor
from .tool_panel import ToolPanel

FILE_FILTER = "Terrain rasters (*.tif *.tiff *.hgt *.dem *.img *.vrt *.asc *.bil *.dt0 *.dt1 *.dt2);;All files (*)"


def _bind(function, terrain):
    """The tool with ``terrain`` filled in (the window calls ``f(track, params, rows=..., ...)``)."""
    def terrain_elevation_bound(track, params=None, **kwargs):
        if terrain is None:
            raise ValueError("Choose terrain files first (the Terrain files… or Terrain folder… button).")
        return function(track, params, terrain=terrain, **kwargs)

    terrain_elevation_bound.__name__ = function.__name__
    return terrain_elevation_bound


class ElevationPanel(ToolPanel):
    """A :class:`ToolPanel` with terrain choosers and the heights' reference.

    Signals
    -------
    terrain_changed(object) : the new :class:`editor.terrain.Terrain` (or None).
    """

    terrain_changed = QtCore.Signal(object)

    def __init__(self, tool: ToolDescriptor, parent=None) -> None:
        super().__init__(tool, parent)
        self._unbound = tool.function
        self.terrain = None
        self.tool = replace(tool, function=_bind(self._unbound, None))
        self.files_button = QtWidgets.QPushButton("Terrain &files…")
        self.folder_button = QtWidgets.QPushButton("Terrain f&older…")
        self.files_button.setToolTip("Choose one or more elevation raster files (GeoTIFF and others).")
        self.folder_button.setToolTip("Choose a folder: every elevation raster in it (and below) is used.")
        self.files_button.clicked.connect(self._choose_files)
        self.folder_button.clicked.connect(self._choose_folder)
        self.extra_row.addWidget(self.files_button)
        self.extra_row.addWidget(self.folder_button)
        self.reference = QtWidgets.QLabel("No terrain chosen.")
        self.reference.setTextFormat(QtCore.Qt.TextFormat.PlainText)
        self.reference.setWordWrap(True)
        self.layout().insertWidget(self.layout().indexOf(self.footer), self.reference)

    def _choose_files(self) -> None:
        paths, _ = QtWidgets.QFileDialog.getOpenFileNames(self, "Terrain files", "", FILE_FILTER)
        if paths:
            self.set_terrain_paths(paths)

    def _choose_folder(self) -> None:
        path = QtWidgets.QFileDialog.getExistingDirectory(self, "Terrain folder")
        if path:
            self.set_terrain_paths([path])

    def set_terrain_paths(self, paths) -> bool:
        """Index ``paths`` (headers only, fast) and use them; a bad file is named in the status."""
        from ..terrain import Terrain, TerrainFileError

        try:
            terrain = Terrain.open(paths)
        except TerrainFileError as err:
            self.set_status(f"Cannot use this terrain: {err}")
            return False
        if not terrain.tiles:
            self.set_status("No terrain raster found there (.tif, .hgt, …).")
            return False
        self.set_terrain(terrain)
        return True

    def set_terrain(self, terrain) -> None:
        self.terrain = terrain
        self.tool = replace(self.tool, function=_bind(self._unbound, terrain))
        if terrain is None:
            self.reference.setText("No terrain chosen.")
        else:
            n = len(terrain.tiles)
            self.reference.setText(f"{n} terrain file{'s' if n != 1 else ''}; {terrain.vertical_reference()}. "
                                   "Terrain heights are the ground surface, not a bridge deck or a tunnel.")
        self.terrain_changed.emit(terrain)
        if terrain is not None:
            self.preview_requested.emit(True)

    def describe(self, proposal) -> str:
        """Extra status text for a preview: coverage and the stretches where the recording was kept."""
        info = proposal.info
        text = str(info.get("terrain_report", ""))
        count = len(info.get("disagreements", []))
        if count:
            text += (f"; {count} stretch{'es' if count != 1 else ''} where the terrain is far from your "
                     "recording (bridge, tunnel?) keep the recorded shape")
        return text
