"""The Qt-free core must import and work with Qt made unavailable (shared/design.md, rule 1)."""
import subprocess
import sys
import textwrap
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

BLOCKED_IMPORT = textwrap.dedent("""
    import importlib, pkgutil, sys
    BLOCKED = ("PySide6", "shiboken6", "pyqtgraph", "PyQt5", "PyQt6", "PySide2")

    class BlockQt:
        def find_spec(self, name, path=None, target=None):
            if name.split(".")[0] in BLOCKED:
                raise ImportError(f"Qt is blocked in this test: {name}")
            return None

    sys.meta_path.insert(0, BlockQt())
    import editor
    names = ["editor.cli", "editor.recovery", "editor.units", "editor.bundled", "editor.app.session", "editor.__main__"]
    for pkg in ("editor.model", "editor.io", "editor.geo", "editor.processing", "editor.cli", "editor.recovery",
                "editor.terrain", "editor.tiles"):
        module = importlib.import_module(pkg)
        names += [m.name for m in pkgutil.walk_packages(module.__path__, pkg + ".")]
    imported = []
    for name in names:
        if name == "editor.__main__":
            continue  # running it would start the program
        try:
            importlib.import_module(name)
        except ModuleNotFoundError as err:
            if err.name == name:  # an optional module that is not there
                continue
            raise
        imported.append(name)
    loaded_qt = sorted(m for m in sys.modules if m.split(".")[0] in BLOCKED)
    assert not loaded_qt, loaded_qt
    print(len(imported), " ".join(imported))
""")


def test_core_imports_without_qt():
    result = subprocess.run([sys.executable, "-c", BLOCKED_IMPORT], cwd=ROOT, capture_output=True, text=True,
                            timeout=120)
    assert result.returncode == 0, result.stderr
    count, names = result.stdout.split(" ", 1)
    for required in ("editor.cli", "editor.cli.clean", "editor.recovery", "editor.model.document", "editor.io.gpx",
                     "editor.geo.distance", "editor.processing.stats", "editor.processing.smoothing",
                     "editor.tiles.warp", "editor.tiles.archives", "editor.tiles.catalogue"):
        assert required in names.split()


def test_blocker_really_blocks_qt():
    # Guard against a test that cannot fail: the same blocker must stop a Qt import.
    probe = BLOCKED_IMPORT.split("import editor")[0] + "import pyqtgraph\n"
    result = subprocess.run([sys.executable, "-c", probe], cwd=ROOT, capture_output=True, text=True, timeout=60)
    assert result.returncode != 0 and "Qt is blocked" in result.stderr
