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
