"""The journal on disk: plain data only, locks instead of process ids, private files, a kept original."""
from __future__ import annotations

import dataclasses
import json
import os
import pickle
import stat
import subprocess
import sys
import textwrap
from pathlib import Path

import numpy as np
import pytest

from editor.io.gpx import read_gpx
from editor.model.payload import ElementExtra, PointExtra
from editor.model import DeletePoints, InsertPoints, PointTable, SetValues, SplitSegment
from editor.model.edits import (
    EditSequence,
    MergeSegments,
    ReplaceTrackPoints,
    RestoreBoundary,
)
from editor.recovery import (
    Journal,
    JournalDataError,
    JournalRecorder,
    RestoreError,
    decode_edit,
    encode_edit,
    find_journals,
    journal_dir,
    replay,
)
from editor.recovery.codec import EDIT_KINDS
from tests.recovery.rich_gpx import rich_gpx
from tests.recovery.stack_model import StackModel

ROOT = Path(__file__).resolve().parents[2]


def _source(tmp_path: Path) -> Path:
    source = tmp_path / "ride.gpx"
    source.write_text(rich_gpx(7, 30), encoding="utf-8")
    return source


def _edited(tmp_path: Path, folder: Path | None = None) -> tuple[Journal, StackModel]:
    source = _source(tmp_path)
    journal = Journal.create(folder or tmp_path / "journals", source)
    stack = StackModel(read_gpx(source), JournalRecorder(journal))
    stack.push(DeletePoints(0, np.array([2, 3])), "Delete 2 points")
    stack.push(SetValues(0, np.array([5]), {"ele": np.array([999.0])}), "Set elevation")
    return journal, stack


def _table(n: int) -> PointTable:
    extra = [None, "<a:b xmlns:a='urn:a'>1</a:b>", PointExtra("<magvar>2</magvar>", "<sym>S</sym>", "", None),
             PointExtra("", "<cmt>\u00e9</cmt>", "<dgpsid>4</dgpsid>", "")]
    return PointTable.from_columns(np.linspace(46, 46.1, n), np.linspace(7, 7.1, n), ele=np.arange(n) * 1.5,
                                   time=np.datetime64("2025-01-01T00:00:00", "ns") + np.arange(n) * 10**9,
                                   sat=np.where(np.arange(n) % 2, 5.0, np.nan), name=[f"p{i}" if i % 3 else None
                                                                                         for i in range(n)],
                                   extra=[extra[i % 4] for i in range(n)])


EVERY_KIND = [
    SetValues(0, np.array([1, 2]), {"lat": np.array([46.5, 46.6]), "time": np.array(["NaT", "2025-01-01"],
                                                                                    dtype="datetime64[ns]"),
                                    "extra": np.array([PointExtra("", "<fix>3d</fix>", "", "<e/>"), None], object),
                                    "name": np.array(["x\x00y", None], dtype=object)}),
    DeletePoints(0, np.array([0, 4])),
    DeletePoints(0, np.array([1]), np.array([0, 3])),
    InsertPoints(0, np.array([0, 3]), _table(2)),
    InsertPoints(0, np.array([1]), _table(1), np.array([0, 1])),
    SplitSegment(0, 3, ElementExtra("", "<x:s xmlns:x='urn:x'/>")),
    SplitSegment(0, 2),
    MergeSegments(0, 0),
    RestoreBoundary(0, 0, 4, "<x:e xmlns:x='urn:x'/>"),
    ReplaceTrackPoints(0, _table(6), np.array([0, 2, 6]), [None, ElementExtra("<desc>d</desc>", None), "<q/>"]),
    ReplaceTrackPoints(0, _table(3), np.array([0])),
    EditSequence((SetValues(0, np.array([0]), {"ele": np.array([np.nan])}), DeletePoints(0, np.array([1])))),
]


def _same(a, b) -> bool:
    if type(a) is not type(b):
        return False
    if isinstance(a, PointTable):
        return a.equals(b)
    if isinstance(a, np.ndarray):
        return a.dtype == b.dtype and (a.dtype == object and a.tolist() == b.tolist()
                                       or a.dtype != object and np.array_equal(a.view("u1"), b.view("u1")))
    if isinstance(a, dict):
        return a.keys() == b.keys() and all(_same(a[k], b[k]) for k in a)
    if isinstance(a, (tuple, list)):
        return len(a) == len(b) and all(_same(x, y) for x, y in zip(a, b))
    if dataclasses.is_dataclass(a) and type(a) in EDIT_KINDS.values():
        return all(_same(getattr(a, f.name), getattr(b, f.name)) for f in dataclasses.fields(a))
    return a == b


def test_every_edit_kind_and_payload_kind_round_trips():
    assert {type(e).__name__ for e in EVERY_KIND} == set(EDIT_KINDS)  # a new edit kind needs a case here
    for edit in EVERY_KIND:
        text, blobs = encode_edit(edit)
        json.loads(text)  # plain JSON
        back = decode_edit(text, lambda n, b=blobs: bytes(b[n]))
        assert _same(edit, back), type(edit).__name__


def test_a_replaced_table_stores_only_the_columns_that_changed():
    before = _table(1000)
    after = before.copy()
    after.extra = before.extra.copy()  # same payload objects, new array
    after.lat = after.lat + 1e-5
    text, blobs = encode_edit(ReplaceTrackPoints(0, after, np.array([0])), before)
    spec = json.loads(text)["fields"]["points"]["table"]
    assert [k for k, v in spec.items() if v != {"same": True}] == ["lat"]
    assert sum(len(memoryview(b).cast("B")) for b in blobs) == 8 * 1000 + 8  # lat + segment_starts


@pytest.mark.parametrize("damage", [
    lambda s: s.replace('"len":2', '"len":1000000000000000'),            # absurd declared size
    lambda s: s.replace('"len":2', '"len":3'),                           # size does not match the blob
    lambda s: s.replace('"<f8"', '"|O"'),                                # an object dtype
    lambda s: s.replace('"SetValues"', '"__import__"'),                  # a name outside the table
    lambda s: s.replace('"track":0', '"track":{"edit":"os.system"}'),
    lambda s: s[:-5],                                                    # cut off
])
def test_damaged_edit_text_is_refused(damage):
    text, blobs = encode_edit(SetValues(0, np.array([1, 2]), {"lat": np.array([46.5, 46.6])}))
    with pytest.raises(JournalDataError):
        decode_edit(damage(text), lambda n: bytes(blobs[n]))


def test_files_are_private_and_the_original_is_kept(tmp_path):
    journal, _ = _edited(tmp_path)
    folder = journal.folder
    assert stat.S_IMODE(folder.stat().st_mode) == 0o700
    for name in ("journal.sqlite3", "journal.sqlite3-wal", "lock"):
        assert stat.S_IMODE((folder / name).stat().st_mode) == 0o600, name
    assert (folder / "original.gpx").samefile(tmp_path / "ride.gpx")  # a hard link: same file system
    journal.discard()
    assert not folder.exists()


def test_the_default_folder_is_the_redirected_per_user_data_folder(private_data_dir):
    assert journal_dir() == private_data_dir / "journals"


def test_a_journal_held_by_a_running_editor_is_not_offered(tmp_path):
    journal, _ = _edited(tmp_path)
    assert find_journals(tmp_path / "journals") == ([], [])  # locked, even within one process
    # Another process holds it: still not offered; once that process is gone, it is.
    script = textwrap.dedent(f"""
        import fcntl, os, sys, time
        fd = os.open({str(journal.folder / 'lock')!r}, os.O_RDWR)
        fcntl.flock(fd, fcntl.LOCK_EX)
        print("locked", flush=True)
        sys.stdin.readline()
    """)
    journal.close()
    child = subprocess.Popen([sys.executable, "-c", script], stdin=subprocess.PIPE, stdout=subprocess.PIPE, text=True)
    try:
        assert child.stdout.readline().strip() == "locked"
        assert find_journals(tmp_path / "journals") == ([], [])
    finally:
        child.communicate("\n", timeout=30)
    found, unreadable = find_journals(tmp_path / "journals")
    assert unreadable == [] and [f.labels for f in found] == [["Delete 2 points", "Set elevation"]]
    found[0].journal.close()


def test_original_replaced_after_the_crash_still_restores(tmp_path):
    journal, stack = _edited(tmp_path)
    journal.close()
    source = tmp_path / "ride.gpx"
    replacement = tmp_path / "other.gpx"
    replacement.write_text(rich_gpx(99, 12), encoding="utf-8")
    os.replace(replacement, source)  # another program saved over it (a new file, as safe saves do)
    found, _ = find_journals(tmp_path / "journals")
    restored = replay(found[0].journal)
    assert restored.doc.equals(stack.doc)
    assert "changed" in restored.notes[0]
    found[0].journal.close()


def test_original_changed_in_place_is_reported_not_replayed(tmp_path):
    journal, _ = _edited(tmp_path)
    journal.close()
    with open(tmp_path / "ride.gpx", "a", encoding="utf-8") as fh:
        fh.write("<!-- appended in place: the hard link sees it too -->\n")
    found, _ = find_journals(tmp_path / "journals")
    with pytest.raises(RestoreError, match="changed since"):
        replay(found[0].journal)
    found[0].journal.close()


def test_old_pickle_journals_are_never_loaded(tmp_path, monkeypatch):
    folder = tmp_path / "journals"
    folder.mkdir()
    owned = tmp_path / "owned"
    gadget = (b"cnumpy.testing._private.utils\nrunstring\n(V__import__('pathlib').Path("
              + repr(str(owned)).encode() + b").write_text('x')\n(dtR.")
    (folder / "a.twjournal").write_bytes(gadget)

    def refuse(*_args, **_kwargs):
        raise AssertionError("a journal was unpickled")

    monkeypatch.setattr(pickle, "loads", refuse)
    monkeypatch.setattr(pickle, "load", refuse)
    monkeypatch.setattr(pickle, "Unpickler", refuse)
    found, unreadable = find_journals(folder)
    assert found == [] and not owned.exists()
    assert [u.path.name for u in unreadable] == ["a.twjournal"]
    assert unreadable[0].moved_to == folder / "could-not-restore" / "a.twjournal"
    assert unreadable[0].moved_to.read_bytes() == gadget  # kept for inspection, unread


def test_a_journal_with_an_edit_that_does_not_fit_is_refused(tmp_path):
    journal, _ = _edited(tmp_path)
    journal.connection.execute("UPDATE steps SET edit = replace(edit, '\"track\":0', '\"track\":7')")
    journal.close()
    found, _ = find_journals(tmp_path / "journals")
    with pytest.raises(RestoreError, match="does not fit"):
        replay(found[0].journal)
    found[0].journal.close()


def test_a_blob_larger_than_the_limit_is_refused_before_it_is_read(tmp_path, monkeypatch):
    from editor.recovery import store

    journal, _ = _edited(tmp_path)
    journal.close()
    found, _ = find_journals(tmp_path / "journals")
    monkeypatch.setattr(store, "MAX_BLOB_BYTES", 8)  # the one deleted-rows array is 16 bytes
    with pytest.raises(RestoreError, match="absurd size"):
        replay(found[0].journal)
    found[0].journal.close()


def test_journal_is_written_before_each_edit_returns(tmp_path):
    # A killed process (no close, no flush) leaves every step it appended.
    source = _source(tmp_path)
    folder = tmp_path / "journals"
    script = textwrap.dedent(f"""
        import os, signal, sys
        import numpy as np
        sys.path.insert(0, {str(ROOT)!r})
        from editor.io.gpx import read_gpx
        from editor.model import DeletePoints, SetValues
        from editor.recovery import Journal, JournalRecorder
        from tests.recovery.stack_model import StackModel
        stack = StackModel(read_gpx({str(source)!r}), JournalRecorder(Journal.create({str(folder)!r}, {str(source)!r})))
        stack.push(DeletePoints(0, np.array([1])), "a")
        stack.push(SetValues(0, np.array([2]), {{"ele": np.array([5.0])}}), "b")
        stack.set_index(1)
        os.kill(os.getpid(), signal.SIGKILL)
    """)
    proc = subprocess.run([sys.executable, "-c", script], cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert proc.returncode == -9, proc.stderr
    expected = read_gpx(source)
    DeletePoints(0, np.array([1])).apply(expected)
    found, _ = find_journals(folder)
    restored = replay(found[0].journal)
    assert restored.doc.equals(expected) and restored.index == 1 and len(restored.commands) == 2
    found[0].journal.close()


@pytest.mark.parametrize("shuffle_times", [False, True])
def test_a_table_with_rows_removed_and_added_stores_only_the_new_rows(shuffle_times):
    from editor.model import Document, Track

    before = _table(1000)
    if shuffle_times:  # times that go backwards: rows are then recognised by their payload objects
        before.time = before.time[np.random.default_rng(1).permutation(1000)]
        before.extra = np.array([f"<e>{i}</e>" for i in range(1000)], dtype=object)
    keep = np.ones(1000, dtype=bool)
    keep[[3, 500, 501, 998]] = False
    after = before.take(keep)
    added = _table(2)
    added.time = after.time[9] + np.array([300, 600], dtype="timedelta64[ms]")  # between rows 9 and 10
    after = PointTable.concat([after.take(slice(0, 10)), added, after.take(slice(10, None))])
    after.ele[20] = -5.0
    edit = ReplaceTrackPoints(0, after, np.array([0]))
    text, blobs = encode_edit(edit, before)
    written = sum(len(memoryview(b).cast("B")) for b in blobs)
    assert written < 8 * 1000  # far less than one full column
    doc = Document(tracks=[Track(before.copy(), np.array([0]))])
    back = decode_edit(text, lambda n: bytes(blobs[n]), doc)
    assert back.points.equals(after)
