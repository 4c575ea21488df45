"""URL templates and the provider list taken from the xyzservices catalogue."""
import pytest
import xyzservices.providers as xyz

from editor.tiles.catalogue import catalogue, provider_template
from editor.tiles.templates import TemplateError, TileTemplate, custom_template


def test_placeholders_are_filled():
    t = TileTemplate("t", "https://{s}.tiles.test/{z}/{x}/{y}{r}.png", "© test", subdomains="abc")
    assert t.tile_url(5, 3, 4) == "https://b.tiles.test/5/3/4.png"  # subdomain (x + y) mod 3
    urls = {t.tile_url(5, x, 0) for x in range(6)}
    assert {u.split(".")[0] for u in urls} == {"https://a", "https://b", "https://c"}
    assert t.tile_url(5, 3, 4) == t.tile_url(5, 3, 4)  # one URL per tile: the cache finds it again
    assert t.tile_url(5, 3, 4, high_dpi=True).endswith("/5/3/4@2x.png")
    flipped = TileTemplate("t", "https://tiles.test/{z}/{x}/{-y}.png", "© test")
    assert flipped.tile_url(3, 1, 0) == "https://tiles.test/3/1/7.png"  # TMS row 2**z − 1 − y
    assert TileTemplate("t", "https://tiles.test/{z}/{x}/{y}.png", "c", tms=True).tile_url(3, 1, 0).endswith("/3/1/7.png")


def test_custom_template_checks_what_the_rider_typed():
    t = custom_template(" http://127.0.0.1:8080/{z}/{x}/{y}.png ")
    assert t.url == "http://127.0.0.1:8080/{z}/{x}/{y}.png" and "127.0.0.1" in t.attribution
    assert custom_template("https://t.test/{z}/{x}/{-y}.png", "© Test maps").attribution == "© Test maps"
    with pytest.raises(TemplateError, match="https://"):
        custom_template("tiles.test/{z}/{x}/{y}.png")
    with pytest.raises(TemplateError, match=r"\{y\}"):
        custom_template("https://t.test/{z}/{x}.png")
    with pytest.raises(TemplateError, match=r"\{q\}"):
        custom_template("https://t.test/{z}/{x}/{y}/{q}.png")


def test_catalogue_offers_raster_web_mercator_providers_with_their_keys_marked():
    entries = catalogue()
    names = {e.name for e in entries}
    flat = xyz.flatten()
    assert "OpenStreetMap.Mapnik" in names
    for entry in entries:
        provider = flat[entry.name]
        assert provider.get("status") != "broken" and "crs" not in provider
        assert entry.attribution.strip()  # every provider offered has a credit line to draw
        assert (entry.key_field is not None) == provider.requires_token()
    assert any(e.key_field for e in entries) and any(not e.key_field for e in entries)
    # No key first: the list opens on maps that work as they are.
    first_keyed = next(i for i, e in enumerate(entries) if e.key_field)
    assert all(e.key_field for e in entries[first_keyed:])


def test_provider_template_fills_the_key_and_keeps_subdomains():
    keyed = next(e for e in catalogue() if e.key_field)
    with pytest.raises(ValueError, match="key"):
        provider_template(keyed.name)
    t = provider_template(keyed.name, "SECRET123")
    assert "SECRET123" in t.tile_url(3, 1, 2) and "<insert" not in t.tile_url(3, 1, 2)
    osm = provider_template("OpenStreetMap.Mapnik")
    assert osm.tile_url(3, 1, 2) == "https://tile.openstreetmap.org/3/1/2.png"
    assert osm.max_zoom == 19 and "OpenStreetMap" in osm.attribution
    with_subdomains = next(n for n, p in xyz.flatten().items() if "{s}" in p["url"] and not p.requires_token()
                           and n in {e.name for e in catalogue()})
    assert "{s}" not in provider_template(with_subdomains).tile_url(3, 1, 2)
