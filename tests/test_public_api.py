"""The public API in ``selector/__init__.py``: every documented name resolves, lazily."""

import subprocess
import sys

import pytest

import selector


@pytest.mark.parametrize("name", selector.__all__)
def test_every_public_name_resolves(name):
    assert getattr(selector, name) is not None


def test_unknown_name_is_an_attribute_error():
    with pytest.raises(AttributeError, match="no attribute 'nothing_here'"):
        selector.nothing_here  # noqa: B018


def test_importing_selector_loads_no_solver_library():
    # Importing the package must stay cheap: no Pyomo, SciPy or Streamlit until a name needs them.
    code = ("import sys, selector; "
            "print(sorted(m for m in ('pyomo', 'scipy', 'streamlit', 'pandas') if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"



@pytest.mark.parametrize("argv", [["--help"], ["ph", "KH2PO4=25mM", "Na2HPO4=25mM"], ["catalog"]],
                         ids=["help", "ph", "catalog"])
def test_commands_that_solve_no_model_load_no_solver_library(argv):
    # `poise --help`, `ph` and `catalog` solve no optimisation model: registering the commands
    # (their --objective/--sort/--route choices included) must not import Pyomo or SciPy.
    code = ("import sys\n"
            "from selector.cli import main\n"
            "try:\n"
            "    code = main(sys.argv[1:])\n"
            "except SystemExit as stop:\n"
            "    code = stop.code\n"
            "sys.stdout.flush()\n"
            "print('LOADED', sorted(m for m in ('pyomo', 'scipy', 'streamlit', 'pandas') if m in sys.modules),"
            " file=sys.stderr)\n"
            "sys.exit(code)\n")
    done = subprocess.run([sys.executable, "-c", code, *argv], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip()   # the command printed its answer
    assert "LOADED []" in done.stderr
