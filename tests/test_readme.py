"""The README works as written: every `.venv/bin/poise …` line of its bash blocks runs and exits 0.

The commands run in-process (the same entry point as the installed script) so the check costs
seconds; `poise app` (a server that runs until stopped) is started by the browser test instead.
"""

from __future__ import annotations

import re
import shlex
from pathlib import Path

import pytest

from tests.cli_helpers import run

README = Path(__file__).resolve().parent.parent / "README.md"
PREFIX = ".venv/bin/poise"


def readme_commands() -> list[str]:
    """The poise command lines of the README's bash blocks, comments stripped."""
    blocks = re.findall(r"```bash\n(.*?)```", README.read_text(encoding="utf-8"), flags=re.S)
    lines = [line.split("  #")[0].strip() for block in blocks for line in block.splitlines()]
    return [line for line in lines if line.startswith(PREFIX)]


def test_every_readme_command_is_written_for_a_fresh_checkout():
    # Case: a newcomer copies the Use lines without activating the venv (issue: `poise: command not found`).
    blocks = re.findall(r"```bash\n(.*?)```", README.read_text(encoding="utf-8"), flags=re.S)
    bare = [line for block in blocks for line in block.splitlines() if line.strip().startswith("poise ")]
    assert not bare, f"README lines that need an activated venv: {bare}"
    assert len(readme_commands()) >= 10


@pytest.mark.parametrize("command", readme_commands())
def test_readme_command_runs(command, capsys):
    argv = shlex.split(command)[1:]
    code, out, err = run(capsys, *argv)
    assert code == 0, f"{command} exited {code}: {err.strip()[:300]}"
    assert out.strip(), f"{command} printed nothing"
