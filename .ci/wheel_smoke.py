"""Run by .ci/run with the Python of a fresh venv that has only the built wheel installed, outside the checkout.

Checks that the installed program finds its bundled resources and demo inside the installed package and
opens its window offscreen on the demo ride with its icons.
"""
import os
import subprocess
import sys
import sysconfig
import tempfile
from pathlib import Path

os.environ["QT_QPA_PLATFORM"] = "offscreen"
site = Path(sysconfig.get_paths()["purelib"]).resolve()

from editor.bundled import demo_ride, folder  # noqa: E402

for name in ("resources", "demo_tracks"):
    assert folder(name).resolve().is_relative_to(site), f"{name} found outside the installed package: {folder(name)}"
assert demo_ride().is_file()

script = Path(sys.executable).with_name("trackwright")
run = subprocess.run([str(script), "stats", str(demo_ride())], capture_output=True, text=True, timeout=120)
assert run.returncode == 0 and "distance" in run.stdout, run.stderr
print(run.stdout.strip().splitlines()[2])

from editor.app import create_application  # noqa: E402
from editor.app.settings import AppSettings  # noqa: E402
from editor.app.window import MainWindow  # noqa: E402
from editor.views.style import icon  # noqa: E402

app = create_application()
with tempfile.TemporaryDirectory() as settings_dir:
    window = MainWindow(AppSettings.at_path(Path(settings_dir) / "settings.ini"))
    window.show()
    assert window.files.open_path(demo_ride(), confirmed=True)
    app.processEvents()
    assert not icon("save").isNull(), "icons are missing from the installed package"
    points = len(window.session.doc.tracks[0].points)
    window.close()
print(f"window opened offscreen on the installed demo ride ({points:,} points)")
