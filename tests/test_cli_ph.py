"""`poise ph` and `poise demo`: output, JSON keys, and one message per kind of bad input.

Check values: pH of the 1:1 phosphate standard 6.865 at 25 °C (Buck et al., Pure Appl.
Chem. 74 (2002) 2169; Davies engine 6.876, tolerance 0.02).
"""

import json

import pytest
from cli_helpers import run


def test_ph_readable_output(capsys):
    code, out, err = run(capsys, "ph", "KH2PO4=25mM", "Na2HPO4=25mM", "--temperature", "25")
    assert code == 0 and not err
    for label in ("pH", "ionic strength", "buffer capacity", "species", "Warnings"):
        assert label in out
    ph_line = next(line for line in out.splitlines() if line.strip().startswith("pH "))
    assert float(ph_line.split()[1]) == pytest.approx(6.865, abs=0.02)


def test_ph_json_keys_and_values(capsys):
    code, out, _ = run(capsys, "ph", "KH2PO4=25mM", "Na2HPO4=25mM", "--temperature", "25", "--json")
    data = json.loads(out)
    for key in ("pH", "temperature_c", "ionic_strength_mol_l", "capacity_mol_l_per_ph",
                "osmolarity_osmol_l", "species", "warnings"):
        assert key in data
    assert data["pH"] == pytest.approx(6.865, abs=0.02)
    assert data["species"]["phosphate(-2)"] == pytest.approx(0.025, rel=0.01)
    assert data["warnings"] == []


@pytest.mark.parametrize("token, unit, expected", [
    ("25mM", "mM", 0.025), ("0.025M", "M", 0.025), ("25000uM", "uM", 0.025), ("25000µM", "µM", 0.025),
    ("3.40215g/L", "g/L", 0.025), ("3.40215mg/mL", "mg/mL", 0.025)])
def test_ph_amount_units(capsys, token, unit, expected):
    # KH2PO4 136.086 g/mol (IUPAC atomic weights via molmass): 3.40215 g/L = 25.000 mM.
    code, out, _ = run(capsys, "ph", f"KH2PO4={token}", "--json")
    assert code == 0
    assert json.loads(out)["reagents_mol_l"]["kh2po4"] == pytest.approx(expected, rel=1e-4)


@pytest.mark.parametrize("argv, message", [
    (["ph", "KH2PO=25mM"], "unknown reagent 'KH2PO'; did you mean KH2PO4"),
    (["ph", "KH2PO4"], "give each reagent as NAME=AMOUNT"),
    (["ph", "KH2PO4="], "has no amount"),
    (["ph", "KH2PO4=-5mM"], "is negative"),
    (["ph", "KH2PO4=nanmM"], "not a finite number"),
    (["ph", "KH2PO4=abc"], "expected a number and a unit"),
    (["ph", "KH2PO4=5"], "has no unit"),
    (["ph", "KH2PO4=5furlongs"], "unknown unit 'furlongs'"),
    (["ph", "KH2PO4=5mM", "--temperature", "120"], "out of range"),
    (["ph", "KH2PO4=5mM", "--temperature", "-5"], "out of range"),
    (["ph", "KH2PO4=5mM", "--temperature", "warm"], "expected a temperature"),
    (["ph"], "no reagents given"),
    (["ph", "KH2PO4=5mM", "--activity", "magic"], "unknown activity model 'magic'"),
    (["frobnicate"], "invalid choice"),
])
def test_ph_bad_input_one_line_exit_2(capsys, argv, message):
    code, out, err = run(capsys, *argv)
    assert code == 2
    assert message in err
    assert len(err.strip().splitlines()) == 1
    assert "Traceback" not in err


def test_ph_hazardous_reagent_shows_cautions(capsys):
    code, out, _ = run(capsys, "ph", "NaN3=1mM")
    assert code == 0
    assert "Cautions:" in out and "safety rules take precedence" in out


def test_ph_warns_high_ionic_strength(capsys):
    code, out, _ = run(capsys, "ph", "NaCl=1M", "Tris=10mM", "--json")
    warnings = json.loads(out)["warnings"]
    assert any("ionic strength" in w for w in warnings)


def test_ph_warns_above_solubility(capsys):
    # Boric acid dissolves to about 58 g/L at 25 °C (CRC Handbook 98th ed., aqueous solubility
    # table, as entered in the catalog); 2 M is 124 g/L.
    code, out, _ = run(capsys, "ph", "boric acid=2M", "--json")
    assert any("solubility" in w for w in json.loads(out)["warnings"])


def test_ph_warns_temperature_outside_data(capsys):
    code, out, _ = run(capsys, "ph", "HEPES=50mM", "NaOH=25mM", "--temperature", "80", "--json")
    assert any("outside" in w and "hepes" in w for w in json.loads(out)["warnings"])


def test_demo_runs(capsys):
    code, out, _ = run(capsys, "demo")
    assert code == 0
    assert out.count("pH ") >= 3


def test_demo_walks_the_three_users_jobs(capsys):
    # Case: `poise demo` shows each user's job as the command that does it (issue: demo only ran `ph`).
    code, out, _ = run(capsys, "demo")
    assert code == 0
    for who in ("Assay developer", "Purchaser", "Metal-ion assay", "Check a solution"):
        assert who in out
    for command in ("$ poise rank", "$ poise recipe hepes", "$ poise optimise", "$ poise ph"):
        assert command in out
    assert "Local regulations" in out or "local regulations" in out
