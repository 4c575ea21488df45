"""Helpers shared by the window tests (imported by name: the tests folder has no packages)."""
from __future__ import annotations

from pathlib import Path

import numpy as np
from PySide6 import QtCore

from editor.model import Document, PointTable, Track

ROOT = Path(__file__).resolve().parents[2]
DEMO_RIDE = ROOT / "demo_tracks" / "demo_ride.gpx"
#: The GPX 1.1 XML Schema published with the standard (Topografix), vendored in tests/reference/.
from shared_files import GPX_XSD  # noqa: E402, F401  (the window tests import it from here)


def synthetic_ride(n: int = 2000, seed: int = 7, segments: int = 2) -> Document:
    """An invented noisy loop: 1 s fixes at ~6 m/s, rolling elevation with 1.5 m noise, two segments."""
    rng = np.random.default_rng(seed)
    t = np.arange(n, dtype=np.float64)
    angle = t / n * 2 * np.pi
    radius_m = max(1500.0, float(n))  # about 6 m between fixes
    north_m = radius_m * np.sin(angle) + rng.normal(0, 3, n)
    east_m = radius_m * (1 - np.cos(angle)) + radius_m / 5 * np.sin(3 * angle) + rng.normal(0, 3, n)
    lat = 47.0 + north_m / 111_200.0
    lon = 9.0 + east_m / (111_200.0 * np.cos(np.radians(47.0)))
    ele = 600 + 60 * np.sin(2 * angle) + 15 * np.sin(9 * angle) + rng.normal(0, 1.5, n)
    time = np.datetime64("2023-05-04T06:00:00", "ns") + (t * 1e9).astype("timedelta64[ns]")
    points = PointTable.from_columns(lat, lon, ele=np.round(ele), time=time)
    starts = np.linspace(0, n, segments, endpoint=False).astype(np.int64)
    track = Track(points=points, segment_starts=starts, name="Invented loop", segment_extra=[None] * segments)
    waypoints = PointTable.from_columns([lat[0]], [lon[0]], name=["Start gate"])
    return Document(tracks=[track], waypoints=waypoints)


def widget_pos(plot, x: float, y: float) -> QtCore.QPoint:
    """Viewport pixel of the view coordinate ``(x, y)`` in a pyqtgraph plot."""
    scene = plot.view_box.mapViewToScene(QtCore.QPointF(x, y))
    return plot.mapFromScene(scene)


def settle(qtbot, ms: int = 30) -> None:
    qtbot.wait(ms)


def drag(widget, points, modifiers=QtCore.Qt.KeyboardModifier.NoModifier,
         finish: bool = True) -> None:
    """Press the left button at ``points[0]``, move through the rest with it held, release at the last.

    Events are sent directly so the held button and the modifiers travel with every move
    (QTest.mouseMove does not carry them).
    """
    from PySide6 import QtGui, QtWidgets
    from PySide6.QtTest import QTest

    left = QtCore.Qt.MouseButton.LeftButton
    QTest.mousePress(widget, left, modifiers, points[0])
    for p in points[1:]:
        QTest.qWait(20)  # pyqtgraph's scene ignores moves closer than ~16 ms apart (60 Hz limit)
        pf = QtCore.QPointF(p)
        event = QtGui.QMouseEvent(QtCore.QEvent.Type.MouseMove, pf, QtCore.QPointF(widget.mapToGlobal(p)),
                                  QtCore.Qt.MouseButton.NoButton, left, modifiers)
        QtWidgets.QApplication.sendEvent(widget, event)
    if finish:
        QTest.qWait(20)
        QTest.mouseRelease(widget, left, modifiers, points[-1])


def click(widget, pos: QtCore.QPoint, modifiers=QtCore.Qt.KeyboardModifier.NoModifier) -> None:
    """Move the pointer to ``pos`` (the hover marker follows, as for a real user), then click there."""
    from PySide6.QtTest import QTest

    QTest.mouseMove(widget, pos + QtCore.QPoint(6, 6))  # arrive from beside, as a hand does
    QTest.qWait(25)  # pyqtgraph's scene ignores moves closer than ~16 ms apart (60 Hz limit)
    QTest.mouseMove(widget, pos)
    QTest.qWait(25)
    QTest.mouseClick(widget, QtCore.Qt.MouseButton.LeftButton, modifiers, pos)
    QTest.qWait(10)


def wheel(widget, pos: QtCore.QPoint, steps: int, modifiers=QtCore.Qt.KeyboardModifier.NoModifier) -> None:
    """Turn the mouse wheel ``steps`` notches (positive: away from the user, zoom in) over ``pos``."""
    from PySide6 import QtGui, QtWidgets

    pf = QtCore.QPointF(pos)
    event = QtGui.QWheelEvent(pf, QtCore.QPointF(widget.mapToGlobal(pos)), QtCore.QPoint(0, 0),
                              QtCore.QPoint(0, 120 * steps), QtCore.Qt.MouseButton.NoButton, modifiers,
                              QtCore.Qt.ScrollPhase.NoScrollPhase, False)
    QtWidgets.QApplication.sendEvent(widget, event)


def line_vertices(item) -> int:
    """How many finite vertices a pyqtgraph curve item currently draws."""
    x, _ = item.getData()
    return 0 if x is None else int(np.isfinite(x).sum())


def type_number(qtbot, spin, text: str) -> None:
    """Click into a number box, replace its text and press Enter, as a rider does."""
    line = spin.lineEdit()
    qtbot.mouseClick(line, QtCore.Qt.MouseButton.LeftButton, pos=line.rect().center())
    qtbot.keyClick(line, QtCore.Qt.Key.Key_A, QtCore.Qt.KeyboardModifier.ControlModifier)
    qtbot.keyClicks(line, text)
    qtbot.keyClick(line, QtCore.Qt.Key.Key_Return)


def journal_after_a_crash(window):
    """``(document, journal)``: what the crash journal restores, as if the editor stopped right now."""
    from editor.recovery import find_journals, replay

    window.recovery.journal.close()
    window.recovery.recorder = None
    found, unreadable = find_journals(window.settings.recovery_dir)
    assert unreadable == [] and len(found) == 1
    return replay(found[0].journal).doc, found[0].journal
