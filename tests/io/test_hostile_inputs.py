"""At least 100 generated hostile or damaged inputs, each through the command line (a subprocess running
``python -m editor stats`` or ``export``) and through the reader the window uses (``read_gpx``, called by
``FileOps.open_path``): each must end in a clean read or one clear line naming the file, with no
traceback. The timeouts below only guard against a hang (issue 8: a named pipe once hung forever);
they are not speed checks. What an exported file holds is checked against the GPX 1.1 schema.
"""
from __future__ import annotations

import os
import subprocess
import sys
import threading
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest

from editor.io.errors import TrackFileError
from editor.io.gpx import read_gpx
from editor.model import Document
from tests.io.hostile_inputs import hostile_cases

ROOT = Path(__file__).resolve().parents[2]
HANG_GUARD_S = 120
CASES = hostile_cases()


@pytest.fixture(scope="module")
def case_files(tmp_path_factory) -> list[tuple[str, Path]]:
    folder = tmp_path_factory.mktemp("hostile")
    files = []
    for name, data in CASES:
        path = folder / f"{name}.gpx"
        path.write_bytes(data)
        files.append((name, path))
    # paths that are not ordinary files (issue 8: a pipe hung, /dev/zero ran out of memory, a link
    # loop ended in a RuntimeError traceback) and a name that would break a one-line message
    loop = folder / "link-loop.gpx"
    os.symlink(loop, loop)
    (folder / "a-folder.gpx").mkdir()
    odd = folder / "two\nlines.gpx"
    odd.write_bytes(b"<gpx")
    files += [("link-loop", loop), ("a-folder", folder / "a-folder.gpx"), ("newline-name", odd)]
    if hasattr(os, "mkfifo"):
        os.mkfifo(folder / "pipe.gpx")
        files.append(("pipe", folder / "pipe.gpx"))
    if os.path.exists("/dev/zero"):
        files.append(("dev-zero", Path("/dev/zero")))
    return files


def _shown(name: str) -> str:
    return name.replace("\n", "\\n")


def _run(args: list) -> subprocess.CompletedProcess:
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "editor", *map(str, args)], capture_output=True, text=True,
                          timeout=HANG_GUARD_S, env=env, check=False)


def test_there_are_at_least_100_cases():
    assert len(CASES) >= 100


def test_every_case_through_the_command_line(case_files, tmp_path, gpx_schema):
    jobs = []
    for k, (name, path) in enumerate(case_files):
        if k % 2:
            out = tmp_path / f"{name}-out.gpx"
            jobs.append((name, path, out, ["export", path, "-o", out]))
        else:
            jobs.append((name, path, None, ["stats", path]))
    with ThreadPoolExecutor(max_workers=3) as pool:
        results = list(pool.map(lambda job: _run(job[3]), jobs))
    failures = []
    for (name, path, out, _), result in zip(jobs, results):
        lines = result.stderr.strip().splitlines()
        if "Traceback" in result.stderr or result.returncode not in (0, 2):
            failures.append(f"{name}: exit {result.returncode}: {result.stderr[-300:]}")
        elif result.returncode == 2 and (len(lines) != 1 or _shown(path.name) not in lines[0]):
            failures.append(f"{name}: not one line naming the file: {result.stderr[:300]!r}")
        elif result.returncode == 0 and out is not None:
            gpx_schema.validate(out.read_text(encoding="utf-8"))  # source: the GPX 1.1 schema
    assert not failures, "\n".join(failures)


def _read_with_hang_guard(path: Path):
    outcome: list = []

    def read():
        try:
            outcome.append(read_gpx(path))
        except BaseException as error:  # noqa: BLE001 -- judged below
            outcome.append(error)

    worker = threading.Thread(target=read, daemon=True)
    worker.start()
    worker.join(HANG_GUARD_S)
    assert outcome, f"{path.name}: reading did not finish"
    return outcome[0]


def test_every_case_through_the_windows_reader(case_files):
    failures = []
    for name, path in case_files:
        result = _read_with_hang_guard(path)
        if isinstance(result, Document):
            continue
        if not isinstance(result, TrackFileError):
            failures.append(f"{name}: {type(result).__name__}: {result}")
        elif "\n" in str(result) or not str(result).startswith(_shown(str(path))):
            failures.append(f"{name}: not one line naming the file: {str(result)!r}")
    assert not failures, "\n".join(failures)
