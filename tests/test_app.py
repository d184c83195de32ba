"""The Streamlit app driven with streamlit.testing's AppTest: every page, good and bad input.

The numbers shown come from selector (tested elsewhere); here the case is that each page
renders, reacts to its widgets, and shows the engine's message instead of a traceback.
No published check values in this file: the only numbers compared are the spec's own
inputs read back from the widgets, which need no source.
"""

from pathlib import Path

import pytest

pytest.importorskip("streamlit")
from streamlit.testing.v1 import AppTest  # noqa: E402

from catalog import load_catalog  # noqa: E402
from selector.spec import make_spec, spec_to_json, spec_to_toml  # noqa: E402

MAIN = str(Path(__file__).resolve().parent.parent / "app" / "main.py")
TIMEOUT_S = 180

#: Specs that use every field between them (invented values, not anyone's protocol).
FULL_SPECS = {
    "bounds": dict(ph=7.25, temperature_c=30.5, prep_temperature_c=22.0, volume_l=0.25, buffer_conc_mol_l=0.0333,
                   capacity_mol_l_per_ph=0.0123, loads=[{"kind": "acid", "conc_mol_l": 0.002},
                                                        {"kind": "base", "conc_mol_l": 0.0015}],
                   tolerance_ph=0.07, ionic_strength_min_mol_l=0.05, ionic_strength_max_mol_l=0.2, salt="KCl",
                   counter_ion="K", metals=[{"metal": "Ca", "max_bound_fraction": 0.05, "conc_mol_l": 2e-6},
                                            {"metal": "Mg", "max_bound_fraction": 0.1, "conc_mol_l": 0.001}],
                   uv_nm=260.0, exclude=["primary_amine", "phosphate"], require=["co2_uptake"], allow_hazardous=True,
                   in_stock=["tris", "tris_hcl", "kcl"], plates=12, temperature_min_c=20.0, temperature_max_c=37.0,
                   osmolarity_min_osmol_l=0.25, osmolarity_max_osmol_l=0.35, fixed_amounts={"kcl": 0.15},
                   notes="round trip of every field"),
    "target": dict(ph=4.8, volume_l=1.5, ionic_strength_mol_l=0.123, counter_ion="none", salt="NaCl",
                   loads=[{"kind": "base", "conc_mol_l": 0.004}]),
}


@pytest.fixture
def app():
    at = AppTest.from_file(MAIN, default_timeout=TIMEOUT_S)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    return at


def markdown_text(at) -> str:
    return "\n".join(m.value for m in at.markdown)


def errors(at) -> str:
    return "\n".join(e.value for e in at.error)


# --- the frame: navigation, the spec panel on every page, loading and saving ---------------

@pytest.mark.parametrize("name", sorted(FULL_SPECS))
@pytest.mark.parametrize("fmt", ["toml", "json"])
def test_loading_then_saving_keeps_every_field(app, name, fmt):
    spec = make_spec(FULL_SPECS[name])
    text = spec_to_toml(spec) if fmt == "toml" else spec_to_json(spec)
    app.switch_page("pages/prices_page.py").run()     # a light page: the panel is the frame's
    app.file_uploader(key="spec_upload").set_value((f"full.{fmt}", text.encode(), "application/octet-stream")).run()
    assert not app.exception, [e.message for e in app.exception]
    assert app.session_state["scenario"] == f"Spec loaded from full.{fmt}"
    saved = app.session_state["spec"]
    assert saved == spec and saved.notes == spec.notes
    assert spec_to_toml(saved) == spec_to_toml(spec)    # what "Save spec (TOML)" writes


def test_a_bad_spec_file_is_named_with_its_key(app):
    app.file_uploader(key="spec_upload").set_value(("bad.toml", b"ph = 7\nionic_strength_mol_l = 9\n",
                                                    "application/toml")).run()
    assert not app.exception
    assert "bad.toml: invalid spec: ionic_strength_mol_l: expected <= 5, got 9" in errors(app)


def test_the_panel_keeps_its_values_across_pages(app):
    app.number_input(key="spec_temperature").set_value(31.0).run()
    for page in ("pages/catalog_page.py", "pages/prices_page.py", "pages/rank_page.py"):
        app.switch_page(page).run()
        assert not app.exception
        assert app.number_input(key="spec_temperature").value == 31.0


def test_every_widget_on_every_page_has_a_key(app):
    app.button(key="load_demo").click().run()
    seen = 0
    for page in ("pages/rank_page.py", "pages/recipe_page.py", "pages/optimise_page.py", "pages/catalog_page.py",
                 "pages/prices_page.py"):
        app.switch_page(page).run()
        assert not app.exception
        for kind in ("number_input", "text_input", "selectbox", "multiselect", "checkbox", "button", "radio",
                     "text_area", "file_uploader", "download_button"):
            for widget in app.get(kind):
                seen += 1
                assert widget.key, f"{page}: {kind} {widget.label!r} has no key"
    assert seen > 50


# --- ranked systems -----------------------------------------------------------------------

def test_ranking_view_with_demo_scenario(app):
    app.button(key="load_demo").click().run()
    assert not app.exception
    assert "Top-ranked system" in markdown_text(app)
    assert app.session_state["spec_temperature"] == 37.0
    assert app.session_state["scenario"].startswith("Demo scenario (invented)")
    # Ca limited to 5 % in the demo: phosphate is not among the feasible systems.
    assert app.session_state["chosen_system"] != "phosphate"
    assert any("I = 0.15 mol/L" in c.value for c in app.caption)   # the range bar at the spec's I


def test_changing_the_spec_changes_the_ranking(app):
    first = markdown_text(app)
    app.number_input(key="spec_ph").set_value(10.0).run()
    assert not app.exception
    assert markdown_text(app) != first


def test_bad_spec_shows_one_message_naming_the_widget(app):
    app.text_input(key="spec_volume").set_value("three buckets").run()
    app.text_input(key="spec_ionic_strength").set_value("9").run()
    assert not app.exception
    assert len(app.error) == 1
    assert "cannot read volume to make (e.g. 1L, 500mL) 'three buckets'" in errors(app)
    assert "ionic strength target, mol/L (blank: none): expected <= 5 mol/L, got 9 mol/L" in errors(app)


def test_panel_messages_are_in_the_panel_unit(app):
    app.button(key="spec_add_load").click().run()
    app.number_input(key="spec_load_mm_1").set_value(0.0).run()
    assert "load 2, mM: expected > 0 mM, got 0 mM" in errors(app)


# --- recipe -------------------------------------------------------------------------------

def test_recipe_view_shows_meter_ph_and_cautions(app):
    app.switch_page("pages/recipe_page.py").run()
    assert not app.exception
    app.selectbox(key="recipe_system").set_value("tris").run()
    assert not app.exception
    assert any("meter pH" in m.label for m in app.metric)
    # The meter reading carries its uncertainty (propagated from the catalog's constants).
    assert any("meter pH" in m.label and "±" in m.value for m in app.metric)
    assert "Cautions" in markdown_text(app)
    # Hazard flags of a reagent in the recipe (NaOH: corrosive) bring its cautions and the notice.
    assert any("corrosive" in w.value and "take precedence" in w.value for w in app.warning)
    app.radio(key="recipe_route").set_value("stocks").run()
    assert "Mixing volumes" in markdown_text(app)


def test_recipe_titrants_follow_the_counter_ion(app):
    app.switch_page("pages/recipe_page.py").run()
    app.selectbox(key="recipe_system").set_value("tris").run()
    names = {r.reagent_id: r.name for r in load_catalog().reagents.values()}
    assert list(app.radio(key="recipe_titrant").options) == [names["hcl"], names["naoh"]]
    app.selectbox(key="spec_counter_ion").set_value("K").run()
    assert list(app.radio(key="recipe_titrant").options) == [names["hcl"], names["koh"]]
    app.selectbox(key="spec_counter_ion").set_value("none").run()
    assert not app.exception
    assert list(app.radio(key="recipe_titrant").options) == [names["hcl"]]


def test_recipe_view_hazardous_system_message(app):
    app.switch_page("pages/recipe_page.py").run()
    app.selectbox(key="recipe_system").set_value("cyanide").run()
    assert not app.exception
    assert "hazardous" in errors(app)


def test_recipe_view_shows_hazards_when_there_are_any(app):
    app.checkbox(key="spec_allow_hazardous").check().run()
    app.number_input(key="spec_ph").set_value(6.2).run()
    app.switch_page("pages/recipe_page.py").run()
    app.selectbox(key="recipe_system").set_value("cacodylate").run()
    assert not app.exception, [e.message for e in app.exception]
    assert any("take precedence" in w.value for w in app.warning)


def test_recipe_view_bad_spec(app):
    app.switch_page("pages/recipe_page.py").run()
    app.text_input(key="spec_conc").set_value("lots").run()
    assert not app.exception
    assert "total buffer concentration" in errors(app)


# --- optimiser ----------------------------------------------------------------------------

def test_optimiser_view(app):
    app.switch_page("pages/optimise_page.py").run()
    assert list(app.selectbox(key="opt_objective").options)[0] == "cost"
    app.button(key="opt_run").click().run()
    assert not app.exception
    assert app.success and "per litre" in app.success[0].value


def test_optimiser_view_infeasible_spec_shows_conflicts(app):
    app.number_input(key="spec_tolerance").set_value(0.005).run()
    app.selectbox(key="spec_load_kind_0").set_value("acid").run()
    app.number_input(key="spec_load_mm_0").set_value(400.0).run()
    app.switch_page("pages/optimise_page.py").run()
    app.button(key="opt_run").click().run()
    assert not app.exception
    assert len(app.error) == 1 and not app.success


# --- catalog and prices -------------------------------------------------------------------

def test_catalog_view(app):
    app.switch_page("pages/catalog_page.py").run()
    assert not app.exception
    app.selectbox(key="cat_system").set_value("hepes").run()
    assert not app.exception
    app.text_input(key="cat_search").set_value("phosphate").run()
    assert not app.exception and not app.error


def test_catalog_view_lists_every_published_value(app):
    # Chlorite's pKa: the llnl.dat value is marked rejected in step_values.csv (issue 9 §2) and
    # phosphate's NaHPO4- pair has a NIST SRD 46 and a phreeqc.dat value in complex_values.csv;
    # the page shows each with its use, as `poise catalog` does.
    app.switch_page("pages/catalog_page.py").run()
    app.selectbox(key="cat_system").set_value("chlorite").run()
    assert not app.exception
    uses = [u for frame in app.dataframe if "use" in frame.value.columns for u in frame.value["use"]]
    assert "used" in uses and "rejected" in uses
    app.selectbox(key="cat_system").set_value("phosphate").run()
    assert not app.exception
    assert any("Complexes with several published values" in m.value for m in app.markdown)
    complexes = [frame.value for frame in app.dataframe if "complex" in frame.value.columns]
    assert complexes and "NaHPO4-" in list(complexes[0]["complex"])


def test_catalog_view_bad_ionic_strength(app):
    app.switch_page("pages/catalog_page.py").run()
    app.text_input(key="cat_ionic").set_value("salty").run()
    assert not app.exception
    assert "cannot read ionic strength, mol/L (e.g. 0.15 or 150mM) 'salty'" in errors(app)


def test_prices_view_default_is_demo(app):
    app.switch_page("pages/prices_page.py").run()
    assert not app.exception
    assert any("demo" in m.value for m in app.markdown)


def test_prices_view_bad_sheet(app):
    app.switch_page("pages/prices_page.py").run()
    app.file_uploader(key="price_upload").set_value(("prices.csv", b"reagent,price\nTris,5\n", "text/csv")).run()
    assert not app.exception
    assert "missing column" in errors(app)
    app.file_uploader(key="price_upload").set_value(("prices.csv", b"\xff\xfe\x00x", "text/csv")).run()
    assert "not UTF-8" in errors(app)
