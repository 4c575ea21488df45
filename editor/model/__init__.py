"""Qt-free track model: columnar points, the document, reversible edits, shared view state."""
from .document import Document, Route, Signal, Track
from .edits import (DeletePoints, EditSequence, InsertPoints, MergeSegments, ReplaceTrackPoints,
                    RestoreBoundary, SetValues, SplitSegment, apply_all)
from .points import ALL_COLUMNS, FLOAT_COLUMNS, PointTable
from .state import EditorState

__all__ = ["Document", "Route", "Signal", "Track", "PointTable", "ALL_COLUMNS", "FLOAT_COLUMNS",
           "SetValues", "DeletePoints", "InsertPoints", "SplitSegment", "MergeSegments",
           "RestoreBoundary", "ReplaceTrackPoints", "EditSequence", "apply_all", "EditorState"]
