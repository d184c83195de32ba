"""Plate fields of the app's spec panel: wells and volume per well compute the volume to make,
the cost per plate shows on the ranking, recipe and optimiser pages, the link keeps them, and a
bad value is one message (streamlit AppTest).  No published check values: the numbers compared
are the panel's own inputs (96 wells × 200 µL × 2 plates = 38.4 mL, arithmetic) and the pages'
outputs read back."""

from pathlib import Path

import pytest

pytest.importorskip("streamlit")
from streamlit.testing.v1 import AppTest  # noqa: E402

from selector.spec import make_spec, spec_to_toml  # noqa: E402

MAIN = str(Path(__file__).resolve().parent.parent / "app" / "main.py")
TIMEOUT_S = 240


@pytest.fixture(scope="module")
def app():
    at = AppTest.from_file(MAIN, default_timeout=TIMEOUT_S)
    at.run()
    at.number_input(key="spec_plates").set_value(2).run()
    at.number_input(key="spec_wells").set_value(96).run()
    at.text_input(key="spec_well_volume").set_value("200uL").run()
    assert not at.exception, [e.message for e in at.exception]
    return at


def test_plate_fields_compute_the_volume_and_keep_it_in_the_link(app):
    spec = app.session_state["spec"]
    assert (spec.plates, spec.wells) == (2, 96)
    # Check value: the arithmetic of the inputs (2 plates × 96 wells × 200 µL), no published source involved.
    assert spec.volume_l == pytest.approx(2 * 96 * 200e-6, rel=1e-12)
    assert any("= 38.4 mL" in c.value for c in app.sidebar.caption)
    link = app.query_params["spec"]
    link = link[0] if isinstance(link, list) else link
    assert '"wells":96' in link and '"plates":2' in link
    fresh = AppTest.from_file(MAIN, default_timeout=TIMEOUT_S)
    fresh.query_params["spec"] = link
    fresh.run()
    assert not fresh.exception
    assert fresh.number_input(key="spec_wells").value == 96
    assert fresh.text_input(key="spec_well_volume").value == "200uL"
    assert fresh.session_state["spec"] == spec


def test_cost_per_plate_on_the_ranking_page(app):
    app.switch_page("pages/rank_page.py").run()
    assert not app.exception, [e.message for e in app.exception]
    table = next(d.value for d in app.dataframe if "score" in d.value.columns)
    per_plate = table.filter(like="cost per plate").iloc[:, 0]
    per_litre = table.filter(like="cost per L").iloc[:, 0]
    # one plate is 19.2 mL: cost per plate = cost per litre × 0.0192 (4 decimals shown)
    assert len(per_plate) and all(abs(p - c * 0.0192) <= 6e-5 for p, c in zip(per_plate, per_litre))


def test_cost_per_plate_on_the_recipe_and_optimiser_pages(app):
    app.switch_page("pages/recipe_page.py").run()
    assert not app.exception, [e.message for e in app.exception]
    assert any(c.value.startswith("cost per plate (19.2 mL)") for c in app.caption)
    app.switch_page("pages/optimise_page.py").run()
    app.button(key="opt_run").click().run()
    assert not app.exception, [e.message for e in app.exception]
    assert any("per plate or run" in m.value for m in app.success), [m.value for m in app.success]


def test_a_spec_file_with_plate_fields_loads_into_the_panel():
    at = AppTest.from_file(MAIN, default_timeout=TIMEOUT_S)
    at.run()
    at.switch_page("pages/prices_page.py").run()
    spec = make_spec(ph=7.4, plates=3, wells=384, well_volume_l="50uL")
    at.file_uploader(key="spec_upload").set_value(("plates.toml", spec_to_toml(spec).encode(), "text/plain")).run()
    assert not at.exception, [e.message for e in at.exception]
    assert at.session_state["spec"] == spec
    assert (at.session_state["spec_wells"], at.session_state["spec_well_volume"]) == (384, "50uL")


@pytest.mark.parametrize("wells, volume, message", [
    (96, "200 furlongs", "unknown unit 'furlongs' in buffer volume per well"),
    (96, "", "give wells per plate"),
    (0, "200uL", "give wells per plate"),
])
def test_a_bad_plate_field_is_one_message(wells, volume, message):
    at = AppTest.from_file(MAIN, default_timeout=TIMEOUT_S)
    at.run()
    at.switch_page("pages/prices_page.py").run()
    at.number_input(key="spec_wells").set_value(wells).run()
    at.text_input(key="spec_well_volume").set_value(volume).run()
    assert not at.exception, [e.message for e in at.exception]
    assert at.session_state["spec"] is None
    problems = at.session_state["spec_problems"]
    assert len(problems) == 1 and message in problems[0], problems
