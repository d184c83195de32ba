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

