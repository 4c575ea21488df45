"""Dialogs show a bad file's text as text: markup quoted from the file is neither rendered nor followed.

Qt renders a string that looks like HTML as rich text: "more than one <ele>" lost its tag, text after
"'<' not found" vanished, and an elevation ``<img src="p.png" width=300>`` made the window load and
show a local image. Every field a bad file can put into a message is filled with markup here; the
dialog must show exactly the characters of the error and paint no image.
"""
from __future__ import annotations

import numpy as np
import pytest
from PySide6 import QtCore, QtGui, QtWidgets

from editor.io.errors import TrackFileError
from editor.io.gpx import read_gpx

IMG = '<img src="p.png" width=300>'
HEAD = ('<?xml version="1.0" encoding="UTF-8"?>\n<gpx xmlns="http://www.topografix.com/GPX/1/1" '
        'version="1.1" creator="test">\n<trk><name>&lt;b&gt;loop&lt;/b&gt;</name><trkseg>\n')
GOOD = '<trkpt lat="46.0" lon="7.0"><ele>500</ele><time>2026-05-01T08:00:00Z</time></trkpt>\n'
TAIL = "</trkseg></trk></gpx>\n"

#: (file name, the bad point, markup that must reach the dialog verbatim)
BAD_FILES = [
    ("ele image.gpx", '<trkpt lat="46.0" lon="7.0"><ele>&lt;img src="p.png" width=300&gt;</ele></trkpt>\n', IMG),
    ("two ele.gpx", '<trkpt lat="46.0" lon="7.0"><ele>1</ele><ele>2</ele></trkpt>\n', "<ele>"),
    ("time.gpx", "<trkpt lat=\"46.0\" lon=\"7.0\"><time>'&lt;' not found</time></trkpt>\n", "'<' not found"),
    ("lat.gpx", '<trkpt lat="&lt;b&gt;north" lon="7.0"></trkpt>\n', "<b>north"),
    ("<i>name<i> & <ele>.gpx", '<trkpt lat="46.0" lon="7.0"><sat>&lt;img src="p.png"&gt;</sat></trkpt>\n', "<i>"),
]


def red_pixels(image: QtGui.QImage) -> int:
    """Pixels of the pure red test image, in a painted dialog."""
    image = image.convertToFormat(QtGui.QImage.Format.Format_RGB32)
    a = np.frombuffer(image.constBits(), np.uint8).reshape(image.height(), image.bytesPerLine() // 4, 4)
    return int(((a[..., 2] == 255) & (a[..., 1] == 0) & (a[..., 0] == 0)).sum())


@pytest.fixture
def red_image(tmp_path, monkeypatch):
    """``p.png`` (solid red) in the working folder and beside the files: what an <img> would load."""
    image = QtGui.QImage(40, 40, QtGui.QImage.Format.Format_RGB32)
    image.fill(QtGui.QColor(255, 0, 0))
    assert image.save(str(tmp_path / "p.png"))
    monkeypatch.chdir(tmp_path)
    return tmp_path / "p.png"


@pytest.mark.parametrize("name, point, markup", BAD_FILES)
def test_bad_file_dialog_shows_the_exact_text_and_loads_nothing(window, dialogs, tmp_path, red_image,
                                                                name, point, markup):
    dialogs.render = True
    path = tmp_path / name
    path.write_text(HEAD + GOOD + point + GOOD + TAIL, encoding="utf-8")
    with pytest.raises(TrackFileError) as caught:
        read_gpx(path)
    err = caught.value
    assert markup in err.problem or markup in path.name
    shown_doc = window.session.doc

    assert not window.files.open_path(path)

    title, text, text_format, painted = dialogs.boxes[-1]
    assert title == "Cannot open the file"
    assert text == f"{name}: {err.problem}\n\nWhere: {path}, line {err.line}."
    assert markup in text
    assert text_format == QtCore.Qt.TextFormat.PlainText
    assert red_pixels(painted) == 0          # the <img> was not followed
    assert window.session.doc is shown_doc           # nothing was opened
    assert QtWidgets.QApplication.activeModalWidget() is None


def test_cut_off_file_with_markup_in_its_name_asks_in_plain_text(window, dialogs, tmp_path, red_image):
    dialogs.render = True
    path = tmp_path / "<img src=\"p.png\" width=300> ride.gpx"
    path.write_text(HEAD + GOOD * 5 + GOOD[:30], encoding="utf-8")
    with pytest.raises(TrackFileError) as caught:
        read_gpx(path)
    shown_doc = window.session.doc
    dialogs.question_answer = QtWidgets.QMessageBox.StandardButton.No

    assert not window.files.open_path(path)

    title, text, text_format, painted = dialogs.boxes[-1]
    assert title == "File is incomplete"
    assert text.startswith(f"{caught.value}\n\nThe file stops early. Open the 5 points read before")
    assert IMG in text and text_format == QtCore.Qt.TextFormat.PlainText
    assert red_pixels(painted) == 0
    assert window.session.doc is shown_doc


def test_labels_that_can_quote_the_file_are_plain_text(window):
    """Readouts (point names), the tool status (error text) and the status bar labels."""
    readouts = [pane.readout for pane in window.findChildren(QtWidgets.QWidget)
                if isinstance(getattr(pane, "readout", None), QtWidgets.QLabel)]
    statuses = [panel.status for panel in window.findChildren(QtWidgets.QWidget)
                if isinstance(getattr(panel, "status", None), QtWidgets.QLabel)]
    assert len(readouts) == 2 and statuses
    for label in [window.status_points, window.status_units, *readouts, *statuses]:
        assert label.textFormat() == QtCore.Qt.TextFormat.PlainText
    readouts[0].setText(IMG)
    assert readouts[0].full_text() == IMG and "&lt;img" in readouts[0].toolTip()
