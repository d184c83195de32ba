"""The code gates the contributor guide promises: lint with a complexity limit, and types.

ruff (pyflakes, pycodestyle, import order, McCabe complexity ≤ 15; configuration in
pyproject.toml) over the whole tree, and mypy over ``catalog`` and ``selector``, with no
error.  Both come with the ``test`` extra.
"""

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def run_tool(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", *args], cwd=ROOT, capture_output=True, text=True, timeout=600)


def test_ruff_finds_nothing():
    result = run_tool("ruff", "check", ".")
    assert result.returncode == 0, result.stdout[-4000:] + result.stderr[-2000:]


def test_mypy_finds_nothing():
    result = run_tool("mypy")
    assert result.returncode == 0, result.stdout[-4000:] + result.stderr[-2000:]
