"""Bounded fuzzing: damaged GPX bytes give a document or a TrackFileError, never anything else.

Mutations of valid files (truncations, byte flips, inserted junk and markup, deleted or repeated
ranges). When a damaged file still reads, what we write from it must read again: no fragment we
keep may break the XML we write.
"""
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from editor.io.errors import TrackFileError
from editor.io.gpx import gpx_bytes, read_gpx_bytes
from tests.io.samples import FULL_10, FULL_11, LOGGER_11, MISPLACED_11

SEEDS = [text.encode() for text in (LOGGER_11, FULL_11, FULL_10, MISPLACED_11)] + [
    LOGGER_11.replace("\n", "\r\n").encode()]
JUNK = [b"<", b">", b"&", b'"', b"'", b"<!-- x -->", b"<![CDATA[<trkpt>]]>", b"\xff\xfe", b"\x00", b"\xe2\x82",
        b'<trkpt lat="1" lon="2">', b"</trkseg>", b"<trkseg>", b"<ele>", b"</ele>", b"NaN", b"1e999",
        "\ue000".encode(), b' xmlns:hr="urn:other"', b' xmlns="urn:other"', b"<extensions>", b"</extensions>",
        b'<!DOCTYPE gpx [<!ENTITY a "b">]>', b"&amp;", b"&#0;", b"&#x41;", b"<?pi x?>", b"\r", b"trkpt",
        b"<time>2024-13-01T00:00:00Z</time>", b'lat="-91"', b"<gpx:trkpt>"]


@st.composite
def damaged(draw):
    data = bytearray(draw(st.sampled_from(SEEDS)))
    for _ in range(draw(st.integers(1, 3))):
        kind = draw(st.sampled_from(["truncate", "flip", "insert", "delete", "repeat"]))
        at = draw(st.integers(0, len(data)))
        if kind == "truncate":
            del data[at:]
        elif kind == "flip" and at < len(data):
            data[at] ^= 1 << draw(st.integers(0, 7))
        elif kind == "insert":
            data[at:at] = draw(st.one_of(st.sampled_from(JUNK), st.binary(min_size=1, max_size=4)))
        elif kind == "delete":
            del data[at:at + draw(st.integers(1, 40))]
        else:
            data[at:at] = data[at:at + draw(st.integers(1, 60))]
    return bytes(data)


@settings(max_examples=4000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(data=damaged())
def test_damaged_files_raise_only_track_file_errors(data):
    try:
        doc = read_gpx_bytes(data, "damaged.gpx")
    except TrackFileError as error:
        assert str(error).startswith("damaged.gpx")
        partial = getattr(error, "partial", None)
        if partial is not None:
            read_gpx_bytes(gpx_bytes(partial))
        return
    read_gpx_bytes(gpx_bytes(doc))
