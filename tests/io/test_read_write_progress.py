"""The optional progress callback of read_gpx / write_gpx: reports, and can abandon the job cleanly."""
from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from editor.io.gpx import read_gpx, write_gpx

DEMO_RIDE = Path(__file__).resolve().parents[2] / "demo_tracks" / "demo_ride.gpx"


class Stop(Exception):
    pass


def test_reading_reports_progress_from_0_to_1(read_path):
    seen = []
    doc = read_gpx(DEMO_RIDE, progress=seen.append)
    assert seen[0] == 0.0 and seen[-1] == 1.0 and seen == sorted(seen)
    assert doc.equals(read_gpx(DEMO_RIDE))


def test_a_raising_progress_abandons_the_read():
    def stop_after_the_bytes(fraction):
        if fraction > 0:
            raise Stop()

    with pytest.raises(Stop):
        read_gpx(DEMO_RIDE, progress=stop_after_the_bytes)


def test_writing_reports_progress_and_gives_the_same_file(tmp_path):
    doc = read_gpx(DEMO_RIDE)
    seen = []
    write_gpx(doc, tmp_path / "with.gpx", progress=seen.append)
    write_gpx(doc, tmp_path / "without.gpx")
    assert seen[0] == 0.0 and seen[-1] == 1.0 and seen == sorted(seen) and len(seen) > 2
    assert (tmp_path / "with.gpx").read_bytes() == (tmp_path / "without.gpx").read_bytes()


def test_a_raising_progress_abandons_the_save_and_leaves_the_target_alone(tmp_path):
    target = tmp_path / "ride.gpx"
    shutil.copyfile(DEMO_RIDE, target)
    before = target.read_bytes()
    doc = read_gpx(target)
    calls = []

    def stop_half_way(fraction):
        calls.append(fraction)
        if len(calls) > 2:
            raise Stop()

    with pytest.raises(Stop):
        write_gpx(doc, target, progress=stop_half_way)
    assert target.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["ride.gpx"]  # no temporary, no backup left
