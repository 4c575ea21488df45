"""Qt-free file input/output: lossless GPX 1.0/1.1 reading, GPX 1.1 writing, GeoJSON and CSV export.

Entry points: :func:`read_document` (any supported input; :mod:`editor.io.read`),
:func:`editor.io.gpx.write_gpx` and :func:`editor.io.export.write_document`; every
failure is an :class:`editor.io.errors.TrackFileError`.
"""
from .read import read_document

__all__ = ["read_document"]
