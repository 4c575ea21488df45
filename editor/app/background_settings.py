"""What the map background remembers between runs (kind, provider, keys, archive, opacity, cache size).

Kept apart from :mod:`editor.app.settings` so the background's keys live beside the code that uses
them; it stores into the same :class:`~editor.app.settings.AppSettings`.
"""
from __future__ import annotations

from pathlib import Path

from PySide6 import QtCore

from .settings import AppSettings

#: The background kinds, as stored.
KINDS = ("none", "relief", "web", "archive")
#: Default bound of the disk cache of web tiles, megabytes.
DEFAULT_CACHE_MB = 500


class BackgroundSettings:
    """Typed access to the ``background/*`` keys of ``settings``."""

    def __init__(self, settings: AppSettings) -> None:
        self.settings = settings

    def _get(self, key: str, default: str = "") -> str:
        value = self.settings.value(f"background/{key}", default)
        return default if value is None else str(value)

    def _set(self, key: str, value) -> None:
        self.settings.set_value(f"background/{key}", value)

    @property
    def kind(self) -> str:
        kind = self._get("kind", "none")
        return kind if kind in KINDS else "none"

    @kind.setter
    def kind(self, kind: str) -> None:
        self._set("kind", kind if kind in KINDS else "none")

    @property
    def provider(self) -> str:
        """Catalogue name of the web provider, or "" for the custom template."""
        return self._get("provider", "OpenStreetMap.Mapnik")

    @provider.setter
    def provider(self, name: str) -> None:
        self._set("provider", name)

    @property
    def custom_url(self) -> str:
        return self._get("custom_url")

    @custom_url.setter
    def custom_url(self, url: str) -> None:
        self._set("custom_url", url)

    @property
    def custom_attribution(self) -> str:
        return self._get("custom_attribution")

    @custom_attribution.setter
    def custom_attribution(self, text: str) -> None:
        self._set("custom_attribution", text)

    def key_for(self, provider: str) -> str:
        return self._get(f"keys/{provider.replace('.', '_')}")

    def set_key_for(self, provider: str, key: str) -> None:
        self._set(f"keys/{provider.replace('.', '_')}", key)

    @property
    def archive(self) -> str:
        return self._get("archive")

    @archive.setter
    def archive(self, path: str) -> None:
        self._set("archive", str(path))

    @property
    def opacity(self) -> float:
        try:
            value = float(self._get("opacity", "0.7"))
        except ValueError:
            return 0.7
        return min(max(value, 0.0), 1.0)

    @opacity.setter
    def opacity(self, value: float) -> None:
        self._set("opacity", float(value))

    @property
    def told_about_privacy(self) -> bool:
        """Whether the user has been told that the tile server sees the viewed area."""
        return self._get("privacy_told", "false").lower() == "true"

    @told_about_privacy.setter
    def told_about_privacy(self, value: bool) -> None:
        self._set("privacy_told", "true" if value else "false")

    @property
    def cache_mb(self) -> int:
        try:
            value = int(float(self._get("cache_mb", str(DEFAULT_CACHE_MB))))
        except ValueError:
            return DEFAULT_CACHE_MB
        return min(max(value, 10), 20000)

    @cache_mb.setter
    def cache_mb(self, value: int) -> None:
        self._set("cache_mb", int(value))

    @property
    def cache_dir(self) -> Path:
        """Disk cache of web tiles: beside an INI store (tests, portable use), else the per-user cache folder."""
        configured = self._get("cache_dir")
        if configured:
            return Path(configured)
        store = self.settings.store
        if store.format() == QtCore.QSettings.Format.IniFormat:
            return Path(store.fileName()).with_name("tile-cache")
        import platformdirs
        return Path(platformdirs.user_cache_dir("Trackwright", "Trackwright")) / "tiles"
