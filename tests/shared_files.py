"""The reference files the tests check against, vendored in ``tests/reference/`` (sources in its README)."""
from pathlib import Path

REFERENCE = Path(__file__).resolve().parent / "reference"
#: The GPX 1.1 XML Schema published with the standard (TopoGrafix); see tests/reference/README.md.
GPX_XSD = REFERENCE / "gpx-1.1.xsd"
#: Worked examples and closed forms from published sources, each named inside.
CHECK_VALUES = REFERENCE / "check-values.md"
