"""`poise series`, `poise span` and `poise plate` from the command line: JSON keys, text,
the worklist file, and bad input (one line, exit code 2).  The chemistry is checked in
tests/test_designs.py; the specs here are invented."""

from __future__ import annotations

import csv
import json

import pytest
from cli_helpers import run

from selector.cli.plate import PLATE_SIZES
from selector.designs.plate import PLATE_FORMATS
from selector.safety import SAFETY_NOTICE


def test_series_json_keys(capsys):
    code, out, err = run(capsys, "series", "--ph", "7.0:7.5:0.5", "--conc", "20mM", "--ionic-strength", "0.1",
                         "--max-systems", "1", "--json")
    assert code == 0, err
    data = json.loads(out)
    assert "members" in data and "mixing_plan" in data
    for member in data["members"]:
        for key in ("target_ph", "composition_mol_l", "ionic_strength_mol_l", "verified_ph", "recipe"):
            assert key in member
    assert [m["target_ph"] for m in data["members"]] == [7.0, 7.5]


def test_series_text_has_members_plan_and_notice(capsys):
    code, out, _ = run(capsys, "series", "--ph", "7.0:7.5:0.5", "--conc", "20mM", "--ionic-strength", "150mM",
                       "--max-systems", "1")
    assert code == 0
    assert "pH series at 25 °C, I = 150 mM" in out and "Mixing plan from shared stocks" in out
    assert "Cautions:" in out and SAFETY_NOTICE in out


def test_series_infeasible_exits_2_in_words(capsys):
    code, out, err = run(capsys, "series", "--ph", "6.5:7.5:0.5", "--conc", "100mM", "--ionic-strength", "0.05",
                         "--max-systems", "1", "--in-stock", "nah2po4", "--in-stock", "na2hpo4",
                         "--in-stock", "nacl", "--json")
    assert code == 2 and "Traceback" not in err
    assert "buffer alone" in err and err.count("\n") == 1
    assert json.loads(out)["status"] == "infeasible"


def test_span_json_keys(capsys):
    code, out, err = run(capsys, "span", "--ph", "6.0:7.0:0.5", "--capacity", "10", "--max-systems", "1", "--json")
    assert code == 0, err
    data = json.loads(out)
    for key in ("composition_mol_l", "titrant", "table", "min_capacity_mol_l_per_ph"):
        assert key in data
    assert all({"ph", "titrant_mol_l"} <= set(row) for row in data["table"])
    assert [row["ph"] for row in data["table"]] == [6.0, 6.5, 7.0]


def test_plate_json_keys_and_worklist_file(capsys, tmp_path):
    worklist = tmp_path / "worklist.csv"
    code, out, err = run(capsys, "plate", "--ph", "6.5:7.0:0.5", "--ionic-strength", "0.1:0.2:0.1", "--conc", "50mM",
                         "--well-volume", "200uL", "--min-pipette", "2uL", "--dead-volume", "0uL",
                         "--worklist", str(worklist), "--json")
    assert code == 0, err
    data = json.loads(out)
    for stock in data["stocks"]:
        assert {"name", "composition_mol_l", "volume_ml"} <= set(stock)
    for well in data["wells"]:
        assert {"well", "target_ph", "target_ionic_strength_mol_l", "volumes_ul", "verified_ph"} <= set(well)
        assert all(v == 0 or v >= 2.0 for v in well["volumes_ul"].values())
    rows = list(csv.DictReader(worklist.open(encoding="utf-8")))
    assert list(rows[0]) == ["source", "destination well", "volume_ul"]
    assert {r["destination well"] for r in rows} == {"A1", "A2", "A3", "A4"}


def test_plate_text_has_map_and_notice(capsys):
    code, out, _ = run(capsys, "plate", "--ph", "7.0", "--ionic-strength", "0.1:0.2:0.1", "--conc", "20mM",
                       "--max-systems", "1")
    assert code == 0
    assert "Plate map" in out and "row by row from A1" in out and "Worklist:" in out
    assert SAFETY_NOTICE in out


def test_plate_sizes_match_the_formats():
    assert PLATE_SIZES == tuple(PLATE_FORMATS)


@pytest.mark.parametrize("argv, words", [
    (["series", "--ph", "8:6:0.5", "--conc", "50mM", "--ionic-strength", "0.1"], "high to low"),
    (["series", "--ph", "6:8", "--conc", "50mM", "--ionic-strength", "0.1"], "FROM:TO:STEP"),
    (["series", "--ph", "6:15:1", "--conc", "50mM", "--ionic-strength", "0.1"], "between 0 and 14"),
    (["series", "--ph", "6:8:0.001", "--conc", "50mM", "--ionic-strength", "0.1"], "at most"),
    (["series", "--ph", "6:8:0.5", "--conc", "50mM"], "--ionic-strength"),
    (["series", "--conc", "50mM", "--ionic-strength", "0.1"], "--ph FROM:TO:STEP is required"),
    (["span", "--ph", "6:8", "--ph-typo"], "unrecognized"),
    (["span", "--ph", "6:8:x", "--capacity", "10"], "not a number"),
    (["span", "--ph", "6:8"], "--capacity"),
    (["plate", "--ph", "6:8:0.5", "--ionic-strength", "0.1:0.3", "--conc", "50mM"], "give a step"),
    (["plate", "--ph", "6:8:0.5", "--ionic-strength", "0:0.3:0.1", "--conc", "50mM"], "above 0"),
    (["plate", "--ph", "7", "--ionic-strength", "0.1:0.2:0.1", "--conc", "20mM:40mM:20mM"], "not both"),
    (["plate", "--ph", "7", "--ionic-strength", "0.1", "--conc", "20mM:40mM"], "give a step"),
    (["plate", "--ph", "7", "--ionic-strength", "0.1", "--conc", "20mM", "--ionic-strength-max", "0.3"],
     "do not apply"),
    (["plate", "--ph", "5:9:0.05", "--ionic-strength", "0.1:0.2:0.1", "--conc", "50mM"], "do not fit"),
    (["plate", "--ph", "7", "--ionic-strength", "0.1", "--conc", "50mM", "--plate", "100"], "invalid choice"),
    (["plate", "--ph", "7", "--ionic-strength", "0.1", "--conc", "50mM", "--well-volume", "lots"], "--well-volume"),
    (["plate", "--ph", "7", "--ionic-strength", "0.1", "--conc", "50mM", "--min-pipette", "300uL"], "exceeds"),
    (["plate", "--ph", "7", "--ionic-strength", "0.1", "--conc", "50mM", "--worklist", "/nonexistent/dir/w.csv"],
     "cannot write the worklist"),
    # the designs do not check metals: a metal limit or --no-precipitate is refused, never ignored
    (["span", "--ph", "6:8", "--capacity", "10", "--metal", "Ca:0.05"], "does not check metals"),
    (["plate", "--ph", "7", "--ionic-strength", "0.1", "--conc", "50mM", "--no-precipitate"],
     "does not check metals"),
    (["series", "--ph", "6:8:1", "--conc", "50mM", "--ionic-strength", "0.1", "--metal", "Ca:0.05@2mM"],
     "does not check metals"),
])
def test_bad_input_is_one_line_and_exit_2(capsys, argv, words):
    code, _, err = run(capsys, *argv)
    assert code == 2
    assert "Traceback" not in err and err.count("\n") == 1
    assert words in err
