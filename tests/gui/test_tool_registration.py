"""A tool registered through its descriptor alone appears in the panels, the batch clean and ``clean --help``.

The tool here is a small invented one (it raises every elevation by a fixed number of metres), written only
to prove that nothing beyond the descriptor has to be touched to add a tool.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pytest

from editor.cli import main
from editor.model import Document
from editor.processing.descriptor import CliOption, ControlSpec, ToolDescriptor
from editor.processing.pipeline import CleanParams, clean_document
from editor.processing.proposal import Proposal, make_proposal
from editor.processing.stats import StatsParams
from editor.processing.tools import TOOLS, batch_tools, register, unregister
from gui_support import synthetic_ride


@dataclass(frozen=True)
class RaiseParams:
    """Parameters of :func:`raise_elevation`.

    Attributes
    ----------
    metres_up : added to every elevation.
    """

    metres_up: float = 3.0


def raise_elevation(track, params: RaiseParams = RaiseParams(), *, rows=None, track_index: int = 0,
                    stats_params: StatsParams = StatsParams()) -> Proposal:
    points = track.points.copy()
    chosen = np.arange(len(points)) if rows is None else np.asarray(rows)
    points.ele[chosen] = points.ele[chosen] + params.metres_up
    return make_proposal("raise_elevation", "Raise elevations", track_index, track, points, track.segment_starts,
                         np.arange(len(points)), stats_params)


RAISE = ToolDescriptor(
    key="raise_elevation", label="Raise elevations", title="Raise", summary="Adds metres to every elevation.",
    function=raise_elevation, params=RaiseParams, fields={"metres_up": ControlSpec(label="Metres up", maximum=50)},
    batch_order=45, batch_default=False,
    cli_options=(CliOption("--raise-by", "metres to add (default {default:g})",
                           parse=lambda text: {"metres_up": float(text)}, metavar="METRES",
                           default_field="metres_up", turns_on=True),))


@pytest.fixture
def raise_tool():
    register(RAISE)
    yield RAISE
    unregister(RAISE.key)


def test_a_descriptor_alone_adds_a_tool_everywhere(raise_tool, qtbot, dialogs, settings, capsys, tmp_path):
    from editor.app import create_application
    from editor.app.window import MainWindow

    assert TOOLS["raise_elevation"] is raise_tool
    # the batch pipeline: after smoothing (order 40), off unless asked for, then run with its parameters
    assert [t.key for t in batch_tools()][-2:] == ["raise_elevation", "simplify"]
    assert CleanParams().steps["raise_elevation"] is None
    doc = synthetic_ride(n=300, segments=1)
    cleaned, report = clean_document(doc, CleanParams(despike=None, fill_gaps=None, collapse_stops=None, smooth=None,
                                                      raise_elevation=RaiseParams(metres_up=7.0)))
    assert [s.tool for s in report.steps] == ["raise_elevation"]
    assert np.allclose(cleaned.tracks[0].points.ele, doc.tracks[0].points.ele + 7.0)

    # clean --help lists its switch and option, the default read from the dataclass
    with pytest.raises(SystemExit):
        main(["clean", "--help"])
    text = " ".join(capsys.readouterr().out.split())
    assert "--raise-elevation, --no-raise-elevation" in text and "--raise-by METRES" in text
    assert "metres to add (default 3)" in text
    # and the option reaches the tool through the command line
    src, out = tmp_path / "in.gpx", tmp_path / "out.gpx"
    from editor.io.gpx import read_gpx, write_gpx
    write_gpx(Document(tracks=doc.tracks), src)
    assert main(["clean", str(src), "-o", str(out), "--smooth", "off", "--no-despike", "--no-fill-gaps",
                 "--no-stops", "--raise-by", "2"]) == 0
    assert np.allclose(read_gpx(out).tracks[0].points.ele, read_gpx(src).tracks[0].points.ele + 2.0)

    # the panel list of a new window has its tab, with the control its descriptor names
    create_application()
    window = MainWindow(settings)
    qtbot.addWidget(window)
    panel = window.tool_dock.panel("raise_elevation")
    assert panel is not None and panel in window.tool_dock.panels
    assert window.tool_dock.tabText(window.tool_dock.panels.index(panel)) == "Raise"
    assert panel.controls["metres_up"].label_text == "Metres up"
    assert panel.params() == RaiseParams()
    window.undo_stack.setClean()


def test_a_second_tool_with_the_same_key_is_refused():
    with pytest.raises(ValueError, match="already registered"):
        register(TOOLS["smooth"])


def test_a_descriptor_names_only_known_optional_inputs():
    with pytest.raises(ValueError, match="unknown optional inputs"):
        ToolDescriptor(key="x", label="X", title="X", summary="", function=raise_elevation, params=RaiseParams,
                       accepts=frozenset({"planes"}))
