"""Writing refuses values GPX 1.1 cannot hold, and a refused save leaves the old file as it was.

Limits from the GPX 1.1 schema (latitudeType [-90, 90], longitudeType [-180, 180), sat as
xsd:nonNegativeInteger, xsd:decimal numbers) and XML 1.0 (allowed characters).
"""
import numpy as np
import pytest

from editor.io.errors import TrackFileError
from editor.io.gpx import gpx_bytes, read_gpx, write_gpx
from editor.io.save import leftover_temp_files
from editor.model import Document, PointTable, Track
from tests.io.samples import LOGGER_11


def doc_with(**columns):
    lat = columns.pop("lat", [1.0, 2.0])
    lon = columns.pop("lon", [1.0, 2.0])
    return Document(tracks=[Track(PointTable.from_columns(lat, lon, **columns), [0, 1], segment_extra=[None, None])])


@pytest.mark.parametrize("columns, problem", [
    ({"lat": [1.0, np.nan]}, "track 1, segment 2, point 1: lat nan is not a valid coordinate"),
    ({"lat": [91.0, 1.0]}, "track 1, segment 1, point 1: lat 91.0 is not a valid coordinate"),
    ({"lon": [1.0, -180.5]}, "track 1, segment 2, point 1: lon -180.5 is not a valid coordinate"),
    ({"ele": [np.inf, 1.0]}, "track 1, segment 1, point 1: ele inf cannot be written"),
    ({"sat": [3.5, 1.0]}, "track 1, segment 1, point 1: sat 3.5 cannot be written"),
    ({"sat": [1.0, -1.0]}, "track 1, segment 2, point 1: sat -1.0 cannot be written"),
    ({"name": ["ok", "bell\x07"]}, "track 1, segment 2, point 1: the text 'bell\\x07' contains the character "
                                    "U+0007, which XML cannot hold"),
])
def test_unwritable_values_are_refused(columns, problem):
    with pytest.raises(TrackFileError) as caught:
        gpx_bytes(doc_with(**columns))
    assert caught.value.problem == problem + "; nothing was written"


def test_refused_save_leaves_the_old_file_intact(tmp_path):
    target = tmp_path / "ride.gpx"
    target.write_text(LOGGER_11)
    doc = read_gpx(target)
    doc.tracks[0].points.lat[2] = np.nan  # found only while the file is being streamed out
    with pytest.raises(TrackFileError, match="track 1, segment 1, point 3: lat nan"):
        write_gpx(doc, target)
    assert target.read_text() == LOGGER_11
    assert leftover_temp_files(target) == [] and sorted(p.name for p in tmp_path.iterdir()) == ["ride.gpx"]
