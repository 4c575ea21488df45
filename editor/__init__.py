"""Trackwright: a desktop editor for recorded GPS tracks."""
__version__ = "0.1.0"
