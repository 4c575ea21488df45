"""Before Qt starts on Linux: can its X11 (xcb) platform plugin load? If not, say which packages to install.

On a fresh Linux system the plugin's own libraries (``libxcb-cursor0`` and
friends) are often missing; Qt then prints several lines about plugins and
aborts the process. Loading the plugin library ourselves first finds the same
problem, and we print one line that says what to install instead.
"""
from __future__ import annotations

import ctypes
import importlib.util
import os
import sys
from pathlib import Path

#: The Debian/Ubuntu packages Qt 6's xcb plugin needs beyond a basic X11 system.
XCB_PACKAGES = ("libxcb-cursor0", "libxcb-icccm4", "libxcb-image0", "libxcb-keysyms1", "libxcb-randr0",
                "libxcb-render-util0", "libxcb-shape0", "libxcb-xinerama0", "libxcb-xkb1", "libxkbcommon-x11-0")


def xcb_plugin() -> Path | None:
    """PySide6's xcb platform plugin, if this installation has one."""
    spec = importlib.util.find_spec("PySide6")
    if spec is None or spec.origin is None:
        return None
    plugin = Path(spec.origin).parent / "Qt" / "plugins" / "platforms" / "libqxcb.so"
    return plugin if plugin.is_file() else None


def xcb_problem(platform: str = sys.platform, environ: os._Environ | dict = os.environ,
                load=ctypes.CDLL) -> str | None:
    """One line naming the packages to install when Qt would use xcb and its plugin cannot load; else ``None``."""
    if not platform.startswith("linux"):
        return None
    wanted = environ.get("QT_QPA_PLATFORM", "")
    if wanted and not wanted.startswith("xcb"):
        return None  # offscreen, wayland, …: another plugin
    plugin = xcb_plugin()
    if plugin is None:
        return None
    try:
        load(str(plugin))
    except OSError as err:
        missing = str(err).split(":", 1)[0]
        return (f"trackwright: Qt's X11 plugin cannot load ({missing}); install the system packages "
                f"{' '.join(XCB_PACKAGES)} (e.g. sudo apt-get install {' '.join(XCB_PACKAGES)}) and try again")
    return None


__all__ = ["xcb_problem", "xcb_plugin", "XCB_PACKAGES"]
