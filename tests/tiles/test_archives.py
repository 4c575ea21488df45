"""MBTiles and PMTiles readers on archives written here: the MBTiles 1.3 layout written with sqlite3,
PMTiles written with the pmtiles library's own writer (the reference implementation)."""
import sqlite3

import pytest
from tile_support import png_bytes, reference_tile, write_mbtiles, write_pmtiles

from editor.tiles.archives import (
    ArchiveError,
    MBTilesArchive,
    PMTilesArchive,
    open_archive,
)

TILES = {(z, x, y): png_bytes(reference_tile(z, x, y, size=32)) for z, x, y in
         [(3, 4, 2), (3, 4, 3), (4, 8, 5), (4, 9, 5), (0, 0, 0)]}


@pytest.mark.parametrize("writer, kind", [(write_mbtiles, MBTilesArchive), (write_pmtiles, PMTilesArchive)])
def test_archive_returns_each_tile_at_its_xyz_address(tmp_path, writer, kind):
    path = tmp_path / "ref.bin"  # told apart by content, not by name
    writer(path, TILES, attribution="© Generated lines")
    archive = open_archive(path)
    assert isinstance(archive, kind)
    assert archive.info.attribution == "© Generated lines"
    assert (archive.info.min_zoom, archive.info.max_zoom) == (0, 4)
    for key, data in TILES.items():
        assert archive.tile(*key) == data
    assert archive.tile(3, 4, 5) is None  # rows are not mirrored: (3, 4, 5) is TMS row 2 of (3, 4, 2)
    assert archive.tile(4, 0, 0) is None
    archive.close()


def test_opening_leaves_the_archive_untouched(tmp_path):
    path = tmp_path / "ref.mbtiles"
    write_mbtiles(path, TILES)
    before = path.read_bytes()
    archive = open_archive(path)
    archive.tile(3, 4, 2)
    archive.close()
    assert path.read_bytes() == before and sorted(p.name for p in tmp_path.iterdir()) == ["ref.mbtiles"]


def test_bad_archives_are_named_with_the_reason(tmp_path):
    text = tmp_path / "notes.mbtiles"
    text.write_text("not a database")
    with pytest.raises(ArchiveError, match="notes.mbtiles.*neither"):
        open_archive(text)
    with pytest.raises(ArchiveError, match="missing.pmtiles"):
        open_archive(tmp_path / "missing.pmtiles")
    vector = tmp_path / "vector.mbtiles"
    write_mbtiles(vector, TILES)
    db = sqlite3.connect(vector)
    db.execute("UPDATE metadata SET value='pbf' WHERE name='format'")
    db.commit()
    db.close()
    with pytest.raises(ArchiveError, match="vector.mbtiles.*pbf.*raster"):
        open_archive(vector)
    empty = tmp_path / "empty.sqlite"
    sqlite3.connect(empty).execute("CREATE TABLE x (a)").connection.close()
    with pytest.raises(ArchiveError, match="empty.sqlite.*not a readable MBTiles"):
        open_archive(empty)
