"""Costs in the command outputs: the origin of each price, the plate options, sheets and rates
from the command line.  Suppliers and prices are invented; the spec is the README's."""

import csv
import io
import json
import re

import pytest
from cli_helpers import run

SPEC = ("--ph", "7.4", "--temperature", "37", "--capacity", "10")
OFFERS = "supplier,reagent,pack_size,pack_price,currency\nAlder Reagents,triethanolamine,1 L,9,EUR\n"


def test_optimise_json_names_each_price_origin(capsys, tmp_path):
    sheet = tmp_path / "offers.csv"
    sheet.write_text(OFFERS)
    code, out, err = run(capsys, "optimise", *SPEC, "--prices", str(sheet), "--json")
    result = json.loads(out)
    assert code == 0, err
    origins = result["costs"]["price_origins"]
    assert set(origins) == set(result["reagents"])
    if "triethanolamine" in origins:
        assert origins["triethanolamine"] == "offers.csv row 2 (1 L from Alder Reagents)"
    assert all(o == "demo price (catalog, invented)" for r, o in origins.items() if r != "triethanolamine")


def test_plates_compute_the_volume_and_the_cost_per_plate(capsys):
    """10 plates × 96 wells × 200 µL = 192 mL to make; one plate takes 19.2 mL."""
    code, out, err = run(capsys, "optimise", *SPEC, "--plates", "10", "--wells", "96", "--well-volume", "200uL",
                         "--json")
    result = json.loads(out)
    assert code == 0, err
    assert result["volume_l"] == pytest.approx(0.192, rel=1e-12)
    assert result["costs"]["plate_volume_l"] == pytest.approx(0.0192, rel=1e-12)
    assert result["costs"]["cost_per_plate"] == pytest.approx(result["cost_per_l"] * 0.0192, rel=1e-5)
    assert result["cost_per_plate"] == pytest.approx(result["costs"]["cost_per_plate"], rel=1e-5)
    code, out, _ = run(capsys, "optimise", *SPEC, "--wells", "96", "--well-volume", "200uL")
    assert "Per plate (19.2 mL)" in out and "Prices: demo price (catalog, invented) for every reagent" in out


def test_rank_csv_numbers_are_rounded_and_name_their_prices(capsys):
    code, out, err = run(capsys, "rank", *SPEC, "--csv", "--wells", "384", "--well-volume", "50uL")
    assert code == 0, err
    rows = list(csv.DictReader(io.StringIO(out)))
    numbers = [float(c) for r in rows for c in r.values() if re.fullmatch(r"-?\d+\.\d+(e-?\d+)?", c or "")]
    assert numbers and all(float(f"{n:.6g}") == n for n in numbers)    # 6 significant figures at most
    feasible = [r for r in rows if r["feasible"] == "True"]
    assert feasible[0]["price_origins"] and feasible[0]["cost_per_plate"]


def test_several_sheets_and_rates_on_the_command_line(capsys, tmp_path):
    (tmp_path / "a.csv").write_text(OFFERS)
    (tmp_path / "b.csv").write_text("supplier,reagent,pack_size,pack_price,currency\nCedar Chemicals,HCl,1 L,10,USD\n")
    (tmp_path / "rates.csv").write_text("from_currency,to_currency,rate\nUSD,EUR,0.5\n")
    code, out, err = run(capsys, "buy", "--need", "HCl=1L", "--need", "triethanolamine=1L", "--prices",
                         str(tmp_path / "a.csv"), "--prices", str(tmp_path / "b.csv"), "--rates",
                         str(tmp_path / "rates.csv"), "--json")
    plan = json.loads(out)
    # By hand: 9 EUR (Alder) + 10 USD × 0.5 = 5 EUR (Cedar), no shipping terms given: 14 EUR.
    assert code == 0, err
    assert plan["total"] == pytest.approx(14.0, abs=1e-9) and plan["currency"] == "EUR"
    code, _, err = run(capsys, "buy", "--need", "HCl=1L", "--prices", str(tmp_path / "b.csv"), "--prices",
                       str(tmp_path / "a.csv"))
    # Without rates: one row in each currency, the first read (USD) is the book's; the EUR row is reported.
    assert code == 0 and "a.csv row 2: currency 'EUR' differs from the sheet's 'USD'" in err


@pytest.mark.parametrize("argv, message", [
    (["--rates", "rates.csv"], "--rates converts the currencies of price sheets; give --prices FILE too"),
    (["--wells", "96"], "--wells and --well-volume go together"),
    (["--wells", "96", "--well-volume", "200uL", "--volume", "1L"], "not both"),
    (["--wells", "many", "--well-volume", "200uL"], "--wells: expected a whole number from 1 to 1536"),
    (["--wells", "96", "--well-volume", "200 furlongs"], "unknown unit 'furlongs'"),
])
def test_price_and_plate_options_refused_in_one_line(capsys, argv, message):
    code, _, err = run(capsys, "optimise", *SPEC, *argv)
    assert code == 2 and message in err and len(err.strip().splitlines()) == 1, err


def test_plate_fields_of_a_spec_file_price_the_plate_as_the_options_do(capsys, tmp_path):
    """A spec file's ``plates``, ``wells`` and ``well_volume_l`` (with a unit, as --well-volume
    takes it) give the same volume and cost per plate as the options: 5 × 384 × 50 µL = 96 mL."""
    spec = tmp_path / "plates.toml"
    spec.write_text('ph = 7.4\ntemperature_c = 37\ncapacity_mol_l_per_ph = 0.01\nplates = 5\nwells = 384\n'
                    'well_volume_l = "50uL"\n')
    code, out, err = run(capsys, "optimise", "--spec", str(spec), "--json")
    from_file = json.loads(out)
    assert code == 0, err
    code, out, err = run(capsys, "optimise", *SPEC, "--plates", "5", "--wells", "384", "--well-volume", "50uL",
                         "--json")
    from_options = json.loads(out)
    assert code == 0, err
    assert from_file["volume_l"] == pytest.approx(0.096, rel=1e-12)
    assert from_file["costs"] == from_options["costs"]
    assert from_file["costs"]["plate_volume_l"] == pytest.approx(0.0192, rel=1e-12)
    # The result's own per-plate cost (batch over plates) agrees with the costs block.
    assert from_file["cost_per_plate"] == pytest.approx(from_file["costs"]["cost_per_plate"], rel=1e-5)


def test_wells_alone_quote_one_plate(capsys):
    # --wells 96 --well-volume 200uL without --plates: the volume of one plate, 19.2 mL, is made.
    code, out, err = run(capsys, "rank", *SPEC, "--wells", "96", "--well-volume", "200uL", "--json")
    rows = json.loads(out)
    assert code == 0, err
    feasible = [r for r in rows if r["feasible"]]
    assert feasible[0]["costs"]["plate_volume_l"] == pytest.approx(0.0192, rel=1e-12)
    assert feasible[0]["cost_per_plate"] == pytest.approx(feasible[0]["costs"]["cost_per_plate"], rel=1e-5)


@pytest.mark.parametrize("keys, message", [
    ('wells = 96\n', "wells: give wells and well_volume_l together (e.g. 96 wells of 200uL) or neither"),
    ('wells = 96\nwell_volume_l = "200uL"\nvolume_l = 1\n', "volume_l: give volume_l or wells with well_volume_l "
                                                            "(the volume is then computed: 0.0192 L), not both"),
    ('wells = 2000\nwell_volume_l = "200uL"\n', "wells: expected a whole number <= 1536, got 2000"),
    ('wells = 96\nwell_volume_l = "200 furlongs"\n', "well_volume_l: unknown unit 'furlongs'"),
    ('wells = 96\nwell_volume_l = 5\n', "well_volume_l: expected <= 0.1, got 5"),
    ('wells = 96.5\nwell_volume_l = "200uL"\n', "wells: expected a whole number >= 1, got 96.5"),
])
def test_bad_plate_keys_of_a_spec_file_in_one_line(capsys, tmp_path, keys, message):
    spec = tmp_path / "bad.toml"
    spec.write_text("ph = 7.4\n" + keys)
    code, _, err = run(capsys, "rank", "--spec", str(spec))
    assert code == 2 and message in err and len(err.strip().splitlines()) == 1, err
