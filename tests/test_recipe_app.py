"""The recipe and optimiser pages under streamlit's AppTest: the bench recipe and its downloads.

No published check values here: the numbers come from selector (tests/test_recipe_bench.py);
the case is that both pages show the recipe with the same downloads and no traceback.
"""

from pathlib import Path

import pytest

pytest.importorskip("streamlit")
from streamlit.testing.v1 import AppTest  # noqa: E402

MAIN = str(Path(__file__).resolve().parent.parent / "app" / "main.py")


def test_optimiser_page_shows_the_bench_recipe_with_the_recipe_pages_downloads():
    at = AppTest.from_file(MAIN, default_timeout=180)
    at.run()
    at.switch_page("pages/optimise_page.py").run()
    at.button(key="opt_run").click().run()
    assert not at.exception, [e.message for e in at.exception]
    assert any(s.value == "Bench recipe" for s in at.subheader)
    text = "\n".join(m.value for m in at.markdown)
    assert "Check at 25 °C: the meter reads pH" in text and "safety rules take precedence" in text
    # The methods sentence is shown beside the downloads.
    assert at.code and at.code[0].value.startswith("The buffer was")
    at.switch_page("pages/recipe_page.py").run()
    assert not at.exception, [e.message for e in at.exception]
    assert at.code and at.code[0].value.startswith("The buffer was")


def test_recipe_page_makes_a_mix_and_says_what_is_wrong_with_bad_text():
    at = AppTest.from_file(MAIN, default_timeout=180)
    at.run()
    at.switch_page("pages/recipe_page.py").run()
    at.radio(key="recipe_make").set_value("a mix of systems").run()
    assert not at.exception, [e.message for e in at.exception]
    text = "\n".join(m.value for m in at.markdown)
    assert "Tris + HEPES" in text and "route mix" in text
    at.text_input(key="recipe_mix").set_value("tris 30mM").run()
    assert not at.exception
    assert len(at.error) == 1 and "give NAME=CONC pairs" in at.error[0].value
