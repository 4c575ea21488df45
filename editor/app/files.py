"""The window's file side: open, recent files, save a cleaned copy, export, the unsaved-changes prompt."""
from __future__ import annotations

import os
from pathlib import Path
from typing import TYPE_CHECKING, Any, Callable

from PySide6 import QtWidgets

from ..io import read_document
from ..io.errors import TrackFileError
from ..io.export import write_document
from ..io.gpx import write_gpx
from ..io.provenance import with_cleaning_record
from .. import CAUTION, __version__
from . import dialogs
from .file_jobs import Cancelled, FileJobBusy, FileJobs
from .session import Session

if TYPE_CHECKING:
    from .window import MainWindow

GPX_FILTER = "GPX track files (*.gpx *.GPX);;All files (*)"
#: The save dialog's title carries the caution too (the file itself records it, editor.io.provenance).
SAVE_TITLE = "Save cleaned copy: an estimate, not for navigation"


class FileController:
    """Opening, saving a cleaned copy and exporting for one window; the document lives in ``session``."""

    def __init__(self, window: MainWindow, session: Session) -> None:
        self.window = window
        self.session = session
        self._jobs: FileJobs | None = None

    @property
    def jobs(self) -> FileJobs:
        """Reads and writes files off the UI thread (progress and Cancel in the status bar, which the
        window builds after its controllers: hence made on first use)."""
        if self._jobs is None:
            self._jobs = FileJobs(self.window)
        return self._jobs

    def _file_job(self, title: str, work: Callable[[Callable[[float], None]], Any], abandon: bool = True) -> Any:
        """Run ``work(progress)`` as a file job; ``None`` (and a status message) when it did not run
        to the end. Errors of the work itself are raised."""
        try:
            return self.jobs.run(title, work, abandon)
        except Cancelled:
            self.window.statusBar().showMessage(f"{title}: cancelled, nothing was changed.", 8000)
        except FileJobBusy as err:
            self.window.statusBar().showMessage(f"{title}: not now, {err}.", 8000)
        return None

    # --- opening ----------------------------------------------------------------------------------
    def open_dialog(self) -> None:
        if not self.confirm_discard("opening another file"):
            return
        source = self.session.source_path
        start = str(source.parent) if source else str(Path.home())
        path, _ = QtWidgets.QFileDialog.getOpenFileName(self.window, "Open a track file", start, GPX_FILTER)
        if path:
            self.open_path(path, confirmed=True)

    def open_path(self, path: str | os.PathLike, confirmed: bool = False) -> bool:
        """Read ``path`` and show it; on a bad file say why and keep the current document."""
        if not confirmed and not self.confirm_discard("opening another file"):
            return False
        window = self.window
        history = window.undo_stack.index()
        try:
            doc = self._file_job(f"Reading {Path(path).name}",
                                 lambda progress: read_document(path, progress=progress))
        except TrackFileError as err:
            partial = getattr(err, "partial", None)
            if partial is not None and partial.point_count:
                answer = dialogs.ask(
                    window, "File is incomplete",
                    f"{err}\n\nThe file stops early. Open the {partial.point_count:,} points read before "
                    "the problem, read-only? Saving a cleaned copy writes only those points; the copy "
                    "can then be edited. The damaged file is never changed.")
                if answer == QtWidgets.QMessageBox.StandardButton.Yes:
                    window.display.set_document(partial, path, read_only=True)
                    window.recovery.document_opened(None)  # the file cannot be read again to replay edits
                    window.statusBar().showMessage(f"Salvaged {partial.point_count:,} points, read-only: {err}")
                    self._remember(path)
                    return True
                return False
            self.show_file_error("Cannot open the file", err)
            return False
        except OSError as err:
            self.show_file_error("Cannot open the file", TrackFileError(path, err.strerror or str(err)))
            return False
        if doc is None:  # cancelled: the shown document stays as it was
            return False
        if window.undo_stack.index() != history and not self.confirm_discard("opening another file"):
            return False  # edited while the file was being read
        window.display.set_document(doc, path)
        self._remember(path)
        window.statusBar().showMessage(f"Opened {Path(path).name}", 5000)
        window.editing.offer_time_sort()
        return True

    def show_file_error(self, title: str, err: TrackFileError) -> None:
        where = f"line {err.line}" if err.line else "the file"
        # plain text: the problem quotes the file, which may hold anything ("<ele>", "<img ...>")
        text = (f"{Path(err.path).name if err.path else 'The data'}: {err.problem}"
                f"\n\nWhere: {err.path or '—'}, {where}.")
        dialogs.warn(self.window, title, text)
        self.window.statusBar().showMessage(str(err), 10000)

    def _remember(self, path: str | os.PathLike) -> None:
        self.window.settings.add_recent_file(path)
        self.refresh_recent_menu()

    def refresh_recent_menu(self) -> None:
        menu = self.window.recent_menu
        if menu is None:  # the menus are not built yet
            return
        menu.clear()
        files = self.window.settings.recent_files()
        for i, name in enumerate(files):
            action = menu.addAction(f"&{i + 1} {Path(name).name}")
            action.setToolTip(dialogs.plain_tooltip(name))
            action.triggered.connect(lambda _checked=False, n=name: self.open_path(n))
        if files:
            menu.addSeparator()
            menu.addAction("Clear the list", self._clear_recent)
        menu.setEnabled(bool(files))

    def _clear_recent(self) -> None:
        self.window.settings.clear_recent_files()
        self.refresh_recent_menu()

    # --- saving -----------------------------------------------------------------------------------
    def confirm_overwrite(self, target: Path) -> bool:
        """Ask before replacing an existing file; the original track file gets a stronger warning."""
        if not target.exists():
            return True
        is_original = self.session.is_original(target)
        if is_original:
            from ..io.save import next_backup_name

            text = (f"{target.name} is the file you opened. Saving over it replaces the original recording; "
                    f"the original is kept as a backup:\n{next_backup_name(target)}\n\nReplace the original?")
        else:
            text = f"{target.name} already exists. Replace it?"
        answer = dialogs.warn(
            self.window, "Replace file?", text,
            QtWidgets.QMessageBox.StandardButton.Yes | QtWidgets.QMessageBox.StandardButton.Cancel,
            QtWidgets.QMessageBox.StandardButton.Cancel)
        return answer == QtWidgets.QMessageBox.StandardButton.Yes

    def save_cleaned_copy(self) -> bool:
        """Ask where (default: beside the original with our suffix) and write GPX 1.1 atomically."""
        if not self.confirm_empty_tracks():
            return False
        default = self.session.default_copy_path(Path.home())
        path, _ = QtWidgets.QFileDialog.getSaveFileName(
            self.window, SAVE_TITLE, str(default), GPX_FILTER,
            options=QtWidgets.QFileDialog.Option.DontConfirmOverwrite)
        if not path:
            return False
        target = Path(path)
        if target.suffix.lower() != ".gpx":
            target = target.with_suffix(target.suffix + ".gpx") if target.suffix else target.with_suffix(".gpx")
        return self.write_copy(target)

    def confirm_empty_tracks(self) -> bool:
        """Before saving a track without points (all deleted): ask, it is rarely meant."""
        tracks = self.session.doc.tracks
        empty = [i for i, t in enumerate(tracks) if not len(t.points)]
        if not empty:
            return True
        buttons = QtWidgets.QMessageBox.StandardButton
        which = "The track has" if len(tracks) == 1 else f"{len(empty)} of the file's {len(tracks)} tracks have"
        answer = dialogs.ask(
            self.window, "Save an empty track?",
            f"{which} no points left. The saved copy will contain an empty track.\n\nSave anyway?",
            buttons.Yes | buttons.Cancel, buttons.Cancel)
        return answer == buttons.Yes

    def write_copy(self, target: Path) -> bool:
        """Write the document to ``target`` as GPX 1.1 (asking before replacing a file)."""
        if not self.confirm_overwrite(target):
            return False
        window = self.window
        snapshot, history = self.session.doc.snapshot(), window.undo_stack.index()
        # the copy records what was done (program, date, each step with its settings, the caution)
        snapshot.extra = with_cleaning_record(snapshot.extra, window.editing.cleaning_steps(), __version__)
        try:
            done = self._file_job(f"Saving {target.name}",
                                  lambda progress: write_gpx(snapshot, target, progress=progress) or True,
                                  abandon=False)  # "cancelled" must mean "nothing was written"
        except TrackFileError as err:
            self.show_file_error("Cannot save", err)
            return False
        except OSError as err:
            self.show_file_error("Cannot save", TrackFileError(target, err.strerror or str(err)))
            return False
        if not done:
            return False
        if window.undo_stack.index() != history:  # edited while saving: those edits are not in the copy
            self.session.saved_copy_path = target
            window.statusBar().showMessage(f"Saved {target.name} without the edits made while saving.", 8000)
            return True
        window.undo_stack.setClean()
        window.recovery.saved(target)
        self._remember(target)  # Open Recent lists saved copies too
        if self.session.saved_copy(target):
            # The salvaged points now live in a sound file of their own: work on that.
            window.recovery.document_opened(target)
        window.display.update_title()  # the title names the copy now being edited
        window.statusBar().showMessage(f"Saved cleaned copy: {target}", 8000)
        return True

    def export_as(self, kind: str) -> bool:
        """Export to ``kind`` (``"geojson"`` or ``"csv"``) beside the original by default."""
        base = self.session.saved_copy_path or self.session.source_path or Path.home() / "track.gpx"
        default = base.with_suffix(f".{kind}")
        filters = {"geojson": "GeoJSON (*.geojson *.json)", "csv": "CSV table (*.csv)"}
        path, _ = QtWidgets.QFileDialog.getSaveFileName(
            self.window, f"Export {kind.upper() if kind == 'csv' else 'GeoJSON'}", str(default), filters[kind],
            options=QtWidgets.QFileDialog.Option.DontConfirmOverwrite)
        if not path:
            return False
        target = Path(path)
        if target.suffix.lower() not in (".geojson", ".json", ".csv"):
            target = target.with_name(target.name + f".{kind}")
        if not self.confirm_overwrite(target):
            return False
        try:
            write_document(self.session.doc, target)
        except (TrackFileError, OSError) as err:
            if isinstance(err, OSError):
                err = TrackFileError(target, err.strerror or str(err))
            self.show_file_error("Cannot export", err)
            return False
        self.window.statusBar().showMessage(f"Exported {target}", 8000)
        return True

    def confirm_discard(self, doing: str) -> bool:
        """Before ``doing`` something that drops the document: offer to save unsaved changes."""
        if self.window.undo_stack.isClean():
            return True
        buttons = QtWidgets.QMessageBox.StandardButton
        answer = dialogs.ask(
            self.window, "Unsaved changes",
            f"The track has changes that are not saved. Save a cleaned copy before {doing}?",
            buttons.Save | buttons.Discard | buttons.Cancel, buttons.Save)
        if answer == buttons.Save:
            return self.save_cleaned_copy()
        return answer == buttons.Discard

    def show_about(self) -> None:
        QtWidgets.QMessageBox.about(
            self.window, "About Trackwright",
            f"<h3>Trackwright {__version__}</h3>"
            "<p>An editor for recorded GPS tracks: look at a recording on a plane map and an elevation "
            "profile, clean it, compare the totals, and save a cleaned copy that keeps everything else "
            "in the file.</p>"
            f"<p><b>Caution.</b> {CAUTION} Check a cleaned track against what you know of the route "
            "before relying on it.</p>"
            "<p>Distances are measured on the WGS84 ellipsoid; the map is a transverse Mercator "
            "projection centred on the data, in metres, north up.</p>")

