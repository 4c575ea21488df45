"""Paths that are not ordinary files, and targets that must not be replaced (issue 8, sections 2 and 3).

Each case is run through the command line in a subprocess (what a user sees: one line on stderr,
exit status 2, no traceback). The subprocess timeout is only a guard against a hang, never a speed check.
"""
import os
import subprocess
import sys
from pathlib import Path

import pytest

from editor.io import source
from editor.io.errors import TrackFileError
from editor.io.gpx import read_gpx
from tests.test_cli import SAMPLE

ROOT = Path(__file__).resolve().parents[2]
HANG_GUARD_S = 60


def run_cli(*args, cwd=None):
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "editor", *map(str, args)], capture_output=True, text=True,
                          timeout=HANG_GUARD_S, env=env, cwd=cwd, check=False)


def one_clear_line(result, *words):
    assert result.returncode == 2, result.stderr
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in result.stderr, result.stderr
    for word in words:
        assert word in lines[0], lines[0]
    return lines[0]


@pytest.fixture
def sample(tmp_path):
    path = tmp_path / "ride.gpx"
    path.write_text(SAMPLE)
    return path


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes are POSIX")
def test_a_named_pipe_without_writer_is_refused_at_once(tmp_path):
    pipe = tmp_path / "pipe.gpx"
    os.mkfifo(pipe)
    one_clear_line(run_cli("stats", pipe), "named pipe", str(pipe))
    with pytest.raises(TrackFileError, match="named pipe"):
        read_gpx(pipe)


@pytest.mark.parametrize("device", ["/dev/zero", "/dev/urandom"])
def test_endless_devices_are_refused_not_read_until_memory_runs_out(device, tmp_path):
    if not os.path.exists(device):
        pytest.skip(f"{device} missing")
    one_clear_line(run_cli("export", device, "-o", tmp_path / "out.gpx"), "device")
    assert not (tmp_path / "out.gpx").exists()


def test_a_folder_is_refused(tmp_path):
    one_clear_line(run_cli("stats", tmp_path), "folder")


@pytest.mark.parametrize("command", ["export", "clean", "stats"])
def test_a_symbolic_link_loop_is_one_line(tmp_path, command):
    loop = tmp_path / "loop.gpx"
    os.symlink(loop, loop)
    args = [command, loop] + ([] if command == "stats" else ["-o", tmp_path / "out.gpx"])
    one_clear_line(run_cli(*args), "loop")


def test_the_reader_stops_at_the_limit_whatever_size_is_reported(tmp_path):
    path = tmp_path / "big.gpx"
    path.write_bytes(b"x" * 5000)
    # a size check that believes the reported size (as for /proc files, which report 0)
    asked = []

    def too_large(size):
        asked.append(size)
        return None if len(asked) == 1 else f"over the limit ({size} bytes read)"

    with pytest.raises(TrackFileError, match="over the limit"):
        source.read_limited(path, 1000, too_large)
    assert asked == [5000, 1001]  # read one byte past the limit, then stopped
    assert source.read_limited(path, 5000, lambda size: None) == b"x" * 5000


def test_a_file_name_with_a_line_break_stays_on_one_line(tmp_path):
    odd = tmp_path / "two\nlines.gpx"
    odd.write_text("<gpx")
    line = one_clear_line(run_cli("stats", odd))
    assert "two\\nlines.gpx" in line


# ---- files are never clobbered --------------------------------------------------------------------

def test_export_refuses_an_existing_file(sample, tmp_path):
    target = tmp_path / "notes.gpx"
    target.write_text("my own notes")
    one_clear_line(run_cli("export", sample, "-o", target), "already exists", "--overwrite")
    assert target.read_text() == "my own notes"


def test_export_with_overwrite_keeps_a_backup(sample, tmp_path):
    target = tmp_path / "old.gpx"
    target.write_text("previous export")
    result = run_cli("export", sample, "-o", target, "--overwrite")
    assert result.returncode == 0, result.stderr
    assert (tmp_path / "old.gpx.bak").read_text() == "previous export"
    assert read_gpx(target).point_count == 3
    assert "old.gpx.bak" in result.stdout


def test_clean_with_overwrite_keeps_a_backup(sample, tmp_path):
    target = tmp_path / "cleaned.gpx"
    target.write_text("previous clean")
    result = run_cli("clean", sample, "-o", target, "--overwrite", "--smooth", "off")
    assert result.returncode == 0, result.stderr
    assert (tmp_path / "cleaned.gpx.bak").read_text() == "previous clean"


@pytest.mark.parametrize("command", ["export", "clean"])
def test_a_write_protected_target_is_refused_even_with_overwrite(sample, tmp_path, command):
    target = tmp_path / "locked.gpx"
    target.write_text("keep me")
    os.chmod(target, 0o444)
    try:
        one_clear_line(run_cli(command, sample, "-o", target, "--overwrite"), "write-protected")
        assert target.read_text() == "keep me"
        assert not (tmp_path / "locked.gpx.bak").exists()
    finally:
        os.chmod(target, 0o644)


def test_export_never_replaces_a_device(sample):
    if not os.path.exists("/dev/null"):
        pytest.skip("no /dev/null")
    one_clear_line(run_cli("export", sample, "-o", "/dev/null", "--overwrite"), "device")
    assert os.path.exists("/dev/null") and not Path("/dev/null").is_file()
