"""The app's "pH of a mixture" page with "open to air", and the recipe page's drift note (AppTest).

The figures are the engine's (checked against PHREEQC in tests/test_gas_exchange.py); here the
page shows them and agrees with :func:`selector.chemistry.gas_exchange.open_vessel`.
"""

from pathlib import Path

import pytest

pytest.importorskip("streamlit")
from streamlit.testing.v1 import AppTest  # noqa: E402

from selector.chemistry.gas_exchange import open_vessel  # noqa: E402

MAIN = str(Path(__file__).resolve().parent.parent / "app" / "main.py")


def test_mixture_page_open_to_air():
    at = AppTest.from_file(MAIN, default_timeout=180)
    at.run()
    at.switch_page("pages/ph_page.py").run()
    at.text_area(key="mix_reagents").set_value("NaOH=1mM").run()
    assert "pH open to air" not in [m.label for m in at.metric]
    at.checkbox(key="mix_open").check().run()
    at.number_input(key="mix_pco2_ppm").set_value(1000.0).run()
    assert not at.exception and not at.error
    shown = {m.label: m.value for m in at.metric}
    expected = open_vessel({"naoh": 1e-3}, 25.0, dry_air_fraction=1e-3)      # ppm of dry air
    assert shown["pH open to air"] == f"{expected.ph_open:.3f}"
    assert shown["carbonate taken up (−: lost), mM"] == f"{expected.uptake_mol_l * 1000:+.3g}"


def test_recipe_page_states_the_open_air_drift_above_ph_8():
    at = AppTest.from_file(MAIN, default_timeout=180)
    at.run()
    at.switch_page("pages/recipe_page.py").run()
    assert not at.exception and not any("Open to air" in i.value for i in at.info)   # pH 7.4 default
    at.number_input(key="spec_ph").set_value(8.6).run()
    at.selectbox(key="recipe_system").set_value("tris").run()
    assert not at.exception, [e.message for e in at.exception]
    note = next(i.value for i in at.info if i.value.startswith("Open to air (CO2 420 ppm of dry air"))
    assert "pH 8.60 →" in note and "common practice" in note
