"""Opening and saving run off the UI thread: the window keeps painting, Cancel works, errors still show.

The reader and writer are replaced by slow stand-ins that wait for the test (never for a fixed time):
the test lets them go on only after it has seen the window's event loop run and paint meanwhile.
"""
from __future__ import annotations

import shutil
import threading
from pathlib import Path

import numpy as np
import pytest
from gui_support import DEMO_RIDE, synthetic_ride
from PySide6 import QtCore, QtWidgets

from editor.app import files
from editor.io import gpx
from editor.io.read import READERS
from editor.io.gpx import read_gpx

#: Longest a stand-in waits for the test: only reached when the UI thread is blocked (today's bug).
GIVE_UP_S = 5.0


class SlowStandIn:
    """Wraps a reader or writer: runs it only after ``release``; records the thread it ran on."""

    def __init__(self, real):
        self.real = real
        self.started = threading.Event()
        self.release = threading.Event()
        self.thread = None

    def __call__(self, *args, **kwargs):
        self.thread = threading.current_thread()
        self.started.set()
        self.release.wait(GIVE_UP_S)
        progress = kwargs.get("progress")
        if progress is not None:
            progress(0.5)  # after Cancel this raises and the job stops here
        return self.real(*args, **kwargs)


class LoopWatch(QtCore.QObject):
    """Counts event-loop turns and paints of the map while a stand-in is busy, then acts once."""

    def __init__(self, window, stand_in: SlowStandIn, then):
        super().__init__()
        self.window, self.stand_in, self.then = window, stand_in, then
        self.ticks = self.paints = 0
        self.acted = False
        window.map_view.viewport().installEventFilter(self)
        self.timer = QtCore.QTimer(interval=5)
        self.timer.timeout.connect(self._tick)
        self.timer.start()

    def eventFilter(self, _obj, event):
        if event.type() == QtCore.QEvent.Type.Paint and self.stand_in.started.is_set():
            self.paints += 1
        return False

    def _tick(self):
        if not self.stand_in.started.is_set() or self.acted:
            return
        self.ticks += 1
        self.window.map_view.viewport().update()
        if self.ticks >= 5 and self.paints >= 1:
            self.acted = True
            self.then()

    def stop(self):
        self.timer.stop()
        self.window.map_view.viewport().removeEventFilter(self)


@pytest.fixture
def ride_copy(tmp_path) -> Path:
    target = tmp_path / "evening ride.gpx"
    shutil.copyfile(DEMO_RIDE, target)
    return target


def shown_with_one_edit(window):
    window.display.set_document(synthetic_ride(300), None)
    window.state.set_selection([5])
    window.editing.delete_selection()
    assert window.undo_stack.count() == 1
    return window.session.doc


def test_window_keeps_painting_while_a_slow_file_loads(window, monkeypatch, ride_copy):
    slow = SlowStandIn(read_gpx)
    monkeypatch.setitem(READERS, ".gpx", slow)
    watch = LoopWatch(window, slow, slow.release.set)
    try:
        assert window.files.open_path(ride_copy)
    finally:
        slow.release.set()
        watch.stop()
    assert watch.acted and watch.ticks >= 5 and watch.paints >= 1  # the loop ran and painted meanwhile
    assert slow.thread is not threading.main_thread()
    assert window.session.source_path == ride_copy
    assert window.session.doc.equals(read_gpx(ride_copy))
    assert window.progress.isHidden() and window.cancel_button.isHidden()


def test_cancel_keeps_the_previous_document(window, dialogs, monkeypatch, ride_copy):
    previous = shown_with_one_edit(window)
    title = window.windowTitle()
    slow = SlowStandIn(read_gpx)
    monkeypatch.setitem(READERS, ".gpx", slow)
    seen_cancel = []

    def press_cancel():
        seen_cancel.append(window.cancel_button.isVisible())
        window.cancel_button.click()

    watch = LoopWatch(window, slow, press_cancel)
    try:
        assert not window.files.open_path(ride_copy, confirmed=True)
    finally:
        slow.release.set()
        watch.stop()
    assert seen_cancel == [True]
    assert window.session.doc is previous and window.undo_stack.count() == 1 and not window.undo_stack.isClean()
    assert window.windowTitle() == title and window.session.source_path is None
    assert "cancelled" in window.statusBar().currentMessage()
    assert not [kind for kind, _ in dialogs.asked if kind == "warning"]
    assert QtWidgets.QApplication.activeModalWidget() is None


def test_saving_runs_off_the_ui_thread_and_cancel_writes_nothing(window, monkeypatch, tmp_path):
    shown_with_one_edit(window)
    real_write = gpx.write_gpx
    slow = SlowStandIn(real_write)
    monkeypatch.setattr(files, "write_gpx", slow)
    folder = tmp_path / "out"
    folder.mkdir()
    target = folder / "copy.gpx"
    watch = LoopWatch(window, slow, lambda: (window.cancel_button.click(), slow.release.set()))
    try:
        assert not window.files.write_copy(target)  # returns once the writer has stopped
    finally:
        slow.release.set()
        watch.stop()
    assert slow.thread is not threading.main_thread()
    assert not window.undo_stack.isClean() and "cancelled" in window.statusBar().currentMessage()
    assert list(folder.iterdir()) == []  # no file, no temporary left behind

    slow = SlowStandIn(real_write)
    monkeypatch.setattr(files, "write_gpx", slow)
    watch = LoopWatch(window, slow, slow.release.set)
    try:
        assert window.files.write_copy(target)
    finally:
        slow.release.set()
        watch.stop()
    assert watch.paints >= 1 and slow.thread is not threading.main_thread()
    assert window.undo_stack.isClean()
    saved, shown = read_gpx(target).tracks[0].points, window.session.doc.tracks[0].points
    # changed values are written to 7 decimals of a degree (about 1 cm; editor.io.gpx.source_texts)
    assert len(saved) == len(shown) and np.allclose(saved.lat, shown.lat, rtol=0, atol=5.1e-8)
    assert np.allclose(saved.lon, shown.lon, rtol=0, atol=5.1e-8)


def test_save_errors_are_still_reported(window, dialogs, tmp_path):
    shown_with_one_edit(window)
    target = tmp_path / "no such folder" / "copy.gpx"
    assert not window.files.write_copy(target)
    kind, text = dialogs.asked[-1]
    assert kind == "warning" and text.startswith("Cannot save: copy.gpx: ") and str(target) in text
    assert not window.undo_stack.isClean() and not target.exists()
    assert window.progress.isHidden() and not window.files.jobs.busy


def test_a_second_file_job_waits_its_turn(window, monkeypatch, ride_copy, tmp_path):
    shown_with_one_edit(window)
    slow = SlowStandIn(read_gpx)
    monkeypatch.setitem(READERS, ".gpx", slow)
    attempts = []

    def save_meanwhile():
        attempts.append(window.files.write_copy(tmp_path / "meanwhile.gpx"))
        slow.release.set()

    watch = LoopWatch(window, slow, save_meanwhile)
    try:
        window.undo_stack.setClean()
        assert window.files.open_path(ride_copy)
    finally:
        slow.release.set()
        watch.stop()
    assert attempts == [False] and not (tmp_path / "meanwhile.gpx").exists()
