"""Dockable panels: totals, legend, track list and one panel per processing tool."""
