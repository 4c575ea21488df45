"""The editor window (PySide6 + pyqtgraph). ``run_editor(files)`` is what ``trackwright`` calls."""
from __future__ import annotations

import sys
from pathlib import Path


def create_application(argv: list[str] | None = None):
    """The QApplication with Trackwright's look (created once per process)."""
    from PySide6 import QtWidgets
    import pyqtgraph as pg

    from ..views.style import Palette, apply_look, icon

    app = QtWidgets.QApplication.instance()
    if app is None:
        app = QtWidgets.QApplication(argv if argv is not None else [sys.argv[0]])
    if app.property("trackwright_look"):
        return app  # restyling an application re-polishes every live widget: do it once
    # Previews run on a Python worker thread. Every time the UI thread wakes (a timer, a mouse
    # move) it takes the GIL whenever numpy releases it, and the worker then waits a whole switch
    # interval (5 ms by default) to get it back; measured on a 10,000-point smoothing preview with
    # the UI waking every 2 ms: 56 ms instead of 24 ms. A 1 ms interval removes that convoy.
    sys.setswitchinterval(0.001)
    app.setApplicationName("Trackwright")
    app.setOrganizationName("Trackwright")
    app.setWindowIcon(icon("trackwright"))
    pg.setConfigOptions(antialias=True, foreground="#23262D")
    apply_look(app, Palette.load())
    app.setProperty("trackwright_look", True)
    return app


def run_editor(files: list[str]) -> int:
    """Open one window per file (the demo ride when ``files`` is empty) and run until they close."""
    from .platform_check import xcb_problem

    problem = xcb_problem()
    if problem is not None:  # Qt would abort with a page of plugin messages: say what to install
        print(problem, file=sys.stderr)
        return 2
    app = create_application()
    from ..bundled import demo_ride
    from .recovery_keeper import offer_recovery
    from .settings import AppSettings
    from .window import MainWindow

    settings = AppSettings()
    first = MainWindow(settings)
    first.show()
    # A restored document keeps the first window; requested files open beside it.
    windows = [first] if offer_recovery(first) else []
    if windows and not files:
        return app.exec()
    for name in files or [str(demo_ride())]:
        window = first if not windows else MainWindow(settings)
        window.show()
        if not Path(name).exists() and not files:
            window.statusBar().showMessage("The demo ride is not installed; open a GPX file with Ctrl+O.")
        else:
            window.files.open_path(name, confirmed=True)
        windows.append(window)
    return app.exec()


__all__ = ["run_editor", "create_application"]
