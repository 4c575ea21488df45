"""A track whose timestamps are all equal is cleaned as an untimed track, never collapsed (issue 8, §3).

Before the fix, spike removal saw infinite speeds over the zero-second steps and kept one point, and
the smoother put every point at one instant and moved them all onto one spot.
"""

import numpy as np
import pytest

from editor.model import Document, PointTable, Track
from editor.processing.pipeline import CleanParams, clean_document
from editor.processing.smoothing import SmoothParams, smooth
from editor.processing.spikes import SpikeParams, despike

STEPS = ("despike", "fill_gaps", "collapse_stops", "smooth")


def same_time_track(n: int = 200, every: int | None = None) -> Track:
    """A straight walk north-east, about 14 m per point; all times equal (or advancing every ``every``)."""
    seconds = np.zeros(n, dtype=np.int64) if every is None else np.arange(n) // every
    times = np.datetime64("2024-05-01T10:00:00", "ns") + seconds.astype("timedelta64[s]")
    table = PointTable.from_columns(46 + np.arange(n) * 1e-4, 7 + np.arange(n) * 1e-4,
                                    ele=500 + np.arange(n) * 0.1, time=times)
    return Track(table)


@pytest.mark.parametrize("only", STEPS + (None,))
def test_clean_keeps_every_point_of_a_track_with_equal_times(only):
    track = same_time_track()
    doc = Document(tracks=[track])
    params = CleanParams() if only is None else CleanParams(**{s: None for s in STEPS if s != only})
    cleaned, _ = clean_document(doc, params)
    points = cleaned.tracks[0].points
    assert len(points) == len(track.points)
    # the line keeps its length: about 0.0199 degrees of latitude from end to end
    assert np.ptp(points.lat) == pytest.approx(np.ptp(track.points.lat), rel=0.01)


def test_spike_removal_leaves_a_mostly_untimed_segment_alone():
    track = same_time_track(every=50)  # time advances on 3 of 199 steps: no usable timing
    proposal = despike(track, SpikeParams())
    assert len(proposal.removed) == 0 and len(proposal.points) == len(track.points)


def test_smoothing_equal_times_keeps_the_shape():
    track = same_time_track()
    proposal = smooth(track, SmoothParams(horizontal_strength=50, vertical_strength=50))
    assert len(proposal.points) == len(track.points)
    assert np.ptp(proposal.points.lat) == pytest.approx(np.ptp(track.points.lat), rel=0.01)
