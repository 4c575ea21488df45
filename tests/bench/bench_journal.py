"""Benchmark: what the crash-recovery journal costs per edit on a 1,000,000-point track.

Targets (issue #8): a hand edit journaled in <= 20 ms, a tool apply in <= 0.3 s, whatever the
document size. Every edit is pushed through the journal recorder exactly as the window does
(one committed SQLite transaction each, WAL, synchronous=FULL); "journal" is the time of the
recorder alone, the edit's own apply is printed apart. Also prints the cost of starting a journal
(hash + hard link of the original) and of restoring it. Asserts nothing.
Run from the repository root:  python tests/bench/bench_journal.py [--points N]
"""
from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from editor.model import hand_edits  # noqa: E402
from editor.geo.projection import LocalProjection  # noqa: E402
from editor.io.gpx import read_gpx  # noqa: E402
from editor.model.edits import ReplaceTrackPoints  # noqa: E402
from editor.processing.simplify import SimplifyParams  # noqa: E402
from editor.processing.smoothing import SmoothParams  # noqa: E402
from editor.processing.tools import TOOLS  # noqa: E402
from editor.recovery import Command, Journal, JournalRecorder, find_journals, replay  # noqa: E402
from tests.bench.bench_io import make_gpx  # noqa: E402


class TimedStack:
    """An undo stack (QUndoStack's rules) that times the journal recorder apart from the edit."""

    def __init__(self, doc, recorder: JournalRecorder) -> None:
        self.doc, self.recorder, self.commands, self.index = doc, recorder, [], 0

    def _sync(self) -> float:
        start = time.perf_counter()
        self.recorder.sync(self.index, len(self.commands), lambda i: self.commands[i],
                           lambda i: self.commands[i].label)
        return time.perf_counter() - start

    def push(self, edit, label: str) -> tuple[float, float]:
        start = time.perf_counter()
        command = Command(edit, label)
        command.redo(self.doc)
        applied = time.perf_counter() - start
        del self.commands[self.index:]
        self.commands.append(command)
        self.index += 1
        return applied, self._sync()

    def step(self, delta: int) -> float:
        if delta < 0:
            self.index -= 1
            self.commands[self.index].undo(self.doc)
        else:
            self.commands[self.index].redo(self.doc)
            self.index += 1
        return self._sync()


def ms(values) -> str:
    return f"median {statistics.median(values) * 1e3:7.1f} ms, max {max(values) * 1e3:7.1f} ms"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=1_000_000)
    parser.add_argument("--repeats", type=int, default=20)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        source = Path(tmp) / "big.gpx"
        make_gpx(source, args.points)
        doc = read_gpx(source)
        n = doc.point_count
        start = time.perf_counter()
        journal = Journal.create(Path(tmp) / "journals", source)
        created = time.perf_counter() - start
        stack = TimedStack(doc, JournalRecorder(journal))
        print(f"{n:,} points (file {source.stat().st_size / 1e6:.0f} MB, one extension per point)")
        print(f"  start a journal (SHA-256 + hard link of the original): {created:.2f} s")
        rng = np.random.default_rng(3)
        track = doc.tracks[0]
        projection = LocalProjection.centred_on(track.points.lat[:1000], track.points.lon[:1000])
        hand = {"move a point": [], "delete 3 points": [], "insert a point": [], "split a segment": []}
        for _ in range(args.repeats):
            row = int(rng.integers(10, len(track.points) - 10))
            x, y = projection.to_xy(track.points.lat[row:row + 1], track.points.lon[row:row + 1])
            # each edit is built from the document as it is when it is pushed, as in the window
            builders = {"move a point": lambda: hand_edits.move_point(track, 0, row, float(x[0]) + 2, float(y[0]),
                                                                       projection),
                        "delete 3 points": lambda: hand_edits.delete_points(track, 0, [row, row + 1, row + 2]),
                        "insert a point": lambda: hand_edits.insert_point_after(track, 0, [row], projection)}
            for name, build in builders.items():
                hand[name].append(stack.push(build(), name)[1])
            inside = int(rng.integers(len(track.points) // 4, len(track.points) // 2))
            if inside not in track.segment_starts:
                hand["split a segment"].append(stack.push(hand_edits.split_segment(track, 0, [inside]), "split")[1])
        undo = [stack.step(-1) for _ in range(args.repeats)]
        redo = [stack.step(+1) for _ in range(args.repeats)]
        print("  journal cost per hand edit (target <= 20 ms):")
        for name, values in hand.items():
            if values:
                print(f"    {name:18s} {ms(values)}   ratio to target {max(values) / 0.020:.2f}")
        print(f"    {'undo':18s} {ms(undo)}")
        print(f"    {'redo':18s} {ms(redo)}")
        print("  journal cost per tool apply (target <= 0.3 s):")
        tools = [("smooth (same rows)", "smooth", SmoothParams(horizontal_strength=40.0, vertical_strength=40.0)),
                 ("simplify (rows removed)", "simplify", SimplifyParams(tolerance_m=1.0))]
        # The worst case for the journal: a tool that removes a few rows, so that no column is the
        # same as before and every one (a million distinct extension payloads included) is written.
        track = doc.tracks[0]
        keep = np.ones(len(track.points), dtype=bool)
        keep[rng.choice(len(keep), 10, replace=False)] = False
        removed = np.flatnonzero(~keep)
        starts = track.segment_starts - np.searchsorted(removed, track.segment_starts)
        edit = ReplaceTrackPoints(0, track.points.take(keep), starts)
        applied, cost = stack.push(edit, "remove 10 rows")
        print(f"    {'10 rows removed (all columns)':22s} journal {cost:.3f} s (edit apply itself {applied:.3f} s)   "
              f"ratio to target {cost / 0.3:.2f}")
        for label, key, params in tools:
            proposal = TOOLS[key].function(doc.tracks[0], params, track_index=0)
            if proposal.is_noop():
                print(f"    {label:22s} proposal changes nothing; skipped")
                continue
            applied, cost = stack.push(proposal.edit(), label)
            print(f"    {label:22s} journal {cost:.3f} s (edit apply itself {applied:.3f} s)   "
                  f"ratio to target {cost / 0.3:.2f}")
        undo_tool = stack.step(-1)
        print(f"    undo of the last tool  journal {undo_tool * 1e3:.1f} ms")
        size = sum(p.stat().st_size for p in journal.folder.iterdir() if p.name.startswith("journal"))
        print(f"  journal on disk: {size / 1e6:.0f} MB for {len(journal.steps())} steps")
        journal.close()
        start = time.perf_counter()
        found, _ = find_journals(Path(tmp) / "journals")
        restored = replay(found[0].journal)
        print(f"  restore after a crash (read the original again, replay every step): "
              f"{time.perf_counter() - start:.2f} s, equal to the live document: {restored.doc.equals(doc)}")
        found[0].journal.discard()


if __name__ == "__main__":
    main()
