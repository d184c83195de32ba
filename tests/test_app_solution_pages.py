"""The app's "Check a solution" pages (pH of a mixture, pH standards) driven with AppTest:
each renders, reacts to its widgets and shows a one-line message for bad input.

The only number compared is a published value the page reads back from the catalog (no
computed value is checked here: the engine's pH is tested in tests/test_ph_standards.py).
"""

from pathlib import Path

import pytest

pytest.importorskip("streamlit")
from streamlit.testing.v1 import AppTest  # noqa: E402

MAIN = str(Path(__file__).resolve().parent.parent / "app" / "main.py")


@pytest.fixture
def app():
    at = AppTest.from_file(MAIN, default_timeout=180)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    return at


def errors(at) -> str:
    return "\n".join(e.value for e in at.error)


def test_mixture_page_solves_the_default_mixture(app):
    app.switch_page("pages/ph_page.py").run()
    assert not app.exception and not app.error
    labels = [m.label for m in app.metric]
    assert labels[:3] == ["pH", "ionic strength, mM", "buffer capacity β, mM per pH"]
    assert " ± " in app.metric[0].value


def test_mixture_page_bad_lines_get_one_message(app):
    app.switch_page("pages/ph_page.py").run()
    app.text_area(key="mix_reagents").set_value("KH2PO4").run()
    assert not app.exception
    assert "give each reagent as NAME=AMOUNT" in errors(app)
    app.text_area(key="mix_reagents").set_value("unobtainium=5mM").run()
    assert not app.exception and "unobtainium" in errors(app)
    app.text_area(key="mix_reagents").set_value("KH2PO4=5m").run()
    assert not app.exception and "molal" in errors(app)


def test_standards_page_shows_grams_and_the_published_table(app):
    app.switch_page("pages/standards_page.py").run()
    assert not app.exception and not app.error
    app.selectbox(key="std_id").set_value("borax").run()
    assert not app.exception
    table = app.dataframe[1].value   # the grams, then the pH table
    # Case: 0.01 mol/kg borax at 25 °C, pH(S) 9.180 (J. Res. NBS 73A (1969) 37, the catalog source nbs1969),
    # read back from the catalog's standards table: exact.
    row = table[table["temperature, °C"] == 25.0].iloc[0]
    assert row["published pH"] == pytest.approx(9.180, abs=1e-9)
    assert any("local regulations" in w.value.lower() or "institution" in w.value.lower() for w in app.warning)


def test_the_spec_lives_in_the_link_and_a_link_restores_it():
    # Case: a reload or a shared link keeps the spec (issue 18: the spec kept in the URL).
    at = AppTest.from_file(MAIN, default_timeout=180)
    at.run()
    at.number_input(key="spec_temperature").set_value(31.0).run()
    link = at.query_params["spec"]
    link = link[0] if isinstance(link, list) else link
    assert '"temperature_c":31.0' in link
    fresh = AppTest.from_file(MAIN, default_timeout=180)
    fresh.query_params["spec"] = link
    fresh.run()
    assert not fresh.exception
    assert fresh.number_input(key="spec_temperature").value == 31.0
    bad = AppTest.from_file(MAIN, default_timeout=180)
    bad.query_params["spec"] = '{"ph": "seven"}'
    bad.run()
    assert not bad.exception
    assert "could not be used" in "\n".join(e.value for e in bad.error)


def test_standards_page_bad_water_mass_gets_one_message(app):
    app.switch_page("pages/standards_page.py").run()
    app.text_input(key="std_water").set_value("250g").run()
    assert not app.exception and not app.error
    app.text_input(key="std_water").set_value("a bucket").run()
    assert not app.exception and len(app.error) == 1
    assert "water (e.g. 1kg or 250g)" in errors(app)
    app.text_input(key="std_water").set_value("2 t").run()
    assert not app.exception and len(app.error) == 1 and "unknown unit" in errors(app)
    app.text_input(key="std_water").set_value("5000kg").run()
    assert not app.exception and "outside 0.001 to 1000 kg" in errors(app)
