"""Supplier offers, sheet dialects, provenance and cost per plate.

Every supplier, price and pack here is invented for the tests (no real supplier or product).
Check values: molar masses are the catalog's (IUPAC atomic weights via molmass); liquid
densities are the catalog's (``density_g_ml`` of reagents.csv, each with its source; HCl's is from memory).
"""


import pytest

from catalog import load_catalog
from selector.errors import InputError
from selector.prices import (
    cost_figures,
    decimal_point,
    demo_price_book,
    parse_price_bytes,
    parse_price_tables,
    parse_rate_bytes,
    parse_supplier_bytes,
    read_price_sheets,
    rounded,
)

OFFER_HEADER = "supplier,reagent,pack_size,pack_price,currency,grade,catalog_number,lead_time_days\n"


def test_an_offer_row_keeps_its_pack_supplier_and_origin():
    data = (OFFER_HEADER + "Alder Reagents,Tris,1 kg,80,EUR,molecular biology,AR-100,5\n"
            "Birchwood Lab Supply,Tris,500 g,30,EUR,,,\n").encode()
    book, report = parse_price_bytes(data, "offers.csv")
    assert report.rows_used == 2 and not report.problems
    # Cheapest per kg: 30 EUR / 0.5 kg = 60 EUR/kg (invented) against 80 EUR/kg.
    assert book.price_per_kg("tris") == pytest.approx(60.0, rel=1e-12)
    assert book.origin("tris") == "offers.csv row 3 (500 g from Birchwood Lab Supply)"
    assert [o.supplier for o in book.offers_for("tris")] == ["Birchwood Lab Supply", "Alder Reagents"]
    first = book.offers_for("tris")[1]
    assert (first.grade, first.catalog_number, first.lead_time_days) == ("molecular biology", "AR-100", 5.0)
    assert book.origin("nacl") == "demo price (catalog, invented)"


def test_the_older_sheet_layout_reads_the_same():
    old = b"reagent,pack_size,pack_price,currency,supplier\nTris,500 g,30,EUR,Birchwood Lab Supply\n"
    book, report = parse_price_bytes(old, "old.csv")
    assert report.rows_used == 1 and book.price_per_kg("tris") == pytest.approx(60.0, rel=1e-12)


@pytest.mark.parametrize("delimiter", [";", "\t"])
def test_semicolon_and_tab_sheets_with_decimal_commas(delimiter):
    """Case: the usual spreadsheet export of much of Europe.  Before: "missing column(s)"."""
    text = delimiter.join(["supplier", "reagent", "pack size", "pack price", "currency"]) + "\n" + \
        delimiter.join(["Alder Reagents", "HEPES", "2,5 kg", "1.250,00", "EUR"]) + "\n"
    book, report = parse_price_bytes(text.encode(), "export.csv")
    assert not report.problems
    # 1250 EUR / 2.5 kg = 500 EUR/kg (invented).
    assert book.price_per_kg("hepes") == pytest.approx(500.0, rel=1e-12)


@pytest.mark.parametrize("text, expected", [("12,50", "12.50"), ("1.250,5", "1250.5"), ("2,5 kg", "2.5 kg"),
                                             ("500 g", "500 g")])
def test_decimal_comma_becomes_a_point(text, expected):
    assert decimal_point(text) == expected


def test_a_liquid_sold_by_volume_uses_its_density():
    """2.5 L of concentrated HCl at 1.18 g/mL (from memory) = 2950 g for 59 EUR (invented):
    20 EUR/kg of the product as bought."""
    book, report = parse_price_bytes((OFFER_HEADER + "Alder Reagents,HCl,2.5 L,59,EUR,,,\n").encode(), "acid.csv")
    assert not report.problems
    assert load_catalog().reagents["hcl"].liquid_density_g_ml == 1.18
    assert book.offers[0].pack_g == pytest.approx(2950.0, rel=1e-12)
    assert book.price_per_kg("hcl") == pytest.approx(20.0, rel=1e-12)


@pytest.mark.parametrize("row, message", [
    ("Alder Reagents,NaCl,1 L,5,EUR,,,", "sodium chloride is a solid; give it by mass"),
    ("Alder Reagents,lactic acid,1 L,5,EUR,,,", "no density recorded for the liquid"),
    ("Alder Reagents,NaCl,1 kg,0,EUR,,,", "must be more than zero"),
    ("Alder Reagents,Tris,1 kg,80,EUR,,,", "duplicate offer: same supplier, reagent, pack size and grade as "
                                           "sheet.csv row 2"),
    ("Alder Reagents,NaCl,1 kg,5,USD,,,", "mixed currencies; give --rates FILE to convert"),
    ("Alder Reagents,NaCl,1 kg,5,EUR,,,-3", "lead time [days] '-3' must be zero or more"),
    ("Alder Reagents,NaCl,1 kg,5,EUR,,,999", "lead time [days] '999' is above 730"),
    ("Alder Reagents,Triss,1 kg,5,EUR,,,", "unknown reagent 'Triss'; did you mean"),
    ("Alder Reagents,NaCl,1 parsec,5,EUR,,,", "unknown unit 'parsec'"),
])
def test_each_offer_message_names_the_row_and_the_rest_is_used(row, message):
    data = (OFFER_HEADER + "Alder Reagents,Tris,1 kg,80,EUR,,,\n" + row + "\n").encode()
    book, report = parse_price_bytes(data, "sheet.csv")
    assert any(p.startswith("sheet.csv row 3: ") and message in p for p in report.problems), report.problems
    assert report.rows_used == 1 and book.price_per_kg("tris") == pytest.approx(80.0)


def test_several_sheets_are_alternatives_and_duplicates_across_sheets_are_reported(tmp_path):
    (tmp_path / "a.csv").write_text(OFFER_HEADER + "Alder Reagents,Tris,1 kg,80,EUR,,,\n")
    (tmp_path / "b.csv").write_text(OFFER_HEADER + "Birchwood Lab Supply,Tris,1 kg,70,EUR,,,\n"
                                    "Alder Reagents,Tris,1 kg,75,EUR,,,\n")
    book, reports = read_price_sheets([tmp_path / "a.csv", tmp_path / "b.csv"])
    assert book.price_per_kg("tris") == pytest.approx(70.0) and len(book.offers) == 2
    assert reports[1].problems == ("b.csv row 3: duplicate offer: same supplier, reagent, pack size and grade as "
                                   "a.csv row 2; row skipped",)
    assert book.label.startswith("a.csv + b.csv (EUR) over demo prices")


def test_xlsx_worksheet_named_or_first(tmp_path):
    openpyxl = pytest.importorskip("openpyxl")
    workbook = openpyxl.Workbook()
    workbook.active.title = "notes"
    workbook.active.append(["nothing here"])
    sheet = workbook.create_sheet("Spring order")
    sheet.append(["supplier", "reagent", "pack_size", "pack_price", "currency"])
    sheet.append(["Alder Reagents", "Tris", "1 kg", 66, "EUR"])
    path = tmp_path / "book.xlsx"
    workbook.save(path)
    book, _ = read_price_sheets([f"{path}:Spring order"])
    assert book.price_per_kg("tris") == pytest.approx(66.0)
    with pytest.raises(InputError, match="missing column"):   # the first worksheet holds notes
        read_price_sheets([path])
    with pytest.raises(InputError, match="no worksheet named 'Autumn'"):
        read_price_sheets([f"{path}:Autumn"])


def test_mixed_currencies_convert_with_a_rates_sheet():
    rates, problems = parse_rate_bytes(b"from_currency,to_currency,rate\nUSD,EUR,0.5\nGBP,EUR,-1\n", "rates.csv")
    assert problems == ["rates.csv row 3: rate '-1' must be more than zero; row skipped"]
    data = (OFFER_HEADER + "Alder Reagents,Tris,1 kg,80,EUR,,,\nCedar Chemicals,NaCl,1 kg,10,USD,,,\n"
            "Cedar Chemicals,KCl,1 kg,10,GBP,,,\n").encode()
    book, reports = parse_price_tables([(data, "mixed.csv")], rates=rates)
    # 10 USD at an invented 0.5 EUR per USD = 5 EUR/kg.
    assert book.currency == "EUR" and book.price_per_kg("nacl") == pytest.approx(5.0)
    assert "converted from USD at 0.5 (rates.csv row 2)" in book.origin("nacl")
    assert "the rates sheet has no rate for it" in reports[0].problems[0]


def test_rates_into_two_currencies_are_refused():
    with pytest.raises(InputError, match="every row must convert into one currency"):
        parse_rate_bytes(b"from_currency,to_currency,rate\nUSD,EUR,0.5\nEUR,USD,2\n", "rates.csv")


def test_suppliers_sheet_terms_and_messages():
    data = ("supplier;shipping;free_shipping_over;min_order\nAlder Reagents;12,50;200;50\n"
            "Birchwood Lab Supply;0;;\n;5;;\nAlder Reagents;3;;\nCedar Chemicals;cheap;;\n").encode()
    suppliers, problems = parse_supplier_bytes(data, "suppliers.csv", "EUR")
    alder = suppliers["alder reagents"]
    assert (alder.shipping, alder.free_shipping_over, alder.min_order) == (12.5, 200.0, 50.0)
    assert suppliers["birchwood lab supply"].free_shipping_over is None
    assert problems == ["suppliers.csv row 4: no supplier named; row skipped",
                        "suppliers.csv row 5: supplier 'Alder Reagents' already given in suppliers.csv row 2; "
                        "row skipped",
                        "suppliers.csv row 6: shipping 'cheap' is not a number; row skipped"]


def test_cost_per_litre_batch_and_plate():
    # 96 wells of 200 uL = 19.2 mL per plate; at 2.5 EUR/L (invented) 0.048 EUR per plate.
    figures = cost_figures(2.5, 2.0, wells=96, well_volume_l=200e-6)
    assert figures == {"cost_per_l": 2.5, "cost_per_batch": 5.0, "cost_per_plate": 0.048, "plate_volume_l": 0.0192,
                       "plates_volume_l": None, "cost_for_plates": None}
    # 10 such plates: 192 mL, 0.48 EUR.
    figures = cost_figures(2.5, 2.0, plates=10, wells=96, well_volume_l=200e-6)
    assert (figures["plates_volume_l"], figures["cost_for_plates"]) == (0.192, 0.48)
    # --plates alone shares the batch: 2 L over 4 plates = 0.5 L, 1.25 EUR each.
    assert cost_figures(2.5, 2.0, plates=4)["cost_per_plate"] == 1.25
    assert cost_figures(None, 2.0)["cost_per_plate"] is None


def test_csv_numbers_are_rounded_sensibly():
    assert rounded(0.049999999999998976) == 0.05 and rounded(None) is None and rounded(0.0) == 0.0


def test_demo_book_says_where_each_price_comes_from():
    book = demo_price_book()
    assert book.provenance(["tris"]) == {"tris": "demo price (catalog, invented)"}
    assert book.offers == ()


def test_unknown_names_are_summarised_not_listed():
    rows = "".join(f"Alder Reagents,unlisted product {i},500 g,12.5,EUR,,,\n" for i in range(2_000))
    _, report = parse_price_bytes((OFFER_HEADER + rows).encode(), "big.csv")
    assert len(report.problems) == 11 and "1990 more rows name reagents not in the catalog" in report.problems[-1]


def test_docstring_examples():
    """decimal_point and money_text worked examples (exact by construction, no source needed)."""
    import doctest

    import selector.prices

    result = doctest.testmod(selector.prices)
    assert result.attempted >= 2 and result.failed == 0


# --- tablets, premixes and concentrates: the volume a pack makes ----------------------------------

MAKES_HEADER = "supplier,reagent,pack_size,pack_price,currency,composition,makes_volume\n"


def test_a_pack_of_tablets_or_concentrate_prices_the_buffer_it_makes():
    """Invented packs: 100 saline tablets (each for 100 mL, so 10 L a pack) at 45 EUR = 4.5 EUR/L;
    500 mL of a 10x concentrate making 5 L at 12 EUR = 2.4 EUR/L; a 1 L ready-made bottle at
    4 EUR = 4 EUR/L (its pack size is the volume, as before).  Composition: the working buffer."""
    from selector.purchase import buy_or_make

    rows = ("Birchwood Lab Supply,Saline tablets,100 tablets,45,EUR,nacl=150mM,10 L\n"
            "Birchwood Lab Supply,Saline 10x,500 mL,12,EUR,nacl=150mM,5 L\n"
            "Birchwood Lab Supply,Saline ready,1 L,4,EUR,nacl=150mM,\n")
    book, report = parse_price_bytes((MAKES_HEADER + rows).encode(), "prep.csv")
    assert not report.problems
    assert [(o.pack_size, o.volume_l, o.price_per_l) for o in book.prepared] == [
        ("100 tablets", 10.0, 4.5), ("500 mL", 5.0, 2.4), ("1 L", 1.0, 4.0)]
    assert [r.bought_per_l for r in buy_or_make(book)] == [4.5, 2.4, 4.0]


@pytest.mark.parametrize("row, message", [
    ("Birchwood Lab Supply,Saline tablets,100 tablets,45,EUR,nacl=150mM,", "unknown unit 'tablets' in pack size of "
     "a prepared buffer (the volume of buffer it makes; for tablets, premixes or concentrates give it as makes_volume)"),
    ("Birchwood Lab Supply,Saline tablets,100 tablets,45,EUR,nacl=150mM,10 tablets", "unknown unit 'tablets' in "
     "makes_volume"),
    ("Birchwood Lab Supply,Saline tablets,,45,EUR,nacl=150mM,10 L", "no pack size; say what a pack is"),
    ("Alder Reagents,NaCl,1 kg,4,EUR,,2 L", "makes_volume '2 L' is for prepared buffers (a row with a composition)"),
])
def test_makes_volume_rows_report_their_problem(row, message):
    _, report = parse_price_bytes((MAKES_HEADER + row + "\n").encode(), "prep.csv")
    assert len(report.problems) == 1 and report.problems[0].startswith("prep.csv row 2: "), report.problems
    assert message in report.problems[0] and report.rows_used == 0
