"""Packaging: what the code imports is declared, the app's settings live in one place, the
command line names its version."""

from __future__ import annotations

import ast
import sys
import tomllib
from pathlib import Path

from selector.cli.app import streamlit_flags
from selector.prices import UPLOAD_MAX_MB
from tests.cli_helpers import run

ROOT = Path(__file__).resolve().parent.parent
PYPROJECT = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
#: Import names whose distribution is spelled differently.
DISTRIBUTION_OF = {"highspy": "highspy", "yaml": "pyyaml"}


def _declared(*groups: str) -> set[str]:
    project = PYPROJECT["project"]
    specs = list(project["dependencies"])
    for group in groups:
        specs += project["optional-dependencies"][group]
    return {spec.split(">")[0].split("=")[0].split("[")[0].strip().lower() for spec in specs}


def _third_party_imports(folder: str) -> set[str]:
    names = set()
    for path in (ROOT / folder).rglob("*.py"):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Import):
                names |= {alias.name.split(".")[0] for alias in node.names}
            elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
                names.add(node.module.split(".")[0])
    ours = {"app", "catalog", "selector", "tests"}
    return {n for n in names if n not in ours and n not in sys.stdlib_module_names}


def test_every_import_of_the_command_line_is_a_core_dependency():
    # Case: a CLI-only install (`pip install .`) must run every command but `poise app`.
    missing = {n for n in _third_party_imports("selector") | _third_party_imports("catalog")
               if DISTRIBUTION_OF.get(n, n) not in _declared()}
    assert not missing, f"undeclared imports: {sorted(missing)}"


def test_every_import_of_the_app_is_declared_in_its_extra():
    missing = {n for n in _third_party_imports("app") if DISTRIBUTION_OF.get(n, n) not in _declared("app")}
    assert not missing, f"app imports not in the [app] extra: {sorted(missing)}"


def test_the_app_settings_are_the_ones_the_upload_check_uses():
    flags = streamlit_flags()
    assert flags[flags.index("--server.maxUploadSize") + 1] == str(UPLOAD_MAX_MB)
    assert flags[flags.index("--browser.gatherUsageStats") + 1] == "false"


def test_version_is_printed(capsys):
    code, out, _ = run(capsys, "--version")
    assert code == 0 and out.startswith("poise ")


def test_optimize_is_the_same_command_as_optimise(capsys):
    a = run(capsys, "optimise", "--ph", "7.4", "--capacity", "10", "--json")
    b = run(capsys, "optimize", "--ph", "7.4", "--capacity", "10", "--json")
    assert a[0] == b[0] == 0 and a[1] == b[1]
