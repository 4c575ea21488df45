"""Real-window measurements for ``bench_gui.py --real`` (an X window through Qt's xcb platform).

The offscreen platform under-measures what a user sees: it never composes the window into an X
server's frame buffer. Here the editor runs as a normal X client (under ``xvfb-run`` when there
is no display, with openbox as window manager for focus), the mouse is driven by ``xdotool``
through the X server, and a step counts as done when both views have *finished* painting with
its result (paint events are timed around the views' own painting).
Prints min/median/max of each step and one ``summary:`` line of medians; asserts nothing.
"""
from __future__ import annotations

import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
RUNS = int(os.environ.get("TW_BENCH_RUNS", "5"))


def relaunch_under_xvfb(argv: list[str]) -> int | None:
    """Run this benchmark again under ``xvfb-run`` when there is no display; its exit code."""
    if os.environ.get("DISPLAY"):
        return None
    if shutil.which("xvfb-run") is None:
        sys.exit("No display and no xvfb-run: apt-get install -y xvfb openbox xdotool")
    command = ["xvfb-run", "-a", "-s", "-screen 0 1920x1200x24", sys.executable, *argv]
    return subprocess.call(command)


def main() -> int:
    os.environ["QT_QPA_PLATFORM"] = "xcb"
    sys.path.insert(0, str(ROOT))
    sys.path.insert(0, str(ROOT / "tests" / "gui"))
    sys.path.insert(0, str(ROOT / "tests"))
    window_manager = None
    if shutil.which("openbox"):
        window_manager = subprocess.Popen(["openbox"], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        time.sleep(0.5)
    try:
        from real_window_steps import run_all  # noqa: E402 (needs the Qt platform chosen first)
        tmp = Path(tempfile.mkdtemp(prefix="tw-real-"))
        return run_all(tmp, RUNS)
    finally:
        if window_manager is not None:
            window_manager.terminate()
            window_manager.wait(5)


if __name__ == "__main__":
    code = relaunch_under_xvfb(sys.argv)
    sys.exit(main() if code is None else code)
