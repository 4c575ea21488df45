"""The README's promises: one job paragraph, then exactly two commands, the second one being what CI runs."""
import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def command_blocks(text):
    return re.findall(r"```\n(.*?)\n```", text, flags=re.S)


def test_readme_starts_with_two_commands_and_ci_runs_the_second():
    readme = (ROOT / "README.md").read_text()
    head = readme.split("## ", 1)[0]
    blocks = command_blocks(head)
    assert len(blocks) == 2
    run_editor, run_tests = blocks
    assert run_editor.strip().endswith("trackwright")
    assert "pytest" in run_tests
    ci = (ROOT / ".ci" / "run").read_text()
    assert run_tests.strip() in ci.splitlines()


def test_readme_carries_the_navigation_caution():
    assert "not for navigation" in (ROOT / "README.md").read_text()
