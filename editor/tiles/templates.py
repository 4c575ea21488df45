"""Tile URL templates: ``{z}/{x}/{y}`` with ``{s}`` subdomains, ``{r}`` high-DPI suffix and ``{-y}`` rows.

A :class:`TileTemplate` is everything the fetcher needs to know about one web source: the URL
pattern, its zoom limits and the attribution that must be drawn on the map.
"""
from __future__ import annotations

import re
from dataclasses import dataclass
from urllib.parse import urlsplit

#: Placeholders a custom template may use.
KNOWN_FIELDS = {"z", "x", "y", "-y", "s", "r"}


class TemplateError(ValueError):
    """A custom URL template that cannot fetch tiles; the message says what to change."""


@dataclass(frozen=True)
class TileTemplate:
    """One web tile source.

    ``url``: pattern with ``{z}``, ``{x}``, ``{y}`` (or ``{-y}`` for rows counted from the south),
    optional ``{s}`` (one of ``subdomains``) and ``{r}`` (``"@2x"`` on high-DPI screens when
    ``retina`` says the server has such tiles, otherwise empty).
    """

    name: str
    url: str
    attribution: str
    min_zoom: int = 0
    max_zoom: int = 19
    subdomains: str | tuple[str, ...] = "abc"
    retina: str = "@2x"
    tms: bool = False

    def tile_url(self, z: int, x: int, y: int, high_dpi: bool = False) -> str:
        """The URL of tile ``(z, x, y)`` (x already wrapped into the world)."""
        subs = list(self.subdomains) if self.subdomains else [""]
        # A fixed subdomain per tile keeps every tile at one URL, so the disk cache finds it again.
        s = subs[(x + y) % len(subs)]
        row = 2 ** z - 1 - y
        values = {"z": z, "x": x, "y": row if self.tms else y, "-y": row, "s": s,
                  "r": self.retina if high_dpi and "{r}" in self.url else ""}
        return re.sub(r"\{(-?[a-z]+)\}", lambda m: str(values.get(m.group(1), m.group(0))), self.url)

    @property
    def host(self) -> str:
        """The host (first subdomain filled in) for per-host request limits and status messages."""
        return urlsplit(self.tile_url(0, 0, 0)).hostname or ""


def custom_template(url: str, attribution: str = "") -> TileTemplate:
    """A template the user typed; raises :class:`TemplateError` naming what is wrong."""
    url = url.strip()
    parts = urlsplit(url)
    if parts.scheme not in ("http", "https") or not parts.netloc:
        raise TemplateError(f"“{url}” is not a web address: it must start with https:// (or http://).")
    fields = set(re.findall(r"\{(-?[a-z]+)\}", url))
    unknown = fields - KNOWN_FIELDS
    if unknown:
        raise TemplateError(f"Unknown placeholder {{{sorted(unknown)[0]}}} in “{url}”: "
                            "use {z}, {x}, {y} (or {-y}), {s} and {r}.")
    missing = [f for f in ("z", "x") if f not in fields]
    if "y" not in fields and "-y" not in fields:
        missing.append("y")
    if missing:
        raise TemplateError(f"“{url}” needs the placeholders {{z}}, {{x}} and {{y}}; "
                            f"{', '.join('{' + m + '}' for m in missing)} missing.")
    host = parts.hostname or "the tile server"
    return TileTemplate(name=f"Custom ({host})", url=url,
                        attribution=attribution.strip() or f"Map tiles: {host}")
