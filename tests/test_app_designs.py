"""The Designs page under streamlit's AppTest: each design renders, and bad ranges show one
message instead of a traceback.  Numbers are checked in tests/test_designs.py; here only
what the page shows."""

from pathlib import Path

import pytest

pytest.importorskip("streamlit")
from streamlit.testing.v1 import AppTest  # noqa: E402

MAIN = str(Path(__file__).resolve().parent.parent / "app" / "main.py")
TIMEOUT_S = 300


@pytest.fixture
def page():
    at = AppTest.from_file(MAIN, default_timeout=TIMEOUT_S)
    at.run()
    at.switch_page("pages/designs_page.py").run()
    assert not at.exception, [e.message for e in at.exception]
    return at


def test_series_tab_designs_and_verifies(page):
    page.text_input(key="series_ph").set_value("7.0:7.5:0.5")
    page.number_input(key="series_max_systems").set_value(1)
    page.button(key="series_run").click().run()
    assert not page.exception and not page.error
    assert page.success and "2 members verified" in page.success[0].value


def test_span_tab_draws_the_capacity_curve(page):
    page.text_input(key="span_ph").set_value("6.0:7.0:0.5")
    page.number_input(key="span_max_systems").set_value(1)
    page.button(key="span_run").click().run()
    assert not page.exception and not page.error
    assert page.success and "smallest β" in page.success[0].value


def test_plate_tab_offers_the_worklist(page):
    page.text_input(key="plate_ph").set_value("7.0")
    page.text_input(key="plate_ionic").set_value("0.1:0.2:0.1")
    page.button(key="plate_run").click().run()
    assert not page.exception and not page.error
    assert page.success and "2 wells" in page.success[0].value
    assert page.get("download_button")


def test_bad_range_shows_one_message(page):
    page.text_input(key="series_ph").set_value("8:6:0.5")
    page.button(key="series_run").click().run()
    assert not page.exception
    assert len(page.error) == 1 and "high to low" in page.error[0].value


def test_every_widget_has_a_key(page):
    for kind in ("number_input", "text_input", "selectbox", "checkbox", "button"):
        for widget in page.get(kind):
            assert widget.key, f"{kind} {widget.label!r} has no key"


def test_plate_tab_by_concentration(page):
    page.text_input(key="plate_ph").set_value("7.0")
    page.text_input(key="plate_ionic").set_value("0.15")
    page.text_input(key="plate_conc").set_value("20mM:40mM:20mM")
    page.button(key="plate_run").click().run()
    assert not page.exception and not page.error
    assert page.success and "buffer concentration" in page.success[0].value


def test_plate_tab_two_ranges_show_one_message(page):
    page.text_input(key="plate_ph").set_value("7.0")
    page.text_input(key="plate_conc").set_value("20mM:40mM:20mM")
    page.button(key="plate_run").click().run()
    assert not page.exception
    assert len(page.error) == 1 and "not both" in page.error[0].value
