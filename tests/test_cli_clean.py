"""``trackwright clean``: outputs, refusals, kept content, options, summary and caution."""
import io
import subprocess
import sys
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
import xmlschema

from editor.cli import main
from editor.cli.clean import ProgressBar
from editor.io.gpx import read_gpx

ROOT = Path(__file__).resolve().parents[1]
from shared_files import GPX_XSD as SCHEMA  # noqa: E402  (the published GPX 1.1 schema)


def invented_file(path: Path, n: int = 400, seed: int = 0, spike_at: int | None = 200) -> Path:
    """A GPX 1.1 file of an invented walk with metadata, a waypoint, a route and per-point extensions."""
    rng = np.random.default_rng(seed)
    lat = 46.5 + np.cumsum(np.full(n, 1.2e-5)) + rng.normal(0, 2.5e-5, n)
    lon = 7.5 + np.cumsum(np.full(n, 0.8e-5)) + rng.normal(0, 3.5e-5, n)
    ele = np.round(800 + 20 * np.sin(np.arange(n) / 60) + rng.normal(0, 3, n))
    if spike_at is not None:
        lat[spike_at] += 6e-4  # about 65 m north
    pts = "\n".join(
        f'<trkpt lat="{a:.7f}" lon="{o:.7f}"><ele>{e:.0f}</ele>'
        f"<time>2026-05-01T08:{i // 60:02d}:{i % 60:02d}Z</time>"
        f"<extensions><hr:bpm>{100 + i % 30}</hr:bpm></extensions></trkpt>"
        for i, (a, o, e) in enumerate(zip(lat, lon, ele)))
    path.write_text(f"""<?xml version="1.0" encoding="UTF-8"?>
<gpx version="1.1" creator="test writer" xmlns="http://www.topografix.com/GPX/1/1" xmlns:hr="urn:x-test:hr">
<metadata><name>Lake loop</name><desc>invented</desc></metadata>
<wpt lat="46.51" lon="7.51"><ele>812</ele><name>bench</name></wpt>
<rte><name>plan</name><rtept lat="46.5" lon="7.5"/><rtept lat="46.52" lon="7.52"/></rte>
<trk><name>morning</name><extensions><hr:zone>2</hr:zone></extensions><trkseg>
{pts}
</trkseg></trk></gpx>
""")
    return path


@pytest.fixture
def walk(tmp_path):
    return invented_file(tmp_path / "walk.gpx")


def test_clean_one_file_writes_a_valid_cleaned_copy(walk, tmp_path, capsys):
    out = tmp_path / "walk-out.gpx"
    before = walk.read_bytes()
    assert main(["clean", str(walk), "-o", str(out)]) == 0
    captured = capsys.readouterr()
    lines = captured.out.strip().splitlines()
    assert len(lines) == 2
    assert "distance" in lines[0] and "ascent" in lines[0] and "points 400 ->" in lines[0]
    assert "not for navigation" in lines[1]
    assert captured.err == ""  # no progress bar when stderr is not a terminal
    xmlschema.XMLSchema(str(SCHEMA)).validate(str(out))
    assert walk.read_bytes() == before
    cleaned, original = read_gpx(out), read_gpx(walk)
    assert len(cleaned.tracks[0].points) < 400  # the 65 m spike is gone
    # everything the steps do not touch is kept
    assert cleaned.waypoints.equals(original.waypoints)
    assert cleaned.routes[0].equals(original.routes[0])
    assert cleaned.tracks[0].extra == original.tracks[0].extra
    # the file-level content is kept; the metadata only gains the cleaning record (editor.io.provenance)
    assert replace(cleaned.extra, metadata=None) == replace(original.extra, metadata=None)
    assert cleaned.extra.metadata.startswith("<metadata><name>Lake loop</name><desc>invented</desc><extensions>")
    assert cleaned.tracks[0].name == "morning"
    kept = [e for e in cleaned.tracks[0].points.extra if e is not None and "bpm" in str(e)]
    assert len(kept) >= 390


def test_all_steps_off_changes_no_point(walk, tmp_path, capsys):
    out = tmp_path / "same.gpx"
    args = ["clean", str(walk), "-o", str(out), "--smooth", "off", "--no-despike", "--no-fill-gaps", "--no-stops"]
    assert main(args) == 0
    assert read_gpx(out).tracks[0].points.equals(read_gpx(walk).tracks[0].points)


def test_several_files_into_a_folder_with_our_suffix(tmp_path, capsys):
    a = invented_file(tmp_path / "a.gpx", seed=1)
    b = invented_file(tmp_path / "b.gpx", seed=2)
    outdir = tmp_path / "cleaned"
    assert main(["clean", str(a), str(b), "-d", str(outdir), "--activity", "walk", "--simplify", "2"]) == 0
    assert sorted(p.name for p in outdir.iterdir()) == ["a-cleaned.gpx", "b-cleaned.gpx"]
    lines = capsys.readouterr().out.strip().splitlines()
    assert len(lines) == 3 and "not for navigation" in lines[2]
    assert lines[0].startswith(f"{a} -> {outdir / 'a-cleaned.gpx'}: ")
    assert lines[1].startswith(f"{b} -> {outdir / 'b-cleaned.gpx'}: ")
    # simplified, but with the vertical tolerance the climbing survives
    simplified = read_gpx(outdir / "a-cleaned.gpx").tracks[0]
    assert 2 < len(simplified.points) < 200
    assert np.ptp(simplified.points.ele) > 25


def test_refuses_to_overwrite_an_input(walk, capsys):
    before = walk.read_bytes()
    assert main(["clean", str(walk), "-o", str(walk)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "walk.gpx" in err and "input" in err
    assert walk.read_bytes() == before


def test_refuses_when_a_folder_output_would_be_an_input(tmp_path, capsys):
    a = invented_file(tmp_path / "a.gpx")
    trap = invented_file(tmp_path / "a-cleaned.gpx", seed=3)
    before = trap.read_bytes()
    assert main(["clean", str(a), str(trap), "-d", str(tmp_path)]) == 2
    assert trap.read_bytes() == before
    assert not (tmp_path / "a-cleaned-cleaned.gpx").exists()


def test_existing_output_needs_overwrite(walk, tmp_path, capsys):
    out = tmp_path / "out.gpx"
    out.write_text("keep me")
    assert main(["clean", str(walk), "-o", str(out)]) == 2
    assert out.read_text() == "keep me" and "--overwrite" in capsys.readouterr().err
    assert main(["clean", str(walk), "-o", str(out), "--overwrite"]) == 0
    assert read_gpx(out).tracks[0].name == "morning"


def test_a_broken_input_is_reported_and_the_others_are_still_cleaned(tmp_path, capsys):
    good = invented_file(tmp_path / "good.gpx")
    bad = tmp_path / "bad.gpx"
    bad.write_text(good.read_text().replace('lat="46.51"', 'lat="146.51"'))
    assert main(["clean", str(bad), str(good), "-d", str(tmp_path / "out")]) == 2
    captured = capsys.readouterr()
    assert captured.err.count("\n") == 1 and "bad.gpx" in captured.err and "Traceback" not in captured.err
    assert (tmp_path / "out" / "good-cleaned.gpx").exists()
    assert not (tmp_path / "out" / "bad-cleaned.gpx").exists()
    assert "not for navigation" in captured.out


@pytest.mark.parametrize("args", [["--smooth", "150"], ["--smooth", "lots"], ["--max-gap", "-5"],
                                  ["--activity", "swim"]])
def test_bad_options_exit_2(walk, tmp_path, args):
    with pytest.raises(SystemExit) as stop:
        main(["clean", str(walk), "-o", str(tmp_path / "x.gpx"), *args])
    assert stop.value.code == 2


def test_one_output_for_several_inputs_is_refused(tmp_path, capsys):
    a = invented_file(tmp_path / "a.gpx")
    b = invented_file(tmp_path / "b.gpx")
    assert main(["clean", str(a), str(b), "-o", str(tmp_path / "x.gpx")]) == 2
    assert "-d" in capsys.readouterr().err


def test_fixed_strength_and_split_gaps(tmp_path, capsys):
    src = invented_file(tmp_path / "w.gpx", spike_at=None)
    text = src.read_text().splitlines()
    # drop three minutes of points: a gap longer than --max-gap 60
    kept = [line for line in text if not any(f"08:0{m}:" in line for m in (2, 3, 4))]
    src.write_text("\n".join(kept))
    out = tmp_path / "w2.gpx"
    assert main(["clean", str(src), "-o", str(out), "--smooth", "40", "--max-gap", "60", "--split-long-gaps"]) == 0
    assert read_gpx(out).tracks[0].segment_count == 2


def test_progress_bar_draws_on_a_terminal_only():
    class Terminal(io.StringIO):
        def isatty(self):
            return True

    term = Terminal()
    bar = ProgressBar(term, "ride.gpx")
    bar(0.5, "smooth")
    bar.close()
    text = term.getvalue()
    assert "\r" in text and " 50%" in text and "ride.gpx" in text and "smooth" in text
    quiet = io.StringIO()
    ProgressBar(quiet, "ride.gpx")(0.5, "smooth")
    assert quiet.getvalue() == ""


def test_module_entry_point_runs_clean(walk, tmp_path):
    out = tmp_path / "via-module.gpx"
    run = subprocess.run([sys.executable, "-m", "editor", "clean", str(walk), "-o", str(out)],
                         cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert run.returncode == 0, run.stderr
    assert out.exists() and "not for navigation" in run.stdout


def test_clean_does_not_import_what_default_steps_do_not_use(walk, tmp_path):
    # start-up time of the batch command: scipy.optimize (the strength search has its own Brent search),
    # scipy.stats and shapely (simplification is off by default) stay unimported
    out = tmp_path / "lazy.gpx"
    code = ("import sys; from editor.cli import main; "
            f"code = main(['clean', {str(walk)!r}, '-o', {str(out)!r}]); "
            "print(code, *[m for m in ('scipy.optimize', 'scipy.stats', 'shapely') if m in sys.modules])")
    run = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert run.returncode == 0, run.stderr
    assert run.stdout.strip().splitlines()[-1] == "0"
    assert out.exists()


def test_smooth_zero_changes_no_position_or_elevation(walk, tmp_path, capsys):
    # the panel's scale (editor.processing.smoothing.STRENGTH_LOG10_Q): 0 keeps the recording exactly
    out = tmp_path / "zero.gpx"
    assert main(["clean", str(walk), "-o", str(out), "--smooth", "0", "--no-despike", "--no-fill-gaps",
                 "--no-stops"]) == 0
    before, after = read_gpx(walk).tracks[0].points, read_gpx(out).tracks[0].points
    assert np.array_equal(before.lat, after.lat) and np.array_equal(before.lon, after.lon)
    assert np.array_equal(before.ele, after.ele)
    # with the other steps on, the smoothing step itself moves nothing
    import argparse

    from editor.cli.clean import add_parser, clean_params
    from editor.processing.pipeline import clean_document

    parser = argparse.ArgumentParser()
    add_parser(parser.add_subparsers())
    args = parser.parse_args(["clean", str(walk), "-o", str(out), "--smooth", "0"])
    _, report = clean_document(read_gpx(walk), clean_params(args))
    smoothing = [s for s in report.steps if s.tool == "smooth"]
    assert smoothing and smoothing[0].changed == 0 and smoothing[0].before == smoothing[0].after


def test_clean_of_the_tunnel_ride_reaches_the_truth_and_reports_skipped_gaps(tmp_path, capsys):
    import json

    from editor.processing.stats import track_totals

    # outside reference: the demo generator's noise-free truth and its cleaned_tolerance
    demo = ROOT / "demo_tracks"
    truth = json.loads((demo / "demo_tunnel.truth.json").read_text())
    out = tmp_path / "tunnel-out.gpx"
    assert main(["clean", str(demo / "demo_tunnel.gpx"), "-o", str(out)]) == 0
    totals = track_totals(read_gpx(out).tracks[0])
    tol = truth["cleaned_tolerance"]
    assert abs(totals.distance_m - truth["true_distance_m"]) <= tol["distance_m"]
    assert abs(totals.ascent_m - truth["true_ascent_m"]) <= tol["ascent_m"]
    assert abs(totals.descent_m - truth["true_descent_m"]) <= tol["descent_m"]
    assert "gap at" not in capsys.readouterr().out
    # a limit under the tunnel's 113 s: the gap is left, and the summary says where and why
    short = tmp_path / "tunnel-short.gpx"
    assert main(["clean", str(demo / "demo_tunnel.gpx"), "-o", str(short), "--max-gap", "60"]) == 0
    notes = [line for line in capsys.readouterr().out.splitlines() if "gap at" in line]
    assert len(notes) == 1 and "Fill gaps" in notes[0] and "(113 s without signal), over the 60 s limit" in notes[0]
