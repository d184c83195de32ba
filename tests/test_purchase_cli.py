"""``poise buy``: order list per supplier, JSON keys, CSV and XLSX order lists, and every bad
input refused in one line with exit code 2.  Suppliers, packs and prices are invented."""

import csv
import io
import json

import pytest
from cli_helpers import run

OFFERS = ("supplier,reagent,pack_size,pack_price,currency,grade\n"
          "Alder Reagents,Tris,1 kg,80,EUR,reagent\n"
          "Alder Reagents,Tris,500 g,45,EUR,molecular biology\n"
          "Birchwood Lab Supply,Tris,5 kg,300,EUR,reagent\n"
          "Birchwood Lab Supply,NaCl,1 kg,5,EUR,\n"
          "Alder Reagents,NaCl,1 kg,4,EUR,\n"
          "Alder Reagents,HCl,2.5 L,40,EUR,\n")
SUPPLIERS = "supplier,shipping,free_shipping_over,min_order\nAlder Reagents,15,200,\nBirchwood Lab Supply,20,,30\n"


@pytest.fixture
def sheets(tmp_path):
    (tmp_path / "offers.csv").write_text(OFFERS)
    (tmp_path / "suppliers.csv").write_text(SUPPLIERS)
    return tmp_path


def buy(capsys, sheets, *argv):
    return run(capsys, "buy", "--prices", str(sheets / "offers.csv"), "--suppliers", str(sheets / "suppliers.csv"),
               *argv)


def test_text_is_an_order_list_per_supplier_with_cautions(capsys, sheets):
    code, out, err = buy(capsys, sheets, "--need", "tris=2.2kg", "--need", "nacl=3kg", "--need", "HCl=1L")
    assert code == 0, err
    # By hand (see tests/test_purchase.py): 257.00 EUR, free shipping at Alder Reagents.
    assert "total 257.00 EUR" in out and "Alder Reagents  (goods 257.00 EUR, shipping 0.00 EUR)" in out
    assert "2 × 1 kg" in out and "[offers.csv row 2; reagent]" in out
    assert "Local regulations and your institution's safety rules take precedence" in out


def test_json_keys(capsys, sheets):
    code, out, err = buy(capsys, sheets, "--need", "nacl=2kg", "--json")
    plan = json.loads(out)
    assert code == 0 and {"orders", "total", "currency", "shipping", "leftover"} <= set(plan)
    assert plan["orders"] == [{"supplier": "Alder Reagents", "reagent": "nacl", "reagent_name": "sodium chloride",
                               "pack_size": "1 kg", "pack_g": 1000.0, "pack_price": 4.0, "count": 2, "cost": 8.0,
                               "grade": "", "catalog_number": "", "origin": "offers.csv row 6"}]
    # By hand: 2 × 4 + 15 shipping (below Alder's 200 threshold) = 23 EUR.
    assert (plan["total"], plan["shipping"], plan["currency"], plan["leftover"]) == (23.0, 15.0, "EUR", {"nacl": 0.0})


def test_csv_and_xlsx_order_lists(capsys, sheets):
    code, out, _ = buy(capsys, sheets, "--need", "tris=1kg", "--grade", "tris=molecular biology", "--csv")
    rows = list(csv.DictReader(io.StringIO(out)))
    assert code == 0 and [(r["pack_size"], r["count"], r["grade"]) for r in rows] == [("500 g", "2",
                                                                                       "molecular biology")]
    openpyxl = pytest.importorskip("openpyxl")
    path = sheets / "order.xlsx"
    code, out, _ = buy(capsys, sheets, "--need", "tris=1kg", "--xlsx", str(path))
    assert code == 0 and "order list written" in out
    values = list(openpyxl.load_workbook(path)["orders"].iter_rows(values_only=True))
    assert values[0][:6] == ("supplier", "reagent", "reagent_name", "pack_size", "pack_price", "count")
    assert values[1][0] == "Alder Reagents" and values[1][5] == 1


def test_plan_file_with_recipe_needs(capsys, sheets):
    (sheets / "plan.toml").write_text('offers = ["offers.csv"]\nsuppliers = "suppliers.csv"\n'
                                      'exclude = ["Alder Reagents"]\n[[recipes]]\nname = "wash"\nvolume = "10 L"\n'
                                      'reagents = { nacl = 0.15 }\n')
    code, out, err = run(capsys, "buy", "--plan", str(sheets / "plan.toml"), "--json")
    plan = json.loads(out)
    # 10 L × 0.15 mol/L × 58.44 g/mol (catalog) / purity: under 1 kg, but Birchwood's minimum
    # order of 30 EUR takes 6 packs of 5 EUR; + 20 shipping = 50 EUR.
    assert code == 0, err
    assert plan["orders"][0]["count"] == 6 and plan["total"] == 50.0


@pytest.mark.parametrize("argv, message", [
    (["--need", "tris"], "give each reagent as NAME=AMOUNT"),
    (["--need", "unobtainium=1kg"], "unknown reagent 'unobtainium'"),
    (["--need", "NaCl=1L"], "is a solid; give it by mass"),
    (["--need", "kcl=1kg"], "no offer for potassium chloride"),
    (["--need", "tris=1kg", "--exclude", "Nobody Ltd"], "exclude: no offer comes from 'Nobody Ltd'"),
    (["--need", "tris=1kg", "--grade", "tris"], "expected REAGENT=GRADE"),
    (["--need", "tris=1kg", "--fewer-suppliers", "-3"], "expected a cost per supplier"),
    (["--need", "tris=1kg", "--horizon-months", "3"], "give both the horizon and the shelf life"),
    (["--need", "tris=1kg", "--xlsx", "/no/such/folder/o.xlsx"], "does not exist"),
    (["--need", "tris=1kg", "--xlsx", "order.txt"], "ending in .xlsx"),
    (["--need", "tris=1kg", "--plan", "missing.toml"], "plan file 'missing.toml' not found"),
    ([], "nothing to buy"),
])
def test_bad_input_is_one_line_and_exit_code_2(capsys, sheets, argv, message):
    code, out, err = buy(capsys, sheets, *argv)
    assert code == 2 and message in err and "Traceback" not in err, err
    assert len(err.strip().splitlines()) == 1


def test_no_offers_is_refused(capsys):
    code, _, err = run(capsys, "buy", "--need", "tris=1kg")
    assert code == 2 and "give --prices FILE" in err


def test_compare_prepared_buffers(capsys, tmp_path):
    sheet = tmp_path / "prep.csv"
    sheet.write_text("supplier,reagent,pack_size,pack_price,currency,composition\n"
                     "Birchwood Lab Supply,Saline tablets,10 L,9,EUR,nacl=150mM\n")
    code, out, err = run(capsys, "buy", "--prices", str(sheet), "--compare-prepared", "--json")
    result = json.loads(out)
    assert code == 0, err
    assert result["prepared"][0]["bought_per_l"] == 0.9 and "labour" in result["note"]
    assert set(result["prepared"][0]) >= {"product", "supplier", "bought_per_l", "made_per_l", "verdict"}
    code, out, _ = run(capsys, "buy", "--prices", str(sheet), "--compare-prepared")
    assert "labour, water and any titrant the composition does not list are excluded" in out
    (tmp_path / "plain.csv").write_text(OFFERS)
    code, _, err = run(capsys, "buy", "--prices", str(tmp_path / "plain.csv"), "--compare-prepared")
    assert code == 2 and "the sheets hold no prepared buffer" in err


def test_shelf_life_per_reagent_on_the_command_line(capsys, sheets):
    # The case of tests/test_purchase.py: 154 EUR by hand.
    code, out, err = buy(capsys, sheets, "--need", "tris=1.2kg", "--need", "nacl=1kg", "--horizon-months", "3",
                         "--shelf-life", "tris=1", "--json")
    assert code == 0, err
    assert json.loads(out)["total"] == 154.0 and json.loads(out)["periods"] == {"tris": 3, "nacl": 1}
    code, _, err = buy(capsys, sheets, "--need", "tris=1kg", "--horizon-months", "3", "--shelf-life", "tris=soon")
    assert code == 2 and "expected REAGENT=MONTHS" in err


def test_needs_from_a_saved_recipe_and_a_volume(capsys, sheets, tmp_path, monkeypatch):
    # Case: 20 L of a saved 50 mM Tris recipe needs 0.05 mol/L x 20 L x 121.135 g/mol (Tris base,
    # molar mass from the catalog) / purity = about 121 g of Tris base, as product.
    from catalog import load_catalog
    monkeypatch.setenv("POISE_BOOK", str(tmp_path / "book.sqlite3"))
    code, _, _ = run(capsys, "recipe", "tris", "--ph", "7.4", "--conc", "50mM", "--route", "titrate-base",
                     "--save", "tris assay")
    assert code == 0
    code, out, err = buy(capsys, sheets, "--make", "tris assay=20L", "--json")
    assert code == 0, err
    tris = load_catalog().reagents["tris"]
    expected_g = 0.05 * 20 * tris.molar_mass_g_mol / tris.purity_fraction
    assert json.loads(out)["needs_g"]["tris"] == pytest.approx(expected_g, rel=1e-3)
    code, _, err = buy(capsys, sheets, "--make", "no such recipe=1L")
    assert code == 2 and "no recipe named" in err
    code, _, err = buy(capsys, sheets, "--make", "tris assay")
    assert code == 2 and "NAME=VOLUME" in err


def test_a_plan_file_lists_saved_recipes_as_make_does(capsys, sheets, tmp_path, monkeypatch):
    """A plan's [[recipes]] entry with ``saved`` is the book's recipe × its volume: the same needs
    as --make "tris assay=20L" (one function, selector.purchase.needs_from_saved_recipes)."""
    book = tmp_path / "book.sqlite3"
    monkeypatch.setenv("POISE_BOOK", str(book))
    code, _, _ = run(capsys, "recipe", "tris", "--ph", "7.4", "--conc", "50mM", "--route", "titrate-base",
                     "--save", "tris assay")
    assert code == 0
    code, out, err = buy(capsys, sheets, "--make", "tris assay=20L", "--json")
    assert code == 0, err
    by_make = json.loads(out)["needs_g"]
    monkeypatch.delenv("POISE_BOOK")
    plan = tmp_path / "plan.toml"
    plan.write_text('[[recipes]]\nsaved = "tris assay"\nvolume = "20 L"\n')
    code, out, err = buy(capsys, sheets, "--plan", str(plan), "--book", str(book), "--json")
    assert code == 0, err
    assert json.loads(out)["needs_g"] == pytest.approx(by_make, rel=1e-12)
    plan.write_text('[[recipes]]\nsaved = "tris assay"\nvolume = "20 L"\nreagents = { nacl = 0.15 }\n')
    code, _, err = buy(capsys, sheets, "--plan", str(plan), "--book", str(book))
    assert code == 2 and "recipes[1]: give reagents or saved (the name of a recipe in the book), not both" in err
    plan.write_text('[[recipes]]\nsaved = "tris assay"\nvolume = "20 furlongs"\n')
    code, _, err = buy(capsys, sheets, "--plan", str(plan), "--book", str(book))
    assert code == 2 and "unknown unit 'furlongs' in plan.toml: recipes[1]: saved tris assay" in err
    assert len(err.strip().splitlines()) == 1


def test_packs_that_exactly_cover_a_liquid_need_leave_nothing_over(capsys, sheets):
    # Case: 3 L of triethanolamine from 1 L packs (invented offer): three packs cover it exactly,
    # so the leftover is 0, not the −4.5e-13 g of floating-point noise the volume → mass →
    # volume round trip through the density gives.  No published value: exact arithmetic.
    (sheets / "offers.csv").write_text(OFFERS + "Alder Reagents,triethanolamine,1 L,38,EUR,reagent\n")
    code, out, err = buy(capsys, sheets, "--need", "triethanolamine=3L", "--json")
    assert code == 0, err
    plan = json.loads(out)
    assert plan["leftover"]["triethanolamine"] == 0.0
