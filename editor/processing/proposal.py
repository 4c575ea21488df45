"""What a processing tool returns: a proposed new state of one track, and why.

Tools never change the document. The editor previews a proposal on both views
with before/after totals and applies it as one undo step
(:meth:`Proposal.edit`); the command line applies it directly. Same object,
same code path.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Callable

import numpy as np

from ..model.document import Track
from ..model.edits import ReplaceTrackPoints
from ..model.points import PointTable
from ..model.transition import share_unchanged, transition_edit
from .stats import StatsParams, Totals, track_totals


class PlaceNote(str):
    """A note that names a place along the track (``info["notes"]``).

    It is the text with the place in km, for the command line and files; ``in_units`` says the
    place in the window's units ("gap at 2.1 mi: ..."). ``template`` holds ``{at}`` where the
    place goes; ``at_m`` is the distance along the track in metres.
    """

    template: str
    at_m: float

    def __new__(cls, template: str, at_m: float) -> PlaceNote:
        note = super().__new__(cls, template.format(at=f"{at_m / 1000:.1f} km"))
        note.template, note.at_m = template, float(at_m)
        return note

    def in_units(self, long: Callable[[float, int], str]) -> str:
        """The note with the place written by ``long(metres, digits)`` (``UnitSystem.long``)."""
        return self.template.format(at=long(self.at_m, 1))


@dataclass
class Proposal:
    """A tool's result for track ``track`` of a document.

    Attributes
    ----------
    tool : short machine name of the tool (``"smooth"``, ``"despike"``, ...).
    label : human label, used as the undo step's name (``"Smooth track"``).
    track : index of the track in the document.
    points, segment_starts, segment_extra : the proposed track content.
    source_rows : int64 per proposed row: the original row it came from, -1 if inserted.
    changed : bool per proposed row: coordinates/elevation/time differ from its source row.
    removed : int64, original rows that the proposal drops.
    reasons : per reason (``"spike"``, ``"speed"``, ``"gap"``, ``"stop"``...), original rows (or
        for ``"inserted"``, proposed rows) concerned; for the legend and the report.
    sigma_h_m, sigma_v_m : optional float per proposed row, posterior standard deviation
        (metres) of horizontal position and elevation, for an uncertainty band.
    before, after : totals of the track before and after.
    info : tool-specific numbers to report (chosen q, log-likelihood, kept count, ...).
    params : the parameters the caller ran the tool with, when it says (the window does, for the
        cleaning record of a saved copy); tools leave it ``None``.
    """

    tool: str
    label: str
    track: int
    points: PointTable
    segment_starts: np.ndarray
    source_rows: np.ndarray
    changed: np.ndarray
    removed: np.ndarray
    before: Totals
    after: Totals
    segment_extra: list | None = None
    reasons: dict[str, np.ndarray] = field(default_factory=dict)
    sigma_h_m: np.ndarray | None = None
    sigma_v_m: np.ndarray | None = None
    info: dict[str, Any] = field(default_factory=dict)
    #: the track the proposal was computed from; lets :meth:`edit` store only what changed
    base_track: Track | None = field(default=None, repr=False)
    _edit: Any = field(default=None, init=False, repr=False, compare=False)
    params: Any = None

    @property
    def inserted(self) -> np.ndarray:
        """Proposed rows that do not come from an original row."""
        return np.flatnonzero(self.source_rows < 0)

    def is_noop(self) -> bool:
        # a proposal that only splits segments (gap tool, long gaps) changes no row but is not a no-op
        return (not self.changed.any() and len(self.removed) == 0 and len(self.inserted) == 0
                and self.before.segments == self.after.segments)

    def as_track(self, original: Track) -> Track:
        """The proposed track as a standalone object (for chaining tools)."""
        extra = list(original.segment_extra) if self.segment_extra is None else list(self.segment_extra)
        return Track(points=self.points, segment_starts=self.segment_starts, name=original.name,
                     extra=original.extra, segment_extra=extra)

    def edit(self) -> Any:
        """The reversible edit that applies this proposal to the document (its track must still
        equal the one the proposal was computed from).

        Spelled as what changed (deleted rows, inserted rows, changed cells or whole changed
        columns, see :mod:`editor.model.transition`) so that the undo step keeps only that.
        """
        if self._edit is None:  # built once: the window builds it on the preview worker
            if self.base_track is None:
                self._edit = ReplaceTrackPoints(self.track, self.points, self.segment_starts, self.segment_extra)
            else:
                self._edit = transition_edit(self.track, self.base_track, self.points, self.segment_starts,
                                             self.source_rows, self.segment_extra)
        return self._edit


def make_proposal(tool: str, label: str, track_index: int, original: Track, points: PointTable,
                  segment_starts: np.ndarray, source_rows: np.ndarray,
                  stats_params: StatsParams = StatsParams(), *, before: Totals | None = None,
                  **kwargs: Any) -> Proposal:
    """Fill in ``changed``, ``removed`` and the before/after totals from the new content.

    ``before``: the totals of ``original`` with ``stats_params`` when the caller already has
    them (a chain of tools: the previous proposal's ``after``); computed when ``None``.
    """
    source_rows = np.asarray(source_rows, dtype=np.int64)
    segment_starts = np.asarray(segment_starts, dtype=np.int64)
    old = original.points
    from_old = source_rows >= 0
    changed = np.zeros(len(points), dtype=bool)
    src = source_rows[from_old]
    for key in ("lat", "lon", "ele"):
        a, b = getattr(points, key)[from_old], getattr(old, key)[src]
        changed[from_old] |= ~((a == b) | (np.isnan(a) & np.isnan(b)))
    changed[from_old] |= points.time[from_old].view("int64") != old.time[src].view("int64")
    if len(points) == len(old) and np.array_equal(source_rows, np.arange(len(old))):
        # columns the tool left alone are shared with the original, not held twice
        points = share_unchanged(points, old)
    kept = np.zeros(len(old), dtype=bool)
    kept[src] = True
    removed = np.flatnonzero(~kept)
    extra = kwargs.pop("segment_extra", None)
    proposed = Track(points=points, segment_starts=segment_starts, name=original.name,
                     extra=original.extra,
                     segment_extra=list(original.segment_extra) if extra is None else list(extra))
    return Proposal(tool=tool, label=label, track=track_index, points=points,
                    segment_starts=segment_starts, source_rows=source_rows, changed=changed,
                    removed=removed,
                    before=track_totals(original, stats_params) if before is None else before,
                    after=track_totals(proposed, stats_params), segment_extra=extra, base_track=original,
                    **kwargs)
