"""Ni(SO4)2²⁻: which published log β2 the catalog uses, and why minteq.v4.dat's is rejected.

Case: Ni²⁺ + 2 SO4²⁻ ⇌ Ni(SO4)2²⁻ at 25 °C, I = 0.  minteq.v4.dat (as shipped by the ``phreeqc``
package, lines 3080-3081, log K source "SCD3.02 (1978 BLa)") gives log β2 = 0.82; sit.dat
(ThermoChimie, lines 5287-5288, "#89BAE/McK") gives 3.01.  The first step, NiSO4(aq), is
log K1 = 2.3 in minteq.v4.dat (lines 3072-3073, NIST46.3) and 2.35 in sit.dat (lines 5281-5282).

A cumulative β2 below K1 would make the second sulfate bind with log K2 = 0.82 − 2.3 = −1.48,
while K1 + 0.82 = 3.12 lies 0.11 from sit.dat's 3.01: 0.82 reads as the stepwise K2.  The same
two files' other M(SO4)2²⁻ of divalent ions (Pb, Zn, Cd, UO2, Be) all lie 0.41 to 1.32 above their
own K1 (Co, Mn and Mg carry no M(SO4)2²⁻ in either file, nor in llnl.dat).  The catalog therefore
uses sit.dat's 3.01 (complexes.csv) and keeps 0.82 on record marked rejected (complex_values.csv).

Each number below is read from the file at the line named beside it (the reaction line, then its
``log_k`` line); tolerance: exact to the digits printed in the file.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from cli_helpers import run

from catalog import load_catalog

phreeqc = pytest.importorskip("phreeqc", reason="the phreeqc package (test extra) ships the databases")

DATABASES = Path(phreeqc.__file__).parent / "databases"

#: (file, reaction line (1-based), the reaction as written there, log_k printed on the next line).
READ = {
    "minteq Ni K1": ("minteq.v4.dat", 3072, "Ni+2 + SO4-2 = NiSO4", 2.3),
    "minteq Ni b2": ("minteq.v4.dat", 3080, "Ni+2 + 2 SO4-2 = Ni(SO4)2-2", 0.82),
    "sit Ni K1": ("sit.dat", 5281, "Ni+2 + SO4-2 = Ni(SO4)", 2.35),
    "sit Ni b2": ("sit.dat", 5287, "Ni+2 + 2 SO4-2 = Ni(SO4)2-2", 3.01),
}

#: The analogues: metal -> ((file, K1 line, reaction, log K1), (file, β2 line, reaction, log β2)).
ANALOGUES = {
    "minteq Pb": (("minteq.v4.dat", 2976, "Pb+2 + SO4-2 = PbSO4", 2.69),
                  ("minteq.v4.dat", 2984, "Pb+2 + 2 SO4-2 = Pb(SO4)2-2", 3.47)),
    "minteq Zn": (("minteq.v4.dat", 3016, "Zn+2 + SO4-2 = ZnSO4", 2.34),
                  ("minteq.v4.dat", 3024, "Zn+2 + 2 SO4-2 = Zn(SO4)2-2", 3.28)),
    "minteq Cd": (("minteq.v4.dat", 3032, "Cd+2 + SO4-2 = CdSO4", 2.37),
                  ("minteq.v4.dat", 3040, "Cd+2 + 2 SO4-2 = Cd(SO4)2-2", 3.5)),
    "minteq UO2": (("minteq.v4.dat", 3176, "UO2+2 + SO4-2 = UO2SO4", 3.18),
                   ("minteq.v4.dat", 3184, "UO2+2 + 2 SO4-2 = UO2(SO4)2-2", 4.3)),
    "minteq Be": (("minteq.v4.dat", 3216, "Be+2 + SO4-2 = BeSO4", 2.19),
                  ("minteq.v4.dat", 3224, "Be+2 + 2 SO4-2 = Be(SO4)2-2", 2.596)),
    "sit Cd": (("sit.dat", 2577, "Cd+2 + SO4-2 = Cd(SO4)", 2.37),
               ("sit.dat", 2583, "Cd+2 + 2 SO4-2 = Cd(SO4)2-2", 3.44)),
    "sit Pb": (("sit.dat", 5883, "Pb+2 + SO4-2 = Pb(SO4)", 2.82),
               ("sit.dat", 5889, "Pb+2 + 2 SO4-2 = Pb(SO4)2-2", 3.47)),
    "sit UO2": (("sit.dat", 7912, "UO2+2 + SO4-2 = UO2(SO4)", 3.15),
                ("sit.dat", 7918, "UO2+2 + 2 SO4-2 = UO2(SO4)2-2", 4.14)),
    "sit Be": (("sit.dat", 2143, "SO4-2 + Be+2 = BeSO4", 2.03),
               ("sit.dat", 2063, "2 SO4-2 + Be+2 = Be(SO4)2-2", 3.35)),
    "sit Ni": (READ["sit Ni K1"], READ["sit Ni b2"]),
}


def read_log_k(file: str, line: int, reaction: str) -> float:
    """The ``log_k`` printed on the line after ``reaction``, which must stand at ``line`` of ``file``."""
    lines = (DATABASES / file).read_text(encoding="latin-1").splitlines()
    assert lines[line - 1].strip() == reaction, (file, line, lines[line - 1])
    words = lines[line].split()
    assert words[0] == "log_k", (file, line + 1, lines[line])
    return float(words[1])


@pytest.mark.parametrize("name", sorted(READ))
def test_the_nickel_values_are_read_at_their_lines(name):
    file, line, reaction, printed = READ[name]
    assert read_log_k(file, line, reaction) == printed


def test_minteq_beta2_is_the_stepwise_constant():
    # log K2 = log β2 − log K1: minteq.v4.dat's pair gives −1.48, i.e. K2 = 0.03 L/mol, 10^3.78
    # times below K1; read as a stepwise K2, K1 + 0.82 = 3.12 agrees with sit.dat's cumulative 3.01
    # within 0.11 (the two files' K1 differ by 0.05 themselves).
    k1 = read_log_k(*READ["minteq Ni K1"][:3])
    b2 = read_log_k(*READ["minteq Ni b2"][:3])
    sit_b2 = read_log_k(*READ["sit Ni b2"][:3])
    assert b2 - k1 == pytest.approx(-1.48, abs=1e-9)
    assert k1 + b2 - sit_b2 == pytest.approx(0.11, abs=1e-9)


def test_every_other_cumulative_beta2_lies_above_its_k1():
    # The analogues in the same two files: log β2 − log K1 from 0.41 (Be, minteq.v4.dat) to 1.32
    # (Be, sit.dat); minteq.v4.dat's Ni (−1.48) is the only one below 0.
    gaps = {name: read_log_k(*beta2[:3]) - read_log_k(*k1[:3]) for name, (k1, beta2) in ANALOGUES.items()}
    assert min(gaps.values()) == pytest.approx(0.406, abs=1e-9)  # Be, minteq.v4.dat: 2.596 − 2.19
    assert max(gaps.values()) == pytest.approx(1.32, abs=1e-9)  # Be, sit.dat: 3.35 − 2.03
    assert gaps["sit Ni"] == pytest.approx(0.66, abs=1e-9)


def test_the_catalog_uses_the_cumulative_value_and_rejects_the_stepwise_one():
    catalog = load_catalog()
    ni = {c.complex_id: c for c in catalog.complexes}["Ni(SO4)2-2"]
    assert (ni.log_beta.value, ni.log_beta.source, ni.log_beta.source_kind) == (3.01, "thermochimie",
                                                                                "measured-review")
    assert ni.ligand_count == 2 and ni.protons == 0
    (other,) = [v for v in catalog.complex_values if v.complex_id == "Ni(SO4)2-2"]
    assert (other.log_beta.value, other.log_beta.source, other.rejected) == (0.82, "minteq4", True)
    assert "minteq.v4.dat:3072-3073" in other.why and "-1.48" in other.why


def test_nickel_in_sulfate_is_bound_as_the_cumulative_constant_says(capsys):
    # Case: 1 mM NiSO4·6H2O + 50 mM Na2SO4, 25 °C, Davies (poise ph --json).  With β2 = 10^3.01 the
    # disulfate complex holds 0.119 of the nickel (0.0009 with the rejected 0.82) and the free
    # fraction is 0.419 (0.475 with it); regression values measured on this engine, tolerance 1e-3.
    code, out, _ = run(capsys, "ph", "NiSO4.6H2O=1mM", "Na2SO4=50mM", "--json")
    assert code in (0, None)
    report = json.loads(out)
    total = report["metal_total_mol_l"]["Ni"]
    assert report["metal_species"]["Ni(SO4)2-2"] / total == pytest.approx(0.1191, abs=1e-3)
    assert report["free_metal_mol_l"]["Ni"] / total == pytest.approx(0.4190, abs=1e-3)
