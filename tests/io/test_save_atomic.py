"""Atomic saving: whatever fails, the previous file is byte-identical and no temporary file is left.

The guarantee rests on POSIX rename(2) being atomic within one file system (os.replace), which is
what these tests exercise by making each step fail in turn (common practice for safe saves).
"""
import errno
import os
import signal
import stat
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

from editor.io import save
from editor.io.errors import TrackFileError
from editor.io.save import atomic_write, backup_names, leftover_temp_files

OLD = b"<gpx>old content</gpx>\n"
NEW = b"<gpx>new content</gpx>\n" * 1000
ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture
def target(tmp_path):
    path = tmp_path / "ride.gpx"
    path.write_bytes(OLD)
    return path


def assert_untouched(path: Path):
    assert path.read_bytes() == OLD
    assert leftover_temp_files(path) == []
    assert sorted(p.name for p in path.parent.iterdir()) == [path.name]


def test_writes_new_and_replaces_existing_files(tmp_path, target):
    fresh = tmp_path / "fresh.gpx"
    assert atomic_write(fresh, NEW) is None
    assert fresh.read_bytes() == NEW
    atomic_write(target, NEW)
    assert target.read_bytes() == NEW
    assert leftover_temp_files(target) == [] and leftover_temp_files(fresh) == []


@pytest.mark.parametrize("failing, error, step", [
    ("replace", OSError(errno.EXDEV, "Invalid cross-device link"), "could not replace the old file"),
    ("fsync", OSError(errno.EIO, "Input/output error"), "could not flush the new content to the disk"),
    ("write", OSError(errno.ENOSPC, "No space left on device"), "could not write the new content"),
    ("open", OSError(errno.EROFS, "Read-only file system"), "could not create a temporary file in"),
])
def test_failing_step_leaves_previous_file_intact(target, monkeypatch, failing, error, step):
    real = getattr(os, failing)
    calls = []

    def broken(*args, **kwargs):
        calls.append(args)
        if failing == "write" and len(calls) == 1:
            return real(args[0], bytes(args[1])[:100])  # part of the data reaches the disk first
        raise error

    monkeypatch.setattr(os, failing, broken)
    with pytest.raises(TrackFileError) as caught:
        atomic_write(target, NEW)
    assert step in caught.value.problem and error.strerror in caught.value.problem
    assert "the previous file is unchanged" in caught.value.problem
    assert caught.value.path == str(target)
    monkeypatch.undo()
    assert_untouched(target)


def test_failed_replace_with_backup_removes_the_new_backup(target, monkeypatch):
    monkeypatch.setattr(os, "replace", lambda *a: (_ for _ in ()).throw(OSError(errno.EACCES, "Permission denied")))
    with pytest.raises(TrackFileError, match="Permission denied"):
        atomic_write(target, NEW, backup=True)
    monkeypatch.undo()
    assert_untouched(target)


def test_interrupt_during_write_cleans_up_and_propagates(target, monkeypatch):
    def interrupted(*args):
        raise KeyboardInterrupt

    monkeypatch.setattr(os, "fsync", interrupted)
    with pytest.raises(KeyboardInterrupt):
        atomic_write(target, NEW)
    monkeypatch.undo()
    assert_untouched(target)


def test_really_unwritable_folder(tmp_path):
    # /proc refuses new files even for root: a real failure, not a simulated one
    with pytest.raises(TrackFileError, match="could not create a temporary file in /proc"):
        atomic_write("/proc/trackwright-test.gpx", NEW)
    assert not os.path.exists("/proc/trackwright-test.gpx")


def test_backups_never_overwrite_each_other(target):
    versions = [OLD, b"second\n", b"third\n"]
    for content in versions[1:]:
        atomic_write(target, content, backup=True)
    atomic_write(target, b"fourth\n", backup=True)
    assert [p.name for p in backup_names(target)] == ["ride.gpx.bak", "ride.gpx.bak.1", "ride.gpx.bak.2"]
    assert [p.read_bytes() for p in backup_names(target)] == versions
    assert target.read_bytes() == b"fourth\n"


def test_backup_is_copied_where_hard_links_fail(target, monkeypatch):
    monkeypatch.setattr(os, "link", lambda *a: (_ for _ in ()).throw(OSError(errno.EPERM, "no links")))
    made = atomic_write(target, NEW, backup=True)
    assert made == target.with_name("ride.gpx.bak") and made.read_bytes() == OLD
    assert target.read_bytes() == NEW


def test_no_backup_for_a_new_file(tmp_path):
    assert atomic_write(tmp_path / "new.gpx", NEW, backup=True) is None
    assert backup_names(tmp_path / "new.gpx") == []


def test_permissions_and_symlinks_are_kept(tmp_path, target):
    os.chmod(target, 0o640)
    link = tmp_path / "link.gpx"
    link.symlink_to(target)
    atomic_write(link, NEW)
    assert link.is_symlink() and target.read_bytes() == NEW
    assert stat.S_IMODE(target.stat().st_mode) == 0o640


def test_folder_as_target_is_refused(tmp_path):
    with pytest.raises(TrackFileError, match="is a folder"):
        atomic_write(tmp_path, NEW)


def test_process_killed_mid_write_leaves_old_file_intact(target):
    # the child writes the first part of a large file, reports, then waits to be killed
    script = textwrap.dedent(f"""
        import os, sys, time
        sys.path.insert(0, {str(ROOT)!r})
        from editor.io.save import atomic_write
        real_write = os.write
        def slow_write(fd, data):
            written = real_write(fd, bytes(data[:65536]))
            print("writing", flush=True)
            time.sleep(60)
            return written
        os.write = slow_write
        atomic_write({str(target)!r}, b"x" * 5_000_000)
    """)
    child = subprocess.Popen([sys.executable, "-c", script], stdout=subprocess.PIPE, text=True)
    try:
        assert child.stdout.readline().strip() == "writing"
        os.kill(child.pid, signal.SIGKILL)
        assert child.wait(timeout=30) == -signal.SIGKILL
    finally:
        if child.poll() is None:
            child.kill()
        child.stdout.close()
    assert target.read_bytes() == OLD
    leftovers = leftover_temp_files(target)
    assert len(leftovers) == 1 and leftovers[0].stat().st_size == 65536  # the cut-off new content
    assert save.same_file(target, target) and not save.same_file(target, leftovers[0])
