"""The app's Free metal page driven with AppTest: it renders the default design (Ca and Mg with
EGTA), its sensitivity table and recipe downloads, and shows one message for bad input.

No number is compared here: the design's numbers are checked in tests/test_metal_design.py;
this checks that the page shows them and says what is wrong with bad input."""

from pathlib import Path

import pytest

pytest.importorskip("streamlit")
from streamlit.testing.v1 import AppTest  # noqa: E402

MAIN = str(Path(__file__).resolve().parent.parent / "app" / "main.py")


@pytest.fixture
def page():
    at = AppTest.from_file(MAIN, default_timeout=240)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    at.switch_page("pages/metal_page.py").run()
    return at


def test_metal_page_designs_the_default_request(page):
    assert not page.exception, [e.message for e in page.exception]
    assert not page.error, [e.value for e in page.error]
    result = page.dataframe[0].value   # the metal table, then the sensitivity table
    assert list(result["metal"]) == ["Ca", "Mg"]
    assert page.dataframe[1].value.shape[0] >= 4
    assert [m.label for m in page.metric] == ["titrant, mM", "salt, mM", "ionic strength, mM"]
    assert any("recalled" in w.value for w in page.warning)


def test_metal_page_bad_input_is_one_message(page):
    page.text_input(key="metal_free").set_value("Ca=-3nM").run()
    assert not page.exception
    assert len(page.error) == 1 and "negative" in page.error[0].value
    page.text_input(key="metal_free").set_value("Zn=1nM").run()
    assert len(page.error) == 1 and "no constant for Zn" in page.error[0].value
