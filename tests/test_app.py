"""The Streamlit app driven with streamlit.testing's AppTest: every view, good and bad input.

The numbers shown come from selector (tested elsewhere); here the case is that each view
renders, reacts to its widgets, and shows the engine's message instead of a traceback.
No published check values in this file: the only numbers compared are the spec's own
inputs read back from the widgets, which need no source.
"""

from pathlib import Path

import pytest

pytest.importorskip("streamlit")
from streamlit.testing.v1 import AppTest  # noqa: E402

MAIN = str(Path(__file__).resolve().parent.parent / "app" / "main.py")
TIMEOUT_S = 180


@pytest.fixture
def app():
    at = AppTest.from_file(MAIN, default_timeout=TIMEOUT_S)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    return at


def markdown_text(at) -> str:
    return "\n".join(m.value for m in at.markdown)


def test_ranking_view_with_demo_scenario(app):
    app.button(key="load_demo").click().run()
    assert not app.exception
    text = markdown_text(app)
    assert "Top-ranked system" in text
    assert app.session_state["spec_temperature"] == 37.0
    assert app.session_state["scenario"].startswith("Demo scenario (invented)")
    # Ca limited to 5 % in the demo: phosphate is not among the feasible systems.
    assert "chosen_system" in app.session_state
    assert app.session_state["chosen_system"] != "phosphate"


def test_changing_the_spec_changes_the_ranking(app):
    first = markdown_text(app)
    app.number_input(key="spec_ph").set_value(10.0).run()
    assert not app.exception
    assert markdown_text(app) != first


def test_bad_spec_shows_the_engine_message(app):
    app.text_input(key="spec_volume").set_value("three buckets").run()
    assert not app.exception
    assert any("volume" in e.value for e in app.error)


def test_recipe_view_shows_meter_ph_and_cautions(app):
    app.switch_page("pages/recipe_page.py").run()
    assert not app.exception
    app.selectbox(key="recipe_system").set_value("tris").run()
    assert not app.exception
    assert any("meter pH" in m.label for m in app.metric)
    assert "Cautions" in markdown_text(app)
    app.radio(key="recipe_route").set_value("stocks").run()
    assert "Mixing volumes" in markdown_text(app)


def test_recipe_view_hazardous_system_message(app):
    app.switch_page("pages/recipe_page.py").run()
    app.selectbox(key="recipe_system").set_value("cyanide").run()
    assert not app.exception
    assert any("allow-hazardous" in e.value or "hazardous" in e.value for e in app.error)


def test_optimiser_view(app):
    app.switch_page("pages/optimise_page.py").run()
    app.button(key="opt_run").click().run()
    assert not app.exception
    assert app.success and "per litre" in app.success[0].value


def test_optimiser_view_infeasible_spec_shows_conflicts(app):
    app.number_input(key="spec_tolerance").set_value(0.005).run()
    app.selectbox(key="spec_load_kind").set_value("acid").run()
    app.number_input(key="spec_load_mm").set_value(400.0).run()
    app.switch_page("pages/optimise_page.py").run()
    app.button(key="opt_run").click().run()
    assert not app.exception
    assert app.error


def test_catalog_view(app):
    app.switch_page("pages/catalog_page.py").run()
    assert not app.exception
    app.selectbox(key="cat_system").set_value("hepes").run()
    assert not app.exception
    app.text_input(key="cat_search").set_value("phosphate").run()
    assert not app.exception


def test_prices_view_default_is_demo(app):
    app.switch_page("pages/prices_page.py").run()
    assert not app.exception
    assert any("demo" in m.value for m in app.markdown)


def test_spec_from_a_file_fills_the_widgets(app):
    # What the "Load a spec" upload does: a spec's fields shown in the widgets, then used.
    from app.state import widgets_from_spec
    from selector.spec import make_spec

    spec = make_spec(ph=8.1, temperature_c=30.0, capacity_mol_l_per_ph=0.015, ionic_strength_mol_l=0.1,
                     metals=[{"metal": "Mg", "max_bound_fraction": 0.1}], plates=12)
    for key, value in widgets_from_spec(spec).items():
        app.session_state[key] = value
    app.run()
    assert not app.exception and not app.error
    assert app.number_input(key="spec_ph").value == pytest.approx(8.1)
    assert app.session_state["spec_mode"] == "capacity"
    assert "Top-ranked system" in markdown_text(app)
