"""Every generated hostile input opened in the window (offscreen): a document shown, or one dialog that
carries the reader's one-line error; no exception escapes and no dialog is left open (issue 8, §3).
The inputs are those of tests/io/hostile_inputs.py, plus paths that are not ordinary files.
"""
from __future__ import annotations

import os
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from tests.io.hostile_inputs import hostile_cases


def test_the_window_opens_or_refuses_every_hostile_input(window, dialogs, tmp_path):
    paths = []
    for name, data in hostile_cases():
        path = tmp_path / f"{name}.gpx"
        path.write_bytes(data)
        paths.append(path)
    loop = tmp_path / "loop.gpx"
    os.symlink(loop, loop)
    paths.append(loop)
    if hasattr(os, "mkfifo"):
        os.mkfifo(tmp_path / "pipe.gpx")
        paths.append(tmp_path / "pipe.gpx")
    if os.path.exists("/dev/zero"):
        paths.append(Path("/dev/zero"))
    failures = []
    for path in paths:
        window.undo_stack.setClean()
        dialogs.asked.clear()
        opened = window.files.open_path(path, confirmed=True)
        if opened:
            continue
        if len(dialogs.asked) != 1 or dialogs.asked[0][0] not in ("warning", "question"):
            failures.append(f"{path.name}: {dialogs.asked}")
    assert not failures, "\n".join(failures)
