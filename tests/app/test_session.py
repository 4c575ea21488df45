"""The window's Qt-free session: revisions, the per-revision preview cache and snapshot, files, read-only."""
from pathlib import Path

import numpy as np

from editor.app.session import Session, cleaned_copy_name
from editor.model import Document, PointTable, Track
from editor.model.edits import SetValues


def two_tracks() -> Document:
    def track(n: int) -> Track:
        points = PointTable.from_columns(46.0 + np.arange(n) * 1e-4, 7.0 + np.arange(n) * 1e-4)
        return Track(points=points, segment_starts=np.array([0]), segment_extra=[None])
    return Document(tracks=[track(5), track(8)])


def test_caches_belong_to_one_revision_and_track():
    session = Session()
    session.replace_document(two_tracks(), "ride.gpx")
    cache, snapshot = session.preview_cache(), session.snapshot()
    cache["before"] = "totals"
    assert session.preview_cache() is cache and session.snapshot() is snapshot
    session.state.set_track(1)
    assert session.preview_cache() == {} and len(session.snapshot().points) == 8
    session.state.set_track(0)
    session.edited()
    assert session.preview_cache() == {} and session.snapshot() is not snapshot
    # the snapshot shares the columns, and edits copy on write: a later edit cannot reach it
    taken = session.snapshot()
    SetValues(0, np.array([0]), {"lat": np.array([0.0])}).apply(session.doc)
    assert session.doc.tracks[0].points.lat[0] == 0.0 and taken.points.lat[0] == 46.0


def test_copies_and_the_salvaged_document(tmp_path):
    session = Session()
    session.replace_document(two_tracks(), tmp_path / "ride.gpx", read_only=True)
    assert session.default_copy_path(Path.home()) == cleaned_copy_name(tmp_path / "ride.gpx") == tmp_path / "ride-cleaned.gpx"
    assert session.saved_copy(tmp_path / "copy.gpx")  # the salvaged points now live in the copy: editable
    assert not session.read_only and session.source_path == tmp_path / "copy.gpx"
    assert session.default_copy_path(Path.home()) == tmp_path / "copy.gpx"
    assert not session.saved_copy(tmp_path / "again.gpx")
    assert session.is_original(tmp_path / "copy.gpx") and not session.is_original(tmp_path / "other.gpx")
    empty = Session()
    assert empty.track() is None and not empty.has_content()
    assert empty.default_copy_path(tmp_path) == tmp_path / "track-cleaned.gpx"
