"""`poise ph` with metals and chelators: per-metal free concentration, pM and bound fractions.

The engine's numbers are checked against PHREEQC/minteq.v4.dat in
tests/test_complex_equilibrium.py; here the report: its keys, that its parts add up, and
that it tells the metals apart.
"""

import json

import pytest
from cli_helpers import run


def test_calcium_edta_tris_report(capsys):
    code, out, err = run(capsys, "ph", "CaCl2=1mM", "Na2H2EDTA=2mM", "tris=20mM", "--temperature", "25", "--json")
    assert code == 0 and not err
    data = json.loads(out)
    free = data["free_metal_mol_l"]
    species = data["metal_species"]
    # 1 mM Ca with 2 mM EDTA at pH 8.9: log K(CaEDTA) 12.42 at I = 0 (NIST SRD 46 via
    # minteq.v4.dat) leaves only about 1e-10 mol/L free.
    assert 1e-11 < free["Ca"] < 1e-9
    assert species["Ca++"] == free["Ca"]
    assert free["Ca"] + species["Ca(Edta)-2"] + species["CaH(Edta)-"] + species["CaOH+"] == pytest.approx(1e-3, rel=1e-8)
    assert data["metal_p_free"]["Ca"] == pytest.approx(-__import__("math").log10(free["Ca"]))
    assert data["metal_bound_fraction"]["Ca"]["edta"] == pytest.approx(1.0, abs=1e-6)
    assert data["species"]["Ca++"] == free["Ca"]


def test_metal_lines_in_the_text_report(capsys):
    code, out, _ = run(capsys, "ph", "MgCl2.6H2O=2mM", "trisodium citrate=10mM", "HEPES=20mM", "NaOH=10mM")
    assert code == 0
    line = next(row for row in out.splitlines() if row.strip().startswith("Mg "))
    assert "pMg" in line and "citrate" in line
    assert "Local regulations" not in out or "Cautions" in out


def test_a_solution_without_metals_has_no_metal_keys(capsys):
    code, out, _ = run(capsys, "ph", "KH2PO4=25mM", "Na2HPO4=25mM", "--json")
    assert code == 0
    assert "free_metal_mol_l" not in json.loads(out)


def test_zinc_salt_carries_its_cautions(capsys):
    code, out, _ = run(capsys, "ph", "ZnSO4.7H2O=1mM", "HEPES=20mM", "NaOH=10mM")
    assert code == 0
    assert "zinc sulfate heptahydrate" in out and "aquatic" in out
    assert "Local regulations and your institution's safety rules take precedence" in out


def test_ion_pairs_option(capsys):
    # NaHPO4⁻ and KHPO4⁻ (NIST SRD 46 via minteq.v4.dat) take up part of the HPO4²⁻: the
    # pH falls (0.19 here, measured) and Na⁺/K⁺ are reported as metals with their bound share.
    code, out, _ = run(capsys, "ph", "KH2PO4=25mM", "Na2HPO4=25mM", "NaCl=100mM", "--ion-pairs", "--json")
    assert code == 0
    paired = json.loads(out)
    code, out, _ = run(capsys, "ph", "KH2PO4=25mM", "Na2HPO4=25mM", "NaCl=100mM", "--json")
    plain = json.loads(out)
    assert -0.3 < paired["pH"] - plain["pH"] < -0.1
    assert 0.0 < paired["metal_bound_fraction"]["Na"]["phosphate"] < 0.1
    assert "NaHPO4-" in paired["metal_species"]
