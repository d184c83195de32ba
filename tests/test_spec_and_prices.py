"""Specs and price sheets: one test per message, round trips, and costs.

Check values: KH2PO4 136.086 g/mol (IUPAC atomic weights via molmass, as in the catalog);
prices are the catalog's invented demo prices or the invented sheets below.
"""


import argparse
import dataclasses
import doctest

import pytest

import selector.spec
from selector.cli.spec_options import add_spec_arguments, spec_from_args
from selector.errors import InputError
from selector.prices import (
    demo_price_book,
    parse_price_csv,
    parse_price_xlsx,
    read_price_sheet,
)
from selector.spec import (
    BufferSpec,
    SpecError,
    Written,
    make_spec,
    parse_spec,
    read_spec,
    spec_to_json,
    spec_to_toml,
    write_spec,
)


@pytest.mark.parametrize("fields, message", [
    ({}, "ph: required"),
    ({"ph": 15}, "ph: expected <= 14"),
    ({"ph": "seven"}, "ph: expected a number"),
    ({"ph": 7, "temperature_c": 120}, "temperature_c: expected <= 95"),
    ({"ph": 7, "volume_l": 0}, "volume_l: expected >= 1e-06"),
    ({"ph": 7, "buffer_conc_mol_l": -0.01}, "buffer_conc_mol_l: expected > 0"),
    ({"ph": 7, "colour": "blue"}, "colour: unknown field"),
    ({"ph": 7, "salt": "LiCl"}, "salt: expected one of NaCl, KCl"),
    ({"ph": 7, "counter_ion": "Cs"}, "counter_ion: expected one of Na, K, none, any"),
    ({"ph": 7, "loads": [{"kind": "sugar", "conc_mol_l": 0.01}]}, "loads[0].kind: expected acid or base"),
    ({"ph": 7, "loads": [{"kind": "acid"}]}, "loads[0].conc_mol_l: required"),
    ({"ph": 7, "metals": [{"metal": "Fe", "max_bound_fraction": 0.1}]}, "metals[0].metal: expected one of"),
    ({"ph": 7, "metals": [{"metal": "Ca", "max_bound_fraction": 1.0}]}, "max_bound_fraction: expected < 1, got 1"),
    ({"ph": 7, "loads": [{"kind": "acid", "conc_mol_l": 0.01, "colour": "red"}]}, "loads[0].colour: unknown field"),
    ({"ph": 7, "plates": "many"}, "plates: expected a whole number >= 1, got 'many'"),
    ({"ph": 7, "exclude": ["smelly"]}, "exclude: unknown flag 'smelly'"),
    ({"ph": 7, "in_stock": ["unobtainium"]}, "in_stock: unknown reagent 'unobtainium'"),
    ({"ph": 7, "plates": 0}, "plates: expected a whole number >= 1"),
    ({"ph": 7, "temperature_min_c": 20}, "give both ends of the window"),
    ({"ph": 7, "temperature_min_c": 40, "temperature_max_c": 20}, "temperature_min_c: 40 is above"),
    ({"ph": 7, "osmolarity_min_osmol_l": 0.4, "osmolarity_max_osmol_l": 0.3}, "osmolarity_min_osmol_l: 0.4 is above"),
    ({"ph": 7, "ionic_strength_min_mol_l": 0.2, "ionic_strength_max_mol_l": 0.1}, "is above ionic_strength_max"),
    ({"ph": 7, "ionic_strength_mol_l": 0.1, "ionic_strength_max_mol_l": 0.2}, "give a target or bounds"),
    ({"ph": 7, "fixed_amounts": {"unobtainium": 0.1}}, "fixed_amounts: unknown reagent"),
    ({"ph": 7, "allow_hazardous": "yes"}, "allow_hazardous: expected true or false"),
    ({"ph": True}, "ph: expected a number, got True"),
    ({"ph": 7, "temperature_c": True}, "temperature_c: expected a number, got True"),
    ({"ph": 7, "loads": [{"kind": "acid", "conc_mol_l": True}]}, "loads[0].conc_mol_l: expected a number"),
    ({"ph": 7, "loads": 5}, "loads: expected a list"),
    ({"ph": 7, "loads": ["acid"]}, "loads[0]: expected a table of fields"),
    ({"ph": 7, "metals": [1]}, "metals[0]: expected a table of fields"),
    ({"ph": 7, "exclude": 3}, "exclude: expected a list"),
    ({"ph": 7, "in_stock": [5]}, "in_stock[0]: expected a name"),
    ({"ph": 7, "fixed_amounts": [1, 2]}, "fixed_amounts: expected a table of reagent = mol/L"),
    ({"ph": 7, "volume_l": 1e-12}, "volume_l: expected >= 1e-06"),
])
def test_each_bad_field_has_its_message(fields, message):
    with pytest.raises(SpecError) as caught:
        make_spec(**fields)
    assert message in str(caught.value)


def test_a_lone_name_counts_as_a_list():
    assert make_spec(ph=8, exclude="primary_amine", in_stock="Tris").exclude == ("primary_amine",)


def test_non_utf8_files_are_refused(tmp_path):
    bad = tmp_path / "spec.toml"
    bad.write_bytes(b"\xff\xfe\x00x")
    with pytest.raises(SpecError, match="not UTF-8"):
        read_spec(bad)
    sheet = tmp_path / "prices.csv"
    sheet.write_bytes(b"\xff\xfe\x00x")
    with pytest.raises(InputError, match="not UTF-8"):
        read_price_sheet(sheet)


def test_every_problem_reported_at_once():
    with pytest.raises(SpecError) as caught:
        make_spec(ph=99, salt="LiCl", counter_ion="Cs")
    assert len(caught.value.problems) == 3


def test_spec_round_trips_through_toml_and_json(tmp_path):
    spec = make_spec(ph=7.4, temperature_c=37, capacity_mol_l_per_ph=0.01, loads=[{"kind": "acid", "conc_mol_l": 0.002}],
                     metals=[{"metal": "Ca", "max_bound_fraction": 0.05}], exclude=["primary_amine"],
                     in_stock=["Tris", "NaCl"], fixed_amounts={"NaCl": 0.15}, temperature_min_c=20,
                     temperature_max_c=37, plates=40)
    assert parse_spec(spec_to_toml(spec)) == spec
    assert parse_spec(spec_to_json(spec), "json") == spec
    for name in ("spec.toml", "spec.json"):
        write_spec(spec, tmp_path / name)
        assert read_spec(tmp_path / name) == spec


def test_spec_file_errors(tmp_path):
    with pytest.raises(InputError, match="not found"):
        read_spec(tmp_path / "missing.toml")
    bad = tmp_path / "bad.toml"
    bad.write_text("ph = = 7\n")
    with pytest.raises(SpecError, match="cannot read it as TOML"):
        read_spec(bad)


def options(*argv: str) -> argparse.Namespace:
    parser = argparse.ArgumentParser()
    add_spec_arguments(parser)
    return parser.parse_args(list(argv))


@pytest.mark.parametrize("argv, message", [
    (["--ph", "17"], "--ph: expected <= 14, got 17"),
    (["--ph", "seven"], "--ph: expected a number, got 'seven'"),
    ([], "--ph: required"),
    (["--ph", "7", "--temperature", "120"], "--temperature: expected <= 95 °C, got 120 °C"),
    (["--ph", "7", "--ionic-strength", "6"], "--ionic-strength: expected <= 5 mol/L, got 6 mol/L"),
    (["--ph", "7", "--ionic-strength", "0.1", "--ionic-strength-max", "0.2"],
     "--ionic-strength: give a target or bounds (--ionic-strength-max), not both"),
    # --capacity is in mM per pH: the bound (5 mol/L per pH) is shown in the user's unit.
    (["--ph", "7", "--capacity", "6000"], "--capacity: expected <= 5000 mM per pH, got 6000 mM per pH"),
    (["--ph", "7", "--load", "sugar:5"], "--load sugar:5: expected acid or base, got 'sugar'"),
    (["--ph", "7", "--load", "acid:-5"], "--load acid:-5: expected > 0 mM, got -5 mM"),
    (["--ph", "7", "--load", "acid"], "--load: expected ACID_OR_BASE:mM"),
    (["--ph", "7", "--metal", "Ca:1"], "--metal Ca:1: expected < 1, got 1"),
    (["--ph", "7", "--metal", "Fe:0.1"], "--metal Fe:0.1: expected one of Ca"),
    (["--ph", "7", "--salt", "LiCl"], "--salt: expected one of NaCl, KCl, got 'LiCl'"),
    (["--ph", "7", "--exclude", "smelly"], "--exclude: unknown flag 'smelly'"),
    (["--ph", "7", "--in-stock", "unobtainium"], "--in-stock: unknown reagent 'unobtainium'"),
    (["--ph", "7", "--plates", "two"], "--plates: expected a whole number >= 1, got 'two'"),
    (["--ph", "7", "--volume", "three buckets"], "cannot read --volume 'three buckets'"),
])
def test_option_messages_name_the_option(argv, message):
    with pytest.raises(SpecError) as caught:
        spec_from_args(options(*argv))
    assert message in str(caught.value)
    assert "_mol_l" not in str(caught.value) and "ph_c" not in str(caught.value)


def test_options_read_like_the_file_fields():
    spec = spec_from_args(options("--ph", "7.4", "--temperature", "37", "--capacity", "10", "--load", "acid:2",
                                  "--metal", "ca:0.05", "--counter-ion", "K", "--plates", "40"))
    assert spec == make_spec(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.01,
                             loads=[{"kind": "acid", "conc_mol_l": 0.002}],
                             metals=[{"metal": "Ca", "max_bound_fraction": 0.05}], counter_ion="K", plates=40)
    assert spec.salt == "KCl"   # the salt follows a potassium counter-ion unless one is named


def test_file_keys_and_options_are_reported_together(tmp_path):
    path = tmp_path / "spec.toml"
    path.write_text('ph = 7.0\nionic_strength_mol_l = 9\nexclude = "primary_amine"\n')
    with pytest.raises(SpecError) as caught:
        spec_from_args(options("--spec", str(path), "--temperature", "-5", "--exclude", "smelly"))
    problems = caught.value.problems
    assert any(p.startswith("ionic_strength_mol_l: expected <= 5") for p in problems), problems
    assert any(p.startswith("--temperature: expected >= 0 °C") for p in problems), problems
    assert any(p.startswith("--exclude: unknown flag 'smelly'") for p in problems), problems
    spec = spec_from_args(options("--spec", str(path), "--ionic-strength", "0.1", "--exclude", "phosphate"))
    assert spec.ionic_strength_mol_l == 0.1 and spec.exclude == ("primary_amine", "phosphate")


def test_spec_file_messages_name_the_file_keys():
    with pytest.raises(SpecError) as caught:
        parse_spec('ph = 7\nionic_strength_max_mol_l = 0\n[[loads]]\nkind = "acid"\nconc_mol_l = 3\n')
    assert caught.value.problems == ["ionic_strength_max_mol_l: expected > 0, got 0",
                                     "loads[0].conc_mol_l: expected <= 2, got 3"]


def test_written_names_and_units_the_field():
    with pytest.raises(SpecError, match=r"buffer \(mM\): expected > 0 mM, got 0 mM"):
        make_spec({"ph": 7, "buffer_conc_mol_l": "0"},
                  written={"buffer_conc_mol_l": Written("buffer (mM)", 1000.0, "mM")})
    assert make_spec({"ph": 7, "buffer_conc_mol_l": "50"},
                     written={"buffer_conc_mol_l": Written("buffer (mM)", 1000.0, "mM")}).buffer_conc_mol_l == 0.05


def test_the_record_checks_itself():
    with pytest.raises(SpecError, match="ph: expected <= 14, got 99"):
        BufferSpec(ph=99)
    spec = make_spec(ph=7, exclude=["primary_amine"])
    with pytest.raises(SpecError, match="tolerance_ph: expected > 0"):
        dataclasses.replace(spec, tolerance_ph=0.0)
    with pytest.raises(dataclasses.FrozenInstanceError):
        spec.ph = 8.0  # type: ignore[misc]
    assert BufferSpec(ph=7).ph == 7.0 and isinstance(BufferSpec(ph=7).ph, float)


def test_cross_checks_wait_for_their_own_fields():
    # A bad end of the window is reported once, not again as "give both ends".
    with pytest.raises(SpecError) as caught:
        make_spec(ph=7, temperature_min_c=-3, temperature_max_c=30)
    assert caught.value.problems == ["temperature_min_c: expected >= 0, got -3"]


def test_reagent_names_resolve_in_the_catalog_passed_in(shipped_catalog):
    assert make_spec(ph=7, in_stock=["Tris"], catalog=shipped_catalog).in_stock == ("tris",)
    without_tris = dataclasses.replace(shipped_catalog, reagent_names={
        k: v for k, v in shipped_catalog.reagent_names.items() if v != "tris"})
    with pytest.raises(SpecError, match="in_stock: unknown reagent 'Tris'"):
        make_spec(ph=7, in_stock=["Tris"], catalog=without_tris)


def test_toml_quotes_keys_that_need_it():
    spec = BufferSpec(ph=7.0, fixed_amounts=(("reagent one", 0.1),))
    assert '"reagent one" = 0.1' in spec_to_toml(spec)


SHEET_HEADER = "reagent,pack_size,pack_price,currency,supplier\n"


@pytest.mark.parametrize("row, message", [
    (",1 kg,5,EUR,A", "no reagent named"),
    ("unobtainium,1 kg,5,EUR,A", "unknown reagent 'unobtainium'"),
    ("NaCl,1 L,5,EUR,A", "volumes need a density"),
    ("NaCl,1 furlong,5,EUR,A", "unknown unit 'furlong'"),
    ("NaCl,-1 kg,5,EUR,A", "pack size '-1 kg' is negative"),
    ("NaCl,1 kg,-5,EUR,A", "must be more than zero"),
    ("NaCl,1 kg,0,EUR,A", "must be more than zero"),
    ("NaCl,1 kg,cheap,EUR,A", "is not a number"),
    ("NaCl,1 kg,nan,EUR,A", "is not a finite number"),
])
def test_each_bad_price_row_has_its_message_and_the_rest_is_used(row, message):
    text = SHEET_HEADER + "Tris,1 kg,80,EUR,A\n" + row + "\n"
    book, report = parse_price_csv(text)
    assert any(message in p and "row 3" in p for p in report.problems), report.problems
    assert book.price_per_kg("tris") == pytest.approx(80.0)
    assert report.rows_used == 1


def test_mixed_currencies_reported_and_skipped():
    text = SHEET_HEADER + "Tris,1 kg,80,EUR,A\nHEPES,100 g,30,EUR,A\nNaCl,1 kg,2,USD,B\n"
    book, report = parse_price_csv(text)
    assert report.currency == "EUR"
    assert any("mixed currencies" in p for p in report.problems)
    assert book.price_per_kg("nacl") == demo_price_book().price_per_kg("nacl")


def test_missing_column_is_one_message():
    with pytest.raises(InputError, match="missing column"):
        parse_price_csv("reagent,price\nTris,5\n")


def test_cheapest_pack_wins_and_costs_follow():
    text = SHEET_HEADER + "KH2PO4,500 g,30,EUR,A\nKH2PO4,5 kg,200,EUR,B\n"
    book, report = parse_price_csv(text)
    assert not report.problems
    assert book.price_per_kg("kh2po4") == pytest.approx(40.0)
    # 0.1 mol/L KH2PO4 in 1 L = 13.6086 g / purity 0.995 at 40 EUR/kg (invented prices).
    assert book.cost({"kh2po4": 0.1}, 1.0) == pytest.approx(13.6086 / 0.995 * 0.040, rel=1e-4)


def test_xlsx_sheet_and_bad_workbook(tmp_path):
    openpyxl = pytest.importorskip("openpyxl")
    workbook = openpyxl.Workbook()
    sheet = workbook.active
    for row in (["reagent", "pack_size", "pack_price", "currency", "supplier"], ["Tris", "1 kg", 70, "EUR", "A"]):
        sheet.append(row)
    path = tmp_path / "prices.xlsx"
    workbook.save(path)
    book, report = read_price_sheet(path)
    assert book.price_per_kg("tris") == pytest.approx(70.0) and not report.problems
    with pytest.raises(InputError, match="cannot read it as an XLSX"):
        parse_price_xlsx(b"not a workbook")
    with pytest.raises(InputError, match="expected a .csv or .xlsx"):
        (tmp_path / "prices.txt").write_text("x")
        read_price_sheet(tmp_path / "prices.txt")


@pytest.mark.parametrize("value", [0.015, 0.0333, 0.1, 1e-06, 2e-06, 0.0123, 0.123456789, 0.002])
@pytest.mark.parametrize("per_unit", [1000.0, 1e6])
def test_a_number_in_the_users_unit_reads_back_exactly(value, per_unit):
    way = Written("amount", per_unit)
    assert way.to_field(way.to_user(value)) == value
    assert Written("capacity", 1000.0).to_field(15.0) == 0.015


def test_docstring_examples():
    result = doctest.testmod(selector.spec)
    assert result.attempted > 0 and result.failed == 0
