"""What the window remembers between runs (units, time offset, recent files, layout), via QSettings.

The window receives an :class:`AppSettings` object, so tests hand it one backed
by a temporary INI file and never touch the user's settings. The user's own
settings are an INI file in the platform's per-user configuration folder and the
crash-recovery journals go to its per-user data folder (both from ``platformdirs``).
"""
from __future__ import annotations

from pathlib import Path

import platformdirs
from PySide6 import QtCore

from ..units import UNIT_SYSTEMS, UnitSystem

#: How many recent files the File menu lists.
RECENT_LIMIT = 8
#: The folder name under the platform's per-user folders.
APP_DIR_NAME = "trackwright"


def user_settings_path() -> Path:
    """The user's settings file, e.g. ``~/.config/trackwright/settings.ini`` on Linux."""
    return Path(platformdirs.user_config_dir(APP_DIR_NAME, appauthor=False)) / "settings.ini"


class AppSettings:
    """Typed access to a :class:`QtCore.QSettings` store."""

    def __init__(self, store: QtCore.QSettings | None = None) -> None:
        if store is None:
            store = QtCore.QSettings(str(user_settings_path()), QtCore.QSettings.Format.IniFormat)
        self.store = store
        self._beside_store = store.fileName() != str(user_settings_path())

    @classmethod
    def at_path(cls, path: str | Path) -> "AppSettings":
        """Settings kept in one INI file (tests, portable use)."""
        return cls(QtCore.QSettings(str(path), QtCore.QSettings.Format.IniFormat))

    @property
    def units(self) -> UnitSystem:
        return UNIT_SYSTEMS.get(str(self.store.value("display/units", "metric")), UNIT_SYSTEMS["metric"])

    @units.setter
    def units(self, units: UnitSystem) -> None:
        self.store.setValue("display/units", units.key)

    @property
    def utc_offset_h(self) -> float:
        """Hours added to UTC for displayed times (0 = UTC)."""
        try:
            value = float(self.store.value("display/utc_offset_h", 0.0))
        except (TypeError, ValueError):
            return 0.0
        return value if -14.0 <= value <= 14.0 else 0.0

    @utc_offset_h.setter
    def utc_offset_h(self, hours: float) -> None:
        self.store.setValue("display/utc_offset_h", float(hours))

    @property
    def profile_against_time(self) -> bool:
        return str(self.store.value("display/profile_against_time", "false")).lower() == "true"

    @profile_against_time.setter
    def profile_against_time(self, value: bool) -> None:
        self.store.setValue("display/profile_against_time", "true" if value else "false")

    @property
    def stacked(self) -> bool:
        """Map above profile (True) or side by side (False)."""
        return str(self.store.value("layout/stacked", "true")).lower() == "true"

    @stacked.setter
    def stacked(self, value: bool) -> None:
        self.store.setValue("layout/stacked", "true" if value else "false")

    def recent_files(self) -> list[str]:
        value = self.store.value("files/recent", [])
        if isinstance(value, str):
            value = [value] if value else []
        return [str(v) for v in (value or [])]

    def add_recent_file(self, path: str | Path) -> list[str]:
        path = str(Path(path).resolve())
        files = [path] + [f for f in self.recent_files() if f != path]
        files = files[:RECENT_LIMIT]
        self.store.setValue("files/recent", files)
        return files

    def clear_recent_files(self) -> None:
        self.store.setValue("files/recent", [])

    @property
    def recovery_dir(self) -> Path:
        """Folder for crash-recovery journals: beside an INI store, else the per-user data folder.

        The per-user data folder comes from platformdirs; ``$TRACKWRIGHT_DATA_DIR`` moves it.
        """
        configured = self.store.value("recovery/dir", "")
        if configured:
            return Path(str(configured))
        if self._beside_store and self.store.format() == QtCore.QSettings.Format.IniFormat:
            return Path(self.store.fileName()).with_name("recovery")
        from ..recovery import journal_dir

        return journal_dir()

    def value(self, key: str, default=None):
        return self.store.value(key, default)

    def set_value(self, key: str, value) -> None:
        self.store.setValue(key, value)

    def sync(self) -> None:
        self.store.sync()
