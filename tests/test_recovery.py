"""Crash recovery: a killed editor's journal restores the exact document."""
import os
import signal
import subprocess
import sys
import textwrap
from pathlib import Path

import numpy as np
import pytest

from editor.io.errors import TrackFileError
from editor.io.gpx import read_gpx
from editor.model import DeletePoints, SetValues, SplitSegment
from editor.recovery import RecoveryJournal, find_journals, restore

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = """<?xml version="1.0" encoding="UTF-8"?>
<gpx version="1.1" creator="test" xmlns="http://www.topografix.com/GPX/1/1"><trk><name>t</name><trkseg>
<trkpt lat="46.0" lon="7.0"><ele>500</ele><time>2026-05-01T08:00:00Z</time></trkpt>
<trkpt lat="46.0001" lon="7.0001"><ele>501</ele><time>2026-05-01T08:00:01Z</time></trkpt>
<trkpt lat="46.0002" lon="7.0002"><ele>502</ele><time>2026-05-01T08:00:02Z</time></trkpt>
<trkpt lat="46.0003" lon="7.0003"><ele>503</ele><time>2026-05-01T08:00:03Z</time></trkpt>
<trkpt lat="46.0004" lon="7.0004"><ele>504</ele><time>2026-05-01T08:00:04Z</time></trkpt>
</trkseg></trk></gpx>
"""

EDITS = [SetValues(0, np.array([1]), {"lat": np.array([46.00015]), "ele": np.array([499.5])}),
         DeletePoints(0, np.array([3])),
         SplitSegment(0, 2)]


def test_journal_of_a_killed_process_restores_the_document(tmp_path):
    source = tmp_path / "ride.gpx"
    source.write_text(SAMPLE)
    journals = tmp_path / "journals"
    script = textwrap.dedent(f"""
        import os, signal, numpy as np, pickle, sys
        sys.path.insert(0, {str(ROOT)!r})
        from editor.io.gpx import read_gpx
        from editor.recovery import RecoveryJournal
        from tests.test_recovery import EDITS
        doc = read_gpx({str(source)!r})
        journal = RecoveryJournal({str(journals)!r}, {str(source)!r})
        for i, edit in enumerate(EDITS):
            edit.apply(doc)
            journal.record(EDITS[:i + 1], [type(e).__name__ for e in EDITS[:i + 1]])
        os.kill(os.getpid(), signal.SIGKILL)
    """)
    proc = subprocess.run([sys.executable, "-c", script], cwd=ROOT, capture_output=True, text=True, timeout=60)
    assert proc.returncode == -signal.SIGKILL, proc.stderr

    expected = read_gpx(source)
    for edit in EDITS:
        edit.apply(expected)
    found = find_journals(journals)
    assert len(found) == 1 and found[0].labels == ("SetValues", "DeletePoints", "SplitSegment")
    assert restore(found[0]).equals(expected)


def test_live_editor_journals_are_not_offered(tmp_path):
    source = tmp_path / "ride.gpx"
    source.write_text(SAMPLE)
    journal = RecoveryJournal(tmp_path, source)
    journal.record(EDITS[:1], ["Move point"])
    assert find_journals(tmp_path) == []  # this very process is alive
    assert len(find_journals(tmp_path, include_live=True)) == 1
    journal.discard()
    assert find_journals(tmp_path, include_live=True) == []


def test_changed_original_is_refused(tmp_path):
    source = tmp_path / "ride.gpx"
    source.write_text(SAMPLE)
    journal = RecoveryJournal(tmp_path, source)
    journal.record(EDITS, ["a", "b", "c"])
    source.write_text(SAMPLE.replace("<ele>500</ele>", "<ele>600</ele>"))
    entry = find_journals(tmp_path, include_live=True)[0]
    with pytest.raises(TrackFileError, match="changed since"):
        restore(entry)


def test_planted_journal_cannot_run_code(tmp_path):
    # A pickle that would call os.system when loaded by a plain unpickler.
    class Evil:
        def __reduce__(self):
            return (os.system, ("echo owned > " + str(tmp_path / "owned"),))

    import pickle
    (tmp_path / "x.twjournal").write_bytes(pickle.dumps({"format": "trackwright-recovery-1", "edits": [Evil()],
                                                          "pid": -1}))
    assert find_journals(tmp_path) == []
    assert not (tmp_path / "owned").exists()
