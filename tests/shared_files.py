"""Where the project's shared reference files are: ``shared/`` beside the checkout (as CI lays it out)."""
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SHARED = next((p for p in (ROOT.parent / "shared", Path("/work/shared")) if p.is_dir()), ROOT.parent / "shared")
#: The GPX 1.1 XML Schema published with the standard (shared/standards/gpx-1.1.xsd).
GPX_XSD = SHARED / "standards" / "gpx-1.1.xsd"
