"""The cleaning record of a saved copy (editor.io.provenance), checked against the GPX 1.1 schema.

Outside reference: the published GPX 1.1 XML Schema (Topografix), which lets ``<metadata>``
end with ``<extensions>`` holding elements of other namespaces (``processContents="lax"``).
"""
from datetime import datetime, timezone
from pathlib import Path

import xmlschema
from lxml import etree
from shared_files import GPX_XSD

from editor.io.gpx import read_gpx, write_gpx
from editor.model.payload import TW_NS, DocumentExtra
from editor.io.provenance import (
    CAUTION,
    CLEANED_SUFFIX,
    StepRecord,
    cleaned_copy_name,
    cleaning_runs,
    params_record,
    with_cleaning_record,
)
from editor.processing.smoothing import SmoothParams

DEMO = Path(__file__).resolve().parents[2] / "demo_tracks"
WHEN = datetime(2026, 5, 1, 8, 30, tzinfo=timezone.utc)


def record_of(path: Path) -> etree._Element:
    tree = etree.parse(str(path))
    found = tree.findall(f"{{http://www.topografix.com/GPX/1/1}}metadata/{{http://www.topografix.com/GPX/1/1}}"
                         f"extensions/{{{TW_NS}}}cleaning")
    assert len(found) == 1
    return found[0]


def test_a_saved_record_is_valid_gpx_and_saving_again_extends_it_without_duplicates(tmp_path):
    schema = xmlschema.XMLSchema(str(GPX_XSD))
    doc = read_gpx(DEMO / "demo_tunnel.gpx")  # metadata with name, desc, author, link, time, keywords, bounds
    smooth = StepRecord("smooth", "Smooth track", 0, params_record(SmoothParams(vertical_strength=40),
                                                                    {"horizontal_strength": 54.21}))
    doc.extra = with_cleaning_record(doc.extra, [StepRecord("despike", "Remove spikes"), smooth], "0.1.0", WHEN)
    first = tmp_path / "first.gpx"
    write_gpx(doc, first)
    schema.validate(str(first))
    record = record_of(first)
    assert [c.text for c in record.iter(f"{{{TW_NS}}}caution")] == [CAUTION]
    (run,) = record.iterfind(f"{{{TW_NS}}}run")
    assert run.get("program") == "Trackwright" and run.get("version") == "0.1.0"
    assert run.get("date") == "2026-05-01T08:30:00Z"
    steps = run.findall(f"{{{TW_NS}}}step")
    assert [s.get("name") for s in steps] == ["despike", "smooth"] and steps[1].get("track") == "1"
    params = {p.get("name"): p.get("value") for p in steps[1]}
    assert params["horizontal_strength"] == "auto (54.21)" and params["vertical_strength"] == "40"
    assert params["smooth_elevation"] == "true"
    # the original metadata is all still there
    assert read_gpx(first).extra.metadata.startswith(doc.extra.metadata.split("<extensions>")[0])

    # read back, save without new steps: the record is kept as it was
    again = read_gpx(first)
    assert len(cleaning_runs(again.extra)) == 1
    again.extra = with_cleaning_record(again.extra, [], "0.1.0", WHEN)
    second = tmp_path / "second.gpx"
    write_gpx(again, second)
    schema.validate(str(second))
    assert etree.tostring(record_of(second)) == etree.tostring(record_of(first))

    # read back, save with a new step: one more run after the first, still one caution
    third_doc = read_gpx(second)
    third_doc.extra = with_cleaning_record(third_doc.extra, [StepRecord("edit", "Delete 3 points")], "0.2.0", WHEN)
    third = tmp_path / "third.gpx"
    write_gpx(third_doc, third)
    schema.validate(str(third))
    record = record_of(third)
    runs = record.findall(f"{{{TW_NS}}}run")
    assert [r.get("version") for r in runs] == ["0.1.0", "0.2.0"]
    assert len(record.findall(f"{{{TW_NS}}}caution")) == 1
    assert read_gpx(third).tracks[0].points.equals(doc.tracks[0].points)


def test_a_file_without_metadata_gets_a_valid_record(tmp_path):
    doc = read_gpx(DEMO / "demo_tunnel.gpx")
    doc.extra = DocumentExtra(namespaces=doc.extra.namespaces)
    doc.extra = with_cleaning_record(doc.extra, [StepRecord("gaps", "Fill gaps")], "0.1.0", WHEN)
    out = tmp_path / "bare.gpx"
    write_gpx(doc, out)
    xmlschema.XMLSchema(str(GPX_XSD)).validate(str(out))
    assert record_of(out).find(f"{{{TW_NS}}}run/{{{TW_NS}}}step").get("name") == "gaps"


def test_one_name_for_a_cleaned_copy():
    assert CLEANED_SUFFIX == "-cleaned"
    assert cleaned_copy_name(Path("/rides/morning.gpx")) == Path("/rides/morning-cleaned.gpx")
    from editor.cli.clean import OUTPUT_SUFFIX
    assert OUTPUT_SUFFIX == CLEANED_SUFFIX
