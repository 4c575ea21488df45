"""Benchmark: 1,000,000-point files in a fresh process, with the memory they take.

1. The core alone: read, automatic smoothing strength, apply, atomic save (budget 2 GB peak).
2. An editing session in the window (offscreen): open, six tool applies, twenty hand edits, save
   a cleaned copy. Targets: peak resident memory <= 1.6 GB; each apply freezes the UI <= 0.5 s
   (the time the UI thread spends pushing the undo step, rebuilding the views and repainting;
   the tool itself runs on a worker in the real window and is timed separately here).
Prints times, peaks and ratios; asserts nothing.
Run from the repository root:  python tests/bench/bench_load.py [--points N] [--skip-core]
"""
from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import textwrap
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from tests.bench.bench_io import make_gpx  # noqa: E402

CORE = textwrap.dedent("""
    import resource, sys, time
    sys.path.insert(0, {root!r})
    t0 = time.perf_counter()
    from editor.io.gpx import read_gpx, write_gpx
    from editor.processing.smoothing import smooth, SmoothParams
    def peak_mb():
        return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    base = peak_mb()
    t = time.perf_counter(); doc = read_gpx({src!r}); read_s = time.perf_counter() - t
    after_read = peak_mb()
    t = time.perf_counter(); proposal = smooth(doc.tracks[0], SmoothParams()); smooth_s = time.perf_counter() - t
    after_smooth = peak_mb()
    t = time.perf_counter(); proposal.edit().apply(doc); apply_s = time.perf_counter() - t
    del proposal
    t = time.perf_counter(); write_gpx(doc, {dst!r}); write_s = time.perf_counter() - t
    print(f"{{doc.point_count}} {{read_s:.2f}} {{smooth_s:.2f}} {{apply_s:.2f}} {{write_s:.2f}} "
          f"{{base:.0f}} {{after_read:.0f}} {{after_smooth:.0f}} {{peak_mb():.0f}}")
""")

#: The window session. Tools run synchronously here (the window runs them on a worker); only the
#: apply and the repaint that follows are the UI freeze.
SESSION = textwrap.dedent("""
    import os, resource, sys, time
    os.environ["QT_QPA_PLATFORM"] = "offscreen"
    sys.path.insert(0, {root!r})
    from pathlib import Path
    from PySide6 import QtCore, QtWidgets
    from editor.app import create_application
    from editor.app.settings import AppSettings
    from editor.app.window import MainWindow
    from editor.geo.projection import LocalProjection
    from editor.processing import tools
    from editor.processing.smoothing import SmoothParams
    from editor.processing.simplify import SimplifyParams

    def peak_mb():
        return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024

    app = create_application()
    QtWidgets.QMessageBox.question = staticmethod(lambda *a, **k: QtWidgets.QMessageBox.StandardButton.No)
    win = MainWindow(AppSettings.at_path(Path({tmp!r}) / "settings.ini"))
    win.resize(1300, 850); win.show(); app.processEvents()

    def settle():
        app.processEvents()
        win.map_view.viewport().repaint(); win.profile_view.viewport().repaint()
        app.processEvents()

    class Stalls:
        # longest gap between turns of the event loop (a 10 ms timer) while something runs
        def __init__(self):
            self.timer = QtCore.QTimer(interval=10)
            self.timer.timeout.connect(self.tick)
        def tick(self):
            now = time.perf_counter()
            self.worst, self.last = max(self.worst, now - self.last), now
            jobs = getattr(win, "file_jobs", None)  # absent before reading moved off the UI thread
            if jobs is None or jobs.busy:  # the file is being read or written: the window must stay live
                self.worst_in_job = self.worst
        def start(self):
            self.worst = self.worst_in_job = 0.0
            self.last = time.perf_counter()
            self.timer.start()
        def stop(self):
            self.tick()
            self.timer.stop()
            return f"{{self.worst_in_job:.2f}}/{{self.worst:.2f}}"

    journal = [0.0]  # time spent writing the crash-recovery journal (part of each apply's freeze)
    record_now = win.recovery.record_now
    def timed_record_now():
        t = time.perf_counter(); record_now(); journal[0] += time.perf_counter() - t
    win.recovery.record_now = timed_record_now

    stalls = Stalls()
    stalls.start()
    t = time.perf_counter(); assert win.files.open_path({src!r}); open_s = time.perf_counter() - t
    open_stall = stalls.stop(); settle()
    cpu0 = time.thread_time()
    after_open = peak_mb()
    # Every apply keeps most of the million points: smoothing changes columns in place of rows,
    # the simplifications drop 5 % of the rows each.
    plan = [("smooth", SmoothParams(horizontal_strength=30.0, vertical_strength=30.0)),
            ("smooth", SmoothParams(vertical_strength=70.0, smooth_horizontal=False)),
            ("simplify", SimplifyParams(method="vw", target_points=int(0.95 * {points}))),
            ("smooth", SmoothParams(horizontal_strength=50.0, smooth_elevation=False)),
            ("simplify", SimplifyParams(method="vw", target_points=int(0.9 * {points}))),
            ("smooth", SmoothParams(horizontal_strength=80.0, vertical_strength=80.0))]
    lines = []
    for name, params in plan:
        entry = tools.TOOLS[name]
        snapshot = win.session.snapshot()
        t = time.perf_counter()
        proposal = entry.function(snapshot, params or entry.params(), track_index=win.state.track)
        xy = LocalProjection(win.projection.lat0, win.projection.lon0).to_xy(proposal.points.lat,
                                                                             proposal.points.lon)
        if hasattr(proposal, "_edit"):
            proposal.edit()  # as the preview worker does
        tool_s = time.perf_counter() - t
        win.previews._preview_ready((proposal, xy)); settle()
        del proposal, xy, snapshot
        journal[0] = 0.0
        t, cpu = time.perf_counter(), time.thread_time()
        applied = win.previews.apply_preview(); settle()
        freeze_s, cpu_s = time.perf_counter() - t, time.thread_time() - cpu
        lines.append(f"{{name}},{{tool_s:.2f}},{{freeze_s:.3f}},{{int(applied)}},{{win.session.doc.point_count}},"
                     f"{{peak_mb():.0f}},{{journal[0]:.3f}},{{cpu_s:.3f}}")
    after_applies = peak_mb()
    n = len(win.session.track().points)
    t = time.perf_counter()
    for k in range(20):
        row = (k * 7919 + 13) % (n - 10)
        if k % 4 == 3:
            win.state.set_selection([row]); win.editing.delete_selection()
        elif k % 4 == 2:
            pts = win.session.track().points
            x, y = win.projection.to_xy(pts.lat[row:row + 1], pts.lon[row:row + 1])
            win.editing.move_point(row, float(x[0]) + 5.0, float(y[0]))
        else:
            win.editing.set_point_elevation(row, 400.0 + k)
        settle()
    hand_s = (time.perf_counter() - t) / 20
    stalls.start()
    t = time.perf_counter(); saved = win.files.write_copy(Path({dst!r})); save_s = time.perf_counter() - t
    save_stall = stalls.stop()
    print("|".join(lines), f"{{open_s:.2f}} {{after_open:.0f}} {{after_applies:.0f}} {{hand_s * 1000:.0f}} "
          f"{{save_s:.2f}} {{int(saved)}} {{win.undo_stack.count()}} {{peak_mb():.0f}} {{open_stall}} "
          f"{{save_stall}}")
    win.undo_stack.setClean(); win.close()
""")


def ratio(value: float, target: float) -> str:
    return f"ratio {value / target:4.2f} {'ok' if value <= target else 'MISSED'}"


def core(src: Path, dst: Path, size_mb: float) -> None:
    out = subprocess.run([sys.executable, "-c", CORE.format(root=str(ROOT), src=str(src), dst=str(dst))],
                         capture_output=True, text=True, check=True).stdout.split()
    n, read_s, smooth_s, apply_s, write_s, base, after_read, after_smooth, peak = out
    print(f"core: {int(n):,} points, file {size_mb:.0f} MB, written {dst.stat().st_size / 1e6:.0f} MB")
    print(f"  read {read_s} s, smooth (automatic strength) {smooth_s} s, apply {apply_s} s, save {write_s} s")
    print(f"  peak resident memory: after imports {base} MB, after read {after_read} MB, "
          f"after smoothing {after_smooth} MB, overall {peak} MB (budget 2000 MB)")


def session(src: Path, tmp: Path, points: int) -> None:
    dst = tmp / "session-cleaned.gpx"
    code = SESSION.format(root=str(ROOT), src=str(src), dst=str(dst), tmp=str(tmp), points=points)
    env = dict(os.environ, QT_QPA_PLATFORM="offscreen")
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, check=False)
    if result.returncode:
        print(result.stderr[-3000:])
        raise SystemExit("the window session failed")
    applies, rest = result.stdout.strip().splitlines()[-1].split(" ", 1)
    open_s, after_open, after_applies, hand_ms, save_s, saved, steps, peak, open_stall, save_stall = rest.split()
    print(f"window session: open {open_s} s (peak {after_open} MB); longest UI stall while the file is "
          f"read / including building the views {open_stall} s")
    worst = worst_cpu = 0.0
    for line in applies.split("|"):
        name, tool_s, freeze_s, applied, points, peak_now, journal_s, cpu_s = line.split(",")
        worst, worst_cpu = max(worst, float(freeze_s)), max(worst_cpu, float(cpu_s))
        print(f"  apply {name:<9} tool {tool_s:>5} s (worker)  UI freeze {float(freeze_s):6.3f} s "
              f"(UI thread CPU {float(cpu_s):5.3f} s, journal {float(journal_s):5.3f} s)  "
              f"{'applied' if applied == '1' else 'no change'}  {int(points):,} points  peak {peak_now} MB")
    print(f"  after 6 applies: peak {after_applies} MB; 20 hand edits: {hand_ms} ms each (with repaint); "
          f"save {save_s} s ({'saved' if saved == '1' else 'NOT saved'}, longest UI stall while writing / "
          f"overall {save_stall} s), "
          f"{steps} undo steps")
    print(f"  worst UI freeze per apply {worst:.3f} s  target <= 0.5 s  {ratio(worst, 0.5)}")
    print(f"  (the same as UI-thread CPU time, which a busy machine does not inflate: {worst_cpu:.3f} s  "
          f"{ratio(worst_cpu, 0.5)})")
    print(f"  peak resident memory {peak} MB  target <= 1600 MB  {ratio(float(peak), 1600)}")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=1_000_000)
    parser.add_argument("--skip-core", action="store_true", help="only the window session")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        src, dst = Path(tmp) / "big.gpx", Path(tmp) / "big-cleaned.gpx"
        make_gpx(src, args.points)
        size_mb = src.stat().st_size / 1e6
        if not args.skip_core:
            core(src, dst, size_mb)
        session(src, Path(tmp), args.points)


if __name__ == "__main__":
    main()
