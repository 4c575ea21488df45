"""The linked views (pyqtgraph): the planar map and the elevation profile, and what they share."""
