"""Shared fixtures: the shipped catalog and a writer of tiny catalogs for loader tests."""

from __future__ import annotations

import shutil
from importlib import resources
from pathlib import Path

import pytest

from catalog import load_catalog


@pytest.fixture(scope="session")
def shipped_catalog():
    return load_catalog()


@pytest.fixture
def catalog_copy(tmp_path) -> Path:
    """A writable copy of the shipped catalog tables (edit a file, then read_catalog)."""
    target = tmp_path / "data"
    shutil.copytree(Path(str(resources.files("catalog") / "data")), target)
    return target
