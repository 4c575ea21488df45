"""The web tile providers offered in View ▸ Background, from the ``xyzservices`` catalogue.

Only raster providers in Web Mercator are listed. Those that need no key are offered as they are;
those that need one are offered marked, and become usable once the user has entered the key.
"""
from __future__ import annotations

from dataclasses import dataclass

from .templates import TileTemplate

#: File endings of vector tiles (drawn by style, not as images): not offered.
VECTOR_ENDINGS = (".pbf", ".mvt", ".json")


@dataclass(frozen=True)
class CatalogueEntry:
    """One provider: ``key_field`` names the setting that must hold the user's key (``None``: no key)."""

    name: str
    attribution: str
    key_field: str | None


def _raster_web_mercator(provider) -> bool:
    url = str(provider.get("url", ""))
    if provider.get("status") == "broken" or "crs" in provider:
        return False  # known dead, or drawn in another projection
    if provider.get("tileSize", 256) != 256 or provider.get("zoomOffset", 0) != 0:
        return False
    if url.split("?")[0].endswith(VECTOR_ENDINGS) or str(provider.get("format", "")).endswith(("pbf", "mvt")):
        return False
    return url.startswith(("http://", "https://"))


def _key_field(provider) -> str | None:
    for key, value in provider.items():
        if isinstance(value, str) and "<insert your" in value and "{" + key + "}" in provider["url"]:
            return key
    return None


def _providers() -> dict:
    import xyzservices.providers as xyz
    return xyz.flatten()


def catalogue() -> list[CatalogueEntry]:
    """Every offered provider, sorted by name (the ones without a key first)."""
    entries = []
    for name, provider in _providers().items():
        if not _raster_web_mercator(provider):
            continue
        fields = [k for k, v in provider.items() if isinstance(v, str) and "<insert your" in v
                  and "{" + k + "}" in provider["url"]]
        if len(fields) > 1:
            continue  # needs several secrets (an id and a code): not something to type into one field
        entries.append(CatalogueEntry(name, str(provider.get("attribution", "")), _key_field(provider)))
    return sorted(entries, key=lambda e: (e.key_field is not None, e.name.lower()))


def provider_template(name: str, key: str | None = None) -> TileTemplate:
    """The template of catalogue provider ``name``; ``key`` fills its key placeholder.

    Raises ``KeyError`` for an unknown name and ``ValueError`` when a key is needed but missing.
    """
    provider = _providers()[name]
    field = _key_field(provider)
    values = {}
    if field is not None:
        if not key:
            raise ValueError(f"{name} needs a key: enter yours in View ▸ Background ▸ Web map.")
        values[field] = key
    url = provider.build_url(fill_subdomain=False, scale_factor="{r}", **values)
    return TileTemplate(
        name=name, url=url, attribution=str(provider.get("attribution", name)),
        min_zoom=int(provider.get("min_zoom", 0)), max_zoom=int(provider.get("max_zoom", 19)),
        subdomains=provider.get("subdomains", "abc"), retina=str(provider.get("r", "@2x") or "@2x"),
        tms=bool(provider.get("tms", False)))
