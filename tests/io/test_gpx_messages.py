"""The one-line messages for odd files say what is wrong and where (issue 8, section 3)."""
import pytest

from editor.io.errors import TrackFileError
from editor.io.gpx import read_gpx_bytes

HEAD = b'<?xml version="1.0"?>\n<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="x">\n'


def problem(data: bytes) -> TrackFileError:
    with pytest.raises(TrackFileError) as caught:
        read_gpx_bytes(data, "f.gpx")
    return caught.value


def test_deep_nesting_is_called_nested_too_deeply_not_too_large(read_path):
    # libxml2 refuses more than 256 levels without its "huge" option (lxml huge_tree=False)
    error = problem(HEAD + b"<extensions>" + b"<a>" * 300 + b"</a>" * 300 + b"</extensions></gpx>")
    assert "nested too deeply" in error.problem and "too large" not in error.problem
    assert error.line == 3


def test_a_doctype_inside_the_document_is_reported_at_its_own_line(read_path):
    error = problem(HEAD + b"<trk>\n\n<!DOCTYPE x>\n</trk></gpx>")
    assert error.line == 5 and "DOCTYPE" in error.problem and "before the root element" in error.problem


def test_a_doctype_with_entities_after_a_long_comment_is_refused_at_its_line(read_path):
    data = (b'<?xml version="1.0"?>\n<!--' + b"x" * 70_000 + b'-->\n\n<!DOCTYPE gpx [<!ENTITY a "b">]>\n'
            b'<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="x"/>')
    error = problem(data)
    assert error.line == 4 and "refused for safety" in error.problem


def test_a_plain_doctype_before_the_root_is_still_fine():
    data = b'<?xml version="1.0"?>\n<!DOCTYPE gpx>\n<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" ' \
           b'creator="x"/>'
    assert read_gpx_bytes(data).point_count == 0


def test_control_characters_in_a_name_are_escaped():
    error = TrackFileError("a\nb\rc\td.gpx", "broken", 3)
    assert str(error) == "a\\nb\\rc\\td.gpx, line 3: broken" and error.path == "a\nb\rc\td.gpx"
