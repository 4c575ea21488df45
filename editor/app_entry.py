"""Opens the editor window; kept apart so the command line starts without importing Qt."""
from __future__ import annotations

import sys


def open_editor(files: list[str]) -> int:
    try:
        from .app import run_editor
    except ImportError as err:  # the window is not part of this build
        print(f"trackwright: the editor window is not available ({err})", file=sys.stderr)
        return 2
    return run_editor(files)
