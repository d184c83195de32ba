"""The app's Purchasing page and the Prices page after an upload (streamlit AppTest).

Suppliers, packs and prices are invented; the totals are the hand-worked ones of
tests/test_purchase.py."""

from pathlib import Path

import pytest

pytest.importorskip("streamlit")
from streamlit.testing.v1 import AppTest  # noqa: E402

MAIN = str(Path(__file__).resolve().parent.parent / "app" / "main.py")
OFFERS = (b"supplier,reagent,pack_size,pack_price,currency\nAlder Reagents,NaCl,1 kg,4,EUR\n"
          b"Birchwood Lab Supply,NaCl,1 kg,5,EUR\nAlder Reagents,Tris,1 kg,80,EUR\n")
SUPPLIERS = b"supplier,shipping,free_shipping_over\nAlder Reagents,15,200\nBirchwood Lab Supply,20,\n"


@pytest.fixture
def app():
    at = AppTest.from_file(MAIN, default_timeout=180)
    at.run()
    at.switch_page("pages/purchasing_page.py").run()
    assert not at.exception
    return at


def test_plan_from_uploaded_offers_and_suppliers(app):
    # Two sheets: the second offers NaCl at 3.50 per kg (a 2 kg pack at 7, invented) from Alder Reagents.
    app.file_uploader(key="buy_offers").set_value([
        ("offers.csv", OFFERS, "text/csv"),
        ("more.csv", b"supplier,reagent,pack_size,pack_price,currency\nAlder Reagents,NaCl,2 kg,7,EUR\n", "text/csv")])
    app.file_uploader(key="buy_suppliers").set_value(("suppliers.csv", SUPPLIERS, "text/csv"))
    app.text_area(key="buy_needs").set_value("NaCl=2kg")
    app.button(key="buy_plan").click().run()
    assert not app.exception and not app.error, [e.value for e in app.error]
    # By hand: one 2 kg pack at 7 (cheaper than 2 × 1 kg at 4) + 15 shipping = 22 EUR at Alder Reagents.
    assert any("Total 22.00 EUR" in s.value for s in app.success)


@pytest.mark.parametrize("needs, message", [("NaCl", "give each reagent as NAME=AMOUNT"),
                                            ("KCl=1kg", "no offer for potassium chloride"),
                                            ("", "nothing to buy")])
def test_bad_needs_show_one_message(app, needs, message):
    app.file_uploader(key="buy_offers").set_value([("offers.csv", OFFERS, "text/csv")])
    app.text_area(key="buy_needs").set_value(needs)
    app.button(key="buy_plan").click().run()
    assert not app.exception and any(message in e.value for e in app.error), [e.value for e in app.error]


def test_prices_page_shows_the_uploaded_book_at_once():
    """Before: the page said "demo prices" until the next rerun after an upload."""
    at = AppTest.from_file(MAIN, default_timeout=180)
    at.run()
    at.switch_page("pages/prices_page.py").run()
    at.file_uploader(key="price_upload").set_value(("offers.csv", OFFERS, "text/csv")).run()
    assert not at.exception
    assert any(m.value.startswith("In use: offers.csv (EUR) over demo prices") for m in at.markdown)


def test_prepared_buffers_compared(app):
    offers = OFFERS.decode() + "Birchwood Lab Supply,Saline tablets,10 L,9,EUR,nacl=150mM\n"
    app.file_uploader(key="buy_offers").set_value([("offers.csv", offers.replace(
        "currency\n", "currency,composition\n").encode(), "text/csv")])
    app.button(key="buy_prepared").click().run()
    assert not app.exception and not app.error, [e.value for e in app.error]
    assert any("labour" in c.value for c in app.caption)


def test_needs_from_the_optimiser_mix(app):
    """The mix the Optimiser page found (demo prices), × 10 L, planned from offers for its reagents."""
    app.switch_page("pages/optimise_page.py").run()
    app.button(key="opt_run").click().run()
    result = app.session_state["opt_result"]
    assert result is not None
    offers = "supplier,reagent,pack_size,pack_price,currency\n" + "".join(
        f"Alder Reagents,{r},1 kg,10,EUR\n" for r in result.reagents_mol_l)
    app.switch_page("pages/purchasing_page.py").run()
    app.file_uploader(key="buy_offers").set_value([("offers.csv", offers.encode(), "text/csv")])
    app.text_input(key="buy_mix_volume").set_value("10L")
    app.button(key="buy_plan").click().run()
    assert not app.exception and not app.error, [e.value for e in app.error]
    assert any(s.value.startswith("Total ") for s in app.success)


@pytest.fixture(scope="module")
def tris_book(tmp_path_factory):
    """A recipe book holding 'tris assay' (invented name): 50 mM Tris titrated to pH 7.4 with HCl."""
    from selector import book as B
    from selector.recipe import make_recipes
    from selector.spec import make_spec

    path = tmp_path_factory.mktemp("book") / "book.sqlite3"
    spec = make_spec(ph=7.4, buffer_conc_mol_l=0.05)
    recipe = make_recipes("tris", spec, routes=["titrate-base"])[0]
    with B.open_book(path) as book:
        B.save_recipe(book, "tris assay", recipe.as_json(), spec)
    return path


def purchasing_with_book(monkeypatch, path) -> AppTest:
    monkeypatch.setenv("POISE_BOOK", str(path))
    at = AppTest.from_file(MAIN, default_timeout=180)
    at.run()
    at.switch_page("pages/purchasing_page.py").run()
    assert not at.exception, [e.message for e in at.exception]
    return at


def test_needs_from_a_saved_recipe_are_those_of_buy_make(monkeypatch, tris_book):
    """20 L of the saved recipe: the same needs as `poise buy --make "tris assay=20L"` (the one
    function both call), Tris base 0.05 mol/L × 20 L × M / purity (catalog molar mass)."""
    from catalog import load_catalog
    from selector.purchase import needs_from_saved_recipes, total_needs

    at = purchasing_with_book(monkeypatch, tris_book)
    offers = "supplier,reagent,pack_size,pack_price,currency\nAlder Reagents,Tris,1 kg,80,EUR\n" \
             "Alder Reagents,HCl,1 L,9,EUR\n"
    at.file_uploader(key="buy_offers").set_value([("offers.csv", offers.encode(), "text/csv")])
    at.multiselect(key="buy_make").set_value(["tris assay"]).run()
    at.text_input(key="buy_make_volume_tris assay").set_value("20L")
    at.button(key="buy_plan").click().run()
    assert not at.exception and not at.error, [e.value for e in at.error]
    plan = at.session_state["buy_result"]
    expected = total_needs(needs_from_saved_recipes([("tris assay", "20L")], tris_book))
    assert plan.needs_g == pytest.approx(expected, rel=1e-12)
    # Check value: 50 mM × 20 L × molar mass / purity, both from the catalog row (their sources are there).
    tris = load_catalog().reagents["tris"]
    assert plan.needs_g["tris"] == pytest.approx(0.05 * 20 * tris.molar_mass_g_mol / tris.purity_fraction, rel=1e-3)


@pytest.mark.parametrize("volume, message", [
    ("20 furlongs", "unknown unit 'furlongs' in the saved recipe tris assay '20 furlongs'"),
    ("", "cannot read the saved recipe tris assay ''"),
    ("-1L", "the saved recipe tris assay '-1L' is negative"),
])
def test_a_bad_volume_of_a_saved_recipe_is_one_message(monkeypatch, tris_book, volume, message):
    at = purchasing_with_book(monkeypatch, tris_book)
    at.file_uploader(key="buy_offers").set_value([("offers.csv", OFFERS, "text/csv")])
    at.multiselect(key="buy_make").set_value(["tris assay"]).run()
    at.text_input(key="buy_make_volume_tris assay").set_value(volume)
    at.button(key="buy_plan").click().run()
    assert not at.exception
    assert len(at.error) == 1 and message in at.error[0].value, [e.value for e in at.error]


def test_without_a_book_the_page_says_how_to_fill_it(monkeypatch, tmp_path):
    at = purchasing_with_book(monkeypatch, tmp_path / "none.sqlite3")
    assert any("No saved recipes in the recipe book yet" in c.value for c in at.caption)
    assert not (tmp_path / "none.sqlite3").exists()      # looking does not create a book
