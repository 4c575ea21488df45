"""What one window is working on, without Qt: the document, its revision, its files, the shared view state.

The window's controllers (files, editing, previews, display) each receive the
:class:`Session` explicitly and keep no document state of their own, so there is
one place to look for "which document, which revision, is it read-only, where
was it read from". Qt-free: tests build one without a window.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ..io.provenance import CLEANED_SUFFIX, cleaned_copy_name
from ..io.save import same_file
from ..model.document import Document, Track
from ..model.state import EditorState


@dataclass
class Session:
    """One document and what belongs to it.

    Attributes
    ----------
    doc : the document shown. state : selection, hover, shown track and preview (row indices).
    revision : grows with every edit or newly opened document; previews and caches key on it.
    source_path : the file the document was read from (``None``: not from a file).
    saved_copy_path : where the last cleaned copy went (the default for the next save).
    read_only : the points salvaged from a damaged file; edits are refused until a copy is saved.
    pending_selection : rows to select once the views show the edited track (an inserted point).
    """

    doc: Document = field(default_factory=Document)
    state: EditorState = field(default_factory=EditorState)
    revision: int = 0
    source_path: Path | None = None
    saved_copy_path: Path | None = None
    read_only: bool = False
    pending_selection: list[int] | None = None
    _snapshot: tuple[int, int, Track] | None = None
    _cache_key: tuple[int, int] | None = None
    _cache: dict[Any, Any] = field(default_factory=dict)

    # --- the document -----------------------------------------------------------------------------
    def track(self) -> Track | None:
        """The track the views show, or ``None`` when the document has no track."""
        if not self.doc.tracks:
            return None
        return self.doc.tracks[min(self.state.track, len(self.doc.tracks) - 1)]

    def replace_document(self, doc: Document, path: str | Path | None = None, read_only: bool = False) -> None:
        """Work on ``doc`` (read from ``path``) from now on."""
        self.doc = doc
        self.revision += 1
        self.source_path = Path(path) if path else None
        self.saved_copy_path = None
        self.read_only = read_only

    def edited(self) -> None:
        """The document changed: everything computed from the old revision is stale."""
        self.revision += 1

    def has_content(self) -> bool:
        return bool(self.doc.tracks) or bool(self.doc.routes) or len(self.doc.waypoints) > 0

    # --- files ------------------------------------------------------------------------------------
    def default_copy_path(self, home: Path) -> Path:
        """Where a cleaned copy goes unless the user says otherwise."""
        if self.saved_copy_path is not None:
            return self.saved_copy_path
        if self.source_path is not None:
            return cleaned_copy_name(self.source_path)
        return home / f"track{CLEANED_SUFFIX}.gpx"

    def is_original(self, path: Path) -> bool:
        """Is ``path`` the file the document was read from?"""
        return same_file(path, self.source_path)

    def saved_copy(self, target: Path) -> bool:
        """A cleaned copy was written to ``target``. True when that made a salvaged document editable
        (the points now live in a sound file of their own, which becomes the document's file)."""
        self.saved_copy_path = target
        if not self.read_only:
            return False
        self.read_only = False
        self.source_path = target
        return True

    # --- what previews reuse ----------------------------------------------------------------------
    def snapshot(self) -> Track | None:
        """An immutable copy of the shown track, taken once per revision and track (the columns are
        shared: edits copy on write, so this costs nothing at a million points)."""
        track = self.track()
        if track is None:
            return None
        key = (self.revision, self.state.track)
        if self._snapshot is None or self._snapshot[:2] != key:
            self._snapshot = (*key, track.snapshot())
        return self._snapshot[2]

    def preview_cache(self) -> dict[Any, Any]:
        """Values previews may reuse (estimated strengths, totals, the track in metres) for the current
        revision and shown track; a new dict whenever either changes."""
        key = (self.revision, self.state.track)
        if self._cache_key != key:
            self._cache_key, self._cache = key, {}
        return self._cache


__all__ = ["Session", "CLEANED_SUFFIX", "cleaned_copy_name"]
