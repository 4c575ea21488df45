"""The window's file side: open, recent files, save a cleaned copy, export, the unsaved-changes prompt."""
from __future__ import annotations

import os
from pathlib import Path

from PySide6 import QtWidgets

from ..io.errors import TrackFileError

#: Added to the original's name for the default cleaned copy: ``ride.gpx`` → ``ride.tidy.gpx``.
CLEANED_SUFFIX = ".tidy"
#: The bundled demo ride opened when no file is given.
DEMO_DIR = Path(__file__).resolve().parents[2] / "demo_tracks"
DEMO_RIDE = DEMO_DIR / "demo_ride.gpx"

GPX_FILTER = "GPX track files (*.gpx *.GPX);;All files (*)"

CAUTION = ("Cleaned tracks are estimates, not surveyed data, and are not for navigation. "
           "Check a cleaned track against what you know of the route before relying on it.")


def cleaned_copy_name(original: Path) -> Path:
    """Default name of a cleaned copy, beside the original."""
    return original.with_name(original.stem + CLEANED_SUFFIX + ".gpx")


class FileOps:
    """Mixin for :class:`~editor.app.window.MainWindow`."""

    # --- opening ----------------------------------------------------------------------------------
    def open_dialog(self) -> None:
        if not self.confirm_discard("opening another file"):
            return
        start = str(self.source_path.parent) if self.source_path else str(Path.home())
        path, _ = QtWidgets.QFileDialog.getOpenFileName(self, "Open a track file", start, GPX_FILTER)
        if path:
            self.open_path(path, confirmed=True)

    def open_path(self, path: str | os.PathLike, confirmed: bool = False) -> bool:
        """Read ``path`` and show it; on a bad file say why and keep the current document."""
        if not confirmed and not self.confirm_discard("opening another file"):
            return False
        from ..io.gpx import read_gpx

        try:
            doc = read_gpx(path)
        except TrackFileError as err:
            partial = getattr(err, "partial", None)
            if partial is not None and partial.point_count:
                answer = QtWidgets.QMessageBox.question(
                    self, "File is incomplete",
                    f"{err}\n\nThe file stops early. Open the {partial.point_count:,} points read before "
                    "the problem, read-only? Saving a cleaned copy writes only those points; the copy "
                    "can then be edited. The damaged file is never changed.")
                if answer == QtWidgets.QMessageBox.StandardButton.Yes:
                    self.set_document(partial, path, read_only=True)
                    self.recovery.document_opened(None)  # the file cannot be read again to replay edits
                    self.statusBar().showMessage(f"Salvaged {partial.point_count:,} points, read-only: {err}")
                    self._remember(path)
                    return True
                return False
            self.show_file_error("Cannot open the file", err)
            return False
        except OSError as err:
            self.show_file_error("Cannot open the file", TrackFileError(path, err.strerror or str(err)))
            return False
        self.set_document(doc, path)
        self._remember(path)
        self.statusBar().showMessage(f"Opened {Path(path).name}", 5000)
        self.offer_time_sort()
        return True

    def open_demo(self) -> bool:
        return self.open_path(DEMO_RIDE)

    def show_file_error(self, title: str, err: TrackFileError) -> None:
        where = f"line {err.line}" if err.line else "the file"
        text = (f"<b>{Path(err.path).name if err.path else 'The data'}</b>: {err.problem}"
                f"<br><br>Where: {err.path or '—'}, {where}.")
        QtWidgets.QMessageBox.warning(self, title, text)
        self.statusBar().showMessage(str(err), 10000)

    def _remember(self, path) -> None:
        self.settings.add_recent_file(path)
        self.refresh_recent_menu()

    def refresh_recent_menu(self) -> None:
        menu = getattr(self, "recent_menu", None)
        if menu is None:
            return
        menu.clear()
        files = self.settings.recent_files()
        for i, name in enumerate(files):
            action = menu.addAction(f"&{i + 1} {Path(name).name}")
            action.setToolTip(name)
            action.triggered.connect(lambda _checked=False, n=name: self.open_path(n))
        if files:
            menu.addSeparator()
            menu.addAction("Clear the list", self._clear_recent)
        menu.setEnabled(bool(files))

    def _clear_recent(self) -> None:
        self.settings.clear_recent_files()
        self.refresh_recent_menu()

    # --- saving -----------------------------------------------------------------------------------
    def confirm_overwrite(self, target: Path) -> bool:
        """Ask before replacing an existing file; the original track file gets a stronger warning."""
        if not target.exists():
            return True
        is_original = self.source_path is not None and _same_file(target, self.source_path)
        text = (f"{target.name} is the file you opened. Replacing it loses the original recording.\n\n"
                "Replace the original anyway?" if is_original else f"{target.name} already exists. Replace it?")
        answer = QtWidgets.QMessageBox.warning(
            self, "Replace file?", text,
            QtWidgets.QMessageBox.StandardButton.Yes | QtWidgets.QMessageBox.StandardButton.Cancel,
            QtWidgets.QMessageBox.StandardButton.Cancel)
        return answer == QtWidgets.QMessageBox.StandardButton.Yes

    def save_cleaned_copy(self) -> bool:
        """Ask where (default: beside the original with our suffix) and write GPX 1.1 atomically."""
        if not self.confirm_empty_tracks():
            return False
        if self.saved_copy_path is not None:
            default = self.saved_copy_path
        elif self.source_path is not None:
            default = cleaned_copy_name(self.source_path)
        else:
            default = Path.home() / f"track{CLEANED_SUFFIX}.gpx"
        path, _ = QtWidgets.QFileDialog.getSaveFileName(
            self, "Save cleaned copy", str(default), GPX_FILTER,
            options=QtWidgets.QFileDialog.Option.DontConfirmOverwrite)
        if not path:
            return False
        target = Path(path)
        if target.suffix.lower() != ".gpx":
            target = target.with_suffix(target.suffix + ".gpx") if target.suffix else target.with_suffix(".gpx")
        return self.write_copy(target)

    def confirm_empty_tracks(self) -> bool:
        """Before saving a track without points (all deleted): ask, it is rarely meant."""
        empty = [i for i, t in enumerate(self.doc.tracks) if not len(t.points)]
        if not empty:
            return True
        buttons = QtWidgets.QMessageBox.StandardButton
        which = ("The track has" if len(self.doc.tracks) == 1 else
                 f"{len(empty)} of the file's {len(self.doc.tracks)} tracks have")
        answer = QtWidgets.QMessageBox.question(
            self, "Save an empty track?",
            f"{which} no points left. The saved copy will contain an empty track.\n\nSave anyway?",
            buttons.Yes | buttons.Cancel, buttons.Cancel)
        return answer == buttons.Yes

    def write_copy(self, target: Path) -> bool:
        if not self.confirm_overwrite(target):
            return False
        from ..io.gpx import write_gpx

        try:
            write_gpx(self.doc, target)
        except TrackFileError as err:
            self.show_file_error("Cannot save", err)
            return False
        except OSError as err:
            self.show_file_error("Cannot save", TrackFileError(target, err.strerror or str(err)))
            return False
        self.saved_copy_path = target
        self.undo_stack.setClean()
        self.recovery.discard()
        self._remember(target)  # Open Recent lists saved copies too
        if self.read_only:
            # The salvaged points now live in a sound file of their own: work on that.
            self.read_only = False
            self.source_path = target
            self.recovery.document_opened(target)
        self.update_title()  # the title names the copy now being edited
        self.statusBar().showMessage(f"Saved cleaned copy: {target}", 8000)
        return True

    def export_as(self, kind: str) -> bool:
        """Export to ``kind`` (``"geojson"`` or ``"csv"``) beside the original by default."""
        from ..io.export import write_document

        base = self.saved_copy_path or self.source_path or Path.home() / "track.gpx"
        default = base.with_suffix(f".{kind}")
        filters = {"geojson": "GeoJSON (*.geojson *.json)", "csv": "CSV table (*.csv)"}
        path, _ = QtWidgets.QFileDialog.getSaveFileName(
            self, f"Export {kind.upper() if kind == 'csv' else 'GeoJSON'}", str(default), filters[kind],
            options=QtWidgets.QFileDialog.Option.DontConfirmOverwrite)
        if not path:
            return False
        target = Path(path)
        if target.suffix.lower() not in (".geojson", ".json", ".csv"):
            target = target.with_name(target.name + f".{kind}")
        if not self.confirm_overwrite(target):
            return False
        try:
            write_document(self.doc, target)
        except (TrackFileError, OSError) as err:
            if isinstance(err, OSError):
                err = TrackFileError(target, err.strerror or str(err))
            self.show_file_error("Cannot export", err)
            return False
        self.statusBar().showMessage(f"Exported {target}", 8000)
        return True

    def confirm_discard(self, doing: str) -> bool:
        """Before ``doing`` something that drops the document: offer to save unsaved changes."""
        if self.undo_stack.isClean():
            return True
        buttons = QtWidgets.QMessageBox.StandardButton
        answer = QtWidgets.QMessageBox.question(
            self, "Unsaved changes",
            f"The track has changes that are not saved. Save a cleaned copy before {doing}?",
            buttons.Save | buttons.Discard | buttons.Cancel, buttons.Save)
        if answer == buttons.Save:
            return self.save_cleaned_copy()
        return answer == buttons.Discard

    def show_about(self) -> None:
        from .. import __version__
        QtWidgets.QMessageBox.about(
            self, "About Trackwright",
            f"<h3>Trackwright {__version__}</h3>"
            "<p>An editor for recorded GPS tracks: look at a recording on a plane map and an elevation "
            "profile, clean it, compare the totals, and save a cleaned copy that keeps everything else "
            "in the file.</p>"
            f"<p><b>Caution.</b> {CAUTION}</p>"
            "<p>Distances are measured on the WGS84 ellipsoid; the map is a transverse Mercator "
            "projection centred on the data, in metres, north up.</p>")


def _same_file(a: Path, b: Path) -> bool:
    try:
        return a.resolve() == b.resolve() or (a.exists() and b.exists() and a.samefile(b))
    except OSError:
        return False
