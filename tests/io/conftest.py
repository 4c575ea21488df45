import pytest

from tests.io.samples import schema


@pytest.fixture(scope="session")
def gpx_schema():
    """The GPX 1.1 XML Schema published with the standard (tests/reference/gpx-1.1.xsd)."""
    return schema()


@pytest.fixture(params=["scan", "tree"])
def read_path(request, monkeypatch):
    """Run a test once through the fast scan and once through the tree reader alone."""
    if request.param == "tree":
        from editor.io.gpx import scan as gpx_scan
        monkeypatch.setattr(gpx_scan, "worth_trying", lambda data: False)
    return request.param
