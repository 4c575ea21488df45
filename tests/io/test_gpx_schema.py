"""The schema check itself works: the GPX 1.1 schema rejects the documents check-values.md lists.

Source: the GPX 1.1 XML Schema published with the standard (tests/reference/gpx-1.1.xsd,
sha256 3bf901d1...0cdc0a); the rejected cases are those named in tests/reference/check-values.md.
"""
import hashlib

import pytest

from tests.io.samples import SCHEMA_PATH

VALID = ('<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="t">'
         '<wpt lat="{lat}" lon="{lon}">{children}</wpt></gpx>')


def document(lat="45", lon="7", children="<ele>1</ele><time>2024-05-01T10:00:00Z</time>"):
    return VALID.format(lat=lat, lon=lon, children=children)


def test_schema_file_is_the_published_one():
    digest = hashlib.sha256(SCHEMA_PATH.read_bytes()).hexdigest()
    assert digest == "3bf901d17345920781ffa7b39759ca44a7f8c6ee2c7d884ca95c1bfb9a0cdc0a"


def test_baseline_is_valid(gpx_schema):
    assert gpx_schema.is_valid(document())
    assert gpx_schema.is_valid(document(lon="-180", children="<fix>dgps</fix>"))


@pytest.mark.parametrize("text", [
    document(lon="180"),                                              # lon is [-180, 180)
    document(lat="90.0001"),
    document().replace(' creator="t"', ""),                           # creator is required
    document().replace('version="1.1"', 'version="1.0"'),             # fixed version
    document(children="<time>2024-05-01T10:00:00Z</time><ele>1</ele>"),  # child order is fixed
    document(children="<fix>4d</fix>"),                               # fix: none, 2d, 3d, dgps, pps
], ids=["lon-180", "lat-90.0001", "no-creator", "version-1.0", "time-before-ele", "fix-4d"])
def test_schema_rejects(gpx_schema, text):
    assert not gpx_schema.is_valid(text)
