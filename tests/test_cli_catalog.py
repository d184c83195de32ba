"""`poise catalog`: the system table, one system with its sources, search, exports, bad input.

Check values:
- Acetic acid at I = 0.1 mol/L, 25 °C: concentration constant pKc = 4.56 (D. C. Harris,
  Quantitative Chemical Analysis, 8th ed. (2010), Appendix G, from NIST SRD 46).  The table
  gives the apparent (mixed, pH-scale) constant pKa' = pKc − log10 γ(H⁺), so
  pKa' + log10 γ₁ is compared with 4.56; tolerance 0.03 (Davies vs the compilation's own
  activity correction; full precision here 4.5412).
- Tris at 37 °C, I = 0: pKa ≈ 7.72 (Bates & Hetzer, J. Phys. Chem. 65 (1961) 667, from
  memory); tolerance 0.04 (full precision from the catalog's ΔH°/ΔCp°: 7.7416).
- The sign of the activity correction is checked against the engine itself: at pH = pKa'
  the fixed-pH speciation (selector.chemistry.speciation.speciate_at_ph) has equal amounts of the
  acid and base species of each step (ratio 1 within 1e-5; the JSON rounds pKa' to 1e-6).
"""

import csv
import io
import json

import pytest
from cli_helpers import run

from catalog import load_catalog
from catalog.selection import read_share
from selector.admissible import USEFUL_RANGE_HALF_WIDTH_PH, conditional_pka
from selector.catalog_view import system_table
from selector.chemistry.arrays import engine_tables
from selector.chemistry.speciation import speciate_at_ph
from selector.cli.catalog import (
    DETAIL_CSV_COLUMNS,
    SEARCH_CSV_COLUMNS,
    TABLE_CSV_COLUMNS,
)
from selector.safety import SAFETY_NOTICE


def test_list_shows_every_system_with_pka(capsys):
    code, out, err = run(capsys, "catalog")
    assert code == 0 and not err
    assert "58 systems" in out
    lines = {line.split()[0]: line for line in out.splitlines() if line and not line.startswith(("-", " "))}
    # Chosen pKa at 25 °C, I = 0: phosphate 2.148/7.198/12.375 (NIST SRD 46 via minteq.v4.dat lines
    # 4257-4273), Tris 8.072, HEPES 7.565 (Vega & Bates, Anal. Chem. 48 (1976) 1293).
    assert "2.15 7.20 12.38" in lines["phosphate"]
    assert "8.07" in lines["tris"] and "primary_amine" in lines["tris"]
    assert "7.57" in lines["hepes"]
    assert "HAZARDOUS" in lines["cyanide"]
    assert "7.1–9.1" in lines["tris"]  # useful pH 8.072 ± 1
    read, used = read_share(s for system in load_catalog().systems.values() for s in system.steps)
    assert f"{read} of the {used} pKa and ΔH° values used are read in a named source" in out


def test_list_json_at_37c_and_ionic_strength(capsys):
    code, out, _ = run(capsys, "catalog", "--temperature", "37", "--ionic-strength", "150mM", "--json")
    assert code == 0
    data = json.loads(out)
    assert data["temperature_c"] == 37.0 and data["ionic_strength_mol_l"] == pytest.approx(0.15)
    tris = next(s for s in data["systems"] if s["system_id"] == "tris")["steps"][0]
    assert tris["pka_thermodynamic"] == pytest.approx(7.72, abs=0.04)
    # TrisH+ -> Tris (charges +1 -> 0): pKa' = pKa − log10 γ₁, above the I = 0 value.
    assert tris["pka_apparent"] > tris["pka_thermodynamic"]
    assert tris["useful_ph_low"] == pytest.approx(tris["pka_apparent"] - 1)


def test_acetate_apparent_pka_at_0_1_molar(capsys):
    code, out, _ = run(capsys, "catalog", "--ionic-strength", "0.1", "--json")
    data = json.loads(out)
    acetate = next(s for s in data["systems"] if s["system_id"] == "acetate")["steps"][0]
    assert acetate["pka_apparent"] + data["log10_gamma_unit"] == pytest.approx(4.56, abs=0.03)


@pytest.mark.parametrize("system_id", ["acetate", "tris", "phosphate", "citrate", "hepes"])
def test_apparent_pka_is_where_the_engine_has_equal_acid_and_base(capsys, system_id):
    code, out, _ = run(capsys, "catalog", "--temperature", "30", "--ionic-strength", "0.2", "--json")
    row = next(s for s in json.loads(out)["systems"] if s["system_id"] == system_id)
    systems = engine_tables().systems
    one = systems.subset([systems.system_ids.index(system_id)])
    for step in row["steps"]:
        fractions = speciate_at_ph(one, step["pka_apparent"], 30.0, 0.2).fractions[0, 0]
        j = step["step"]
        # α_j/α_{j−1} = K'_j/a(H⁺) = 1 at pH = pKa'_j; the JSON rounds pKa' to 1e-6 pH.
        assert fractions[j] / fractions[j - 1] == pytest.approx(1.0, abs=1e-5)


def test_list_csv_has_header_and_one_row_per_step(capsys):
    code, out, _ = run(capsys, "catalog", "--csv")
    assert code == 0
    rows = list(csv.DictReader(io.StringIO(out)))
    assert tuple(csv.reader(io.StringIO(out)).__next__()) == TABLE_CSV_COLUMNS
    assert len(rows) == 93  # steps.csv has 93 steps
    tris = [r for r in rows if r["system_id"] == "tris"]
    # Tris pKa 8.0719: Bates & Hetzer 1961 eq. (3) at 298.15 K (the catalog's bates_hetzer1961 row).
    assert len(tris) == 1 and float(tris[0]["pka_apparent"]) == pytest.approx(8.0719)


def test_one_system_shows_every_source(capsys):
    code, out, err = run(capsys, "catalog", "tris")
    assert code == 0 and not err
    assert out.startswith("Tris (tris(hydroxymethyl)aminomethane)   [tris]")
    # ΔH° and ΔCp° of Tris are keyed to tris_orn1987; its pKa to bates_hetzer1961, the recalled
    # 8.072 listed beside it.
    assert "47.53 kJ/mol   [tris_orn1987 (measured)]" in out
    assert "8.0719   [bates_hetzer1961 (measured)]" in out and "8.072              from memory" in out
    assert "Sources" in out and "tris_orn1987: Acid association quotients of tris(hydroxymethyl)" in out
    for section in ("Reagents", "Metal binding", "UV cut-off", "Flags"):
        assert section in out
    assert "tris_hcl: Tris hydrochloride" in out


def test_one_system_json_carries_key_kind_and_citation(capsys):
    code, out, _ = run(capsys, "catalog", "TRIS", "--json")
    data = json.loads(out)
    dh = data["steps"][0]["dh_kj_mol"]
    assert (dh["value"], dh["source_key"], dh["source_kind"]) == (47.53, "tris_orn1987", "measured")
    assert "J. Solution Chem. 16 (1987)" in dh["citation"]
    assert {r["reagent_id"] for r in data["reagents"]} == {"tris", "tris_hcl"}
    assert data["sources"]["tris_orn1987"] == dh["citation"]
    assert any(m["metal"] == "Cu" and m["log_k"]["source_key"] == "bal2010" for m in data["metal_binding"])


def test_one_system_csv_lists_values_with_provenance(capsys):
    code, out, _ = run(capsys, "catalog", "phosphate", "--csv")
    rows = list(csv.DictReader(io.StringIO(out)))
    assert tuple(rows[0]) == DETAIL_CSV_COLUMNS
    pka = [r for r in rows if r["section"] == "step" and r["field"] == "pka_25c"]
    assert [float(r["value"]) for r in pka] == [2.148, 7.198, 12.375]  # NIST SRD 46 (minteq.v4.dat)
    assert all(r["used"] == "true" and float(r["uncertainty"]) > 0 and r["why"] for r in pka)
    assert all(r["source_key"] or r["source_kind"] in ("from-memory", "common-practice", "demo", "computed")
               for r in rows)


def test_reagent_name_shows_its_system(capsys):
    code, out, _ = run(capsys, "catalog", "borax")
    assert code == 0 and out.startswith("Borate (boric acid)   [borate]")
    assert "CAUTION (reprotoxic)" in out and SAFETY_NOTICE in out


def test_hazardous_system_shows_cautions_and_the_safety_notice(capsys):
    code, out, _ = run(capsys, "catalog", "sodium azide")
    assert code == 0
    assert "HAZARDOUS: Azide is acutely toxic" in out
    assert "CAUTION (acutely_toxic" in out
    assert out.rstrip().endswith(SAFETY_NOTICE)


def test_search_finds_phosphate_reagents(capsys):
    code, out, err = run(capsys, "catalog", "--search", "phosphate")
    assert code == 0 and not err
    ids = [line.split()[1] for line in out.splitlines() if line.startswith(("system ", "reagent "))]
    assert ids[0] == "phosphate"  # the exact match first
    assert {"kh2po4", "na2hpo4", "k2hpo4", "na3po4", "na4p2o7"} <= set(ids)


def test_search_json_and_csv(capsys):
    code, out, _ = run(capsys, "catalog", "--search", "Na2HPO4", "--json")
    hits = json.loads(out)
    assert hits[0] == {"kind": "reagent", "id": "na2hpo4", "name": "disodium hydrogen phosphate anhydrous",
                       "system_id": "phosphate", "matched_name": "Na2HPO4", "match": "exact"}
    code, out, _ = run(capsys, "catalog", "--search", "hepse", "--csv")
    rows = list(csv.DictReader(io.StringIO(out)))
    assert tuple(rows[0]) == SEARCH_CSV_COLUMNS
    assert ("hepes", "close") in {(r["id"], r["match"]) for r in rows}


def test_search_without_matches_says_so(capsys):
    code, out, _ = run(capsys, "catalog", "--search", "unobtainium")
    assert code == 0 and "No system or reagent matches 'unobtainium'" in out


def test_high_ionic_strength_is_warned(capsys):
    code, out, _ = run(capsys, "catalog", "--ionic-strength", "0.8")
    assert code == 0 and "Warning: ionic strength 0.8 mol/L is above 0.5 mol/L" in out


@pytest.mark.parametrize("argv, message", [
    (["catalog", "trsi"], "unknown buffer system 'trsi'; did you mean Tris"),
    (["catalog", "NaCl"], "'NaCl' is sodium chloride, a strong electrolyte with no buffer system"),
    (["catalog", "--temperature", "120"], "temperature 120 °C is out of range"),
    (["catalog", "tris", "--temperature", "-5"], "temperature -5 °C is out of range"),
    (["catalog", "--temperature", "warm"], "temperature 'warm' is not a number"),
    (["catalog", "--ionic-strength", "-0.1"], "ionic strength '-0.1' is negative"),
    (["catalog", "--ionic-strength", "lots"], "cannot read ionic strength 'lots'"),
    (["catalog", "--ionic-strength", "5g/L"], "cannot read ionic strength '5g/L'"),
    (["catalog", "--ionic-strength", "nan"], "ionic strength 'nan' is not a finite number"),
    (["catalog", "--activity", "magic"], "unknown activity model 'magic'"),
    (["catalog", "--json", "--csv"], "not allowed with argument"),
    (["catalog", "tris", "--search", "tris"], "give a system name or --search TEXT, not both"),
    (["catalog", "--search", " "], "nothing to search for"),
])
def test_bad_input_one_line_exit_2(capsys, argv, message):
    code, out, err = run(capsys, *argv)
    assert code == 2
    assert message in err
    assert len(err.strip().splitlines()) == 1
    assert "Traceback" not in err


@pytest.mark.parametrize("temperature_c, ionic_strength_mol_l, ph", [(25.0, 0.0, 7.0), (37.0, 0.15, 7.4),
                                                                      (10.0, 0.3, 4.5)])
def test_table_and_admissibility_read_the_same_apparent_pka(temperature_c, ionic_strength_mol_l, ph):
    # One formula (selector.chemistry.thermo.apparent_pka) behind both: the step nearest
    # the pH in the table is the conditional pKa' admissibility and ranking use, exactly.
    table = system_table(temperature_c, ionic_strength_mol_l)
    for row in table.rows:
        nearest = min((s.pka_apparent for s in row.steps), key=lambda p: abs(p - ph))
        assert conditional_pka(row.system_id, ph, temperature_c, ionic_strength_mol_l) == \
            pytest.approx(nearest, abs=1e-12), row.system_id
        for step in row.steps:
            assert step.useful_ph_high - step.useful_ph_low == pytest.approx(2 * USEFUL_RANGE_HALF_WIDTH_PH)


def test_one_system_lists_every_published_value_and_marks_the_one_used(capsys):
    code, out, _ = run(capsys, "catalog", "phosphate")
    assert code == 0
    # Phosphate step 2 ΔH°: NIST46 3.0 and NEA (ThermoChimie) 3.6 kJ/mol; the NEA value is chosen
    # against the policy's file order, and the text says why.
    block = out[out.index("step 2: charge -1 -> -2"):out.index("step 3:")]
    assert "ΔH°                        3.6 kJ/mol   [thermochimie (measured-review)]" in block
    assert "chosen against the policy: the two critical compilations differ" in block
    marked = [line for line in block.splitlines() if line.startswith("      * ")]
    assert len(marked) == 3  # one used value per constant
    assert any(line.split()[:2] == ["3", "minteq4"] for line in block.splitlines())


def test_one_system_json_carries_every_value_uncertainty_and_reason(capsys):
    code, out, _ = run(capsys, "catalog", "tapso", "--json")
    dh = json.loads(out)["steps"][0]["dh_kj_mol"]
    # Kept keys, then the new ones.
    assert (dh["value"], dh["source_key"], dh["source_kind"]) == (38.09, "roy1997_tapso", "computed")
    # TAPSO ΔH°: 38.09 from the emf pK(T) equation (Roy et al. 1997) vs 33.1 calorimetric (Thermochim.
    # Acta 475 (2008) 22): the spread 4.99 kJ/mol is the uncertainty.
    assert dh["uncertainty"] == pytest.approx(4.99, abs=1e-9) and dh["uncertainty_rule"] == "spread"
    assert dh["reason"].startswith("chosen against the policy:")
    values = {(v["source_key"], v["value"]): v["used"] for v in dh["values"]}
    assert values[("roy1997_tapso", 38.09)] is True and values[("tca2008_taps_tapso", 33.1)] is False
    assert json.loads(out)["sources"]["tca2008_taps_tapso"].startswith("Calorimetric determination")


def test_one_system_csv_has_a_row_per_published_value(capsys):
    code, out, _ = run(capsys, "catalog", "azide", "--csv")
    rows = [r for r in csv.DictReader(io.StringIO(out)) if r["section"] == "published_value"
            and r["field"] == "pka_25c"]
    # Azide pKa: llnl 4.7001 (chosen, with why) and the handbook's 4.6 (crc_inorg).
    assert {(r["source_key"], float(r["value"]), r["used"]) for r in rows} >= {
        ("llnl", 4.7001, "true"), ("crc_inorg", 4.6, "false")}


def test_one_system_lists_its_complexes_other_values_marked_like_the_step_values(capsys):
    # Sulfate: CoSO4 log β 2.3 (minteq.v4.dat, NIST SRD 46) used; llnl.dat's 0.0436 rejected (more
    # than 2 log units off); NaSO4- 0.73 (NIST SRD 46) used, phreeqc.dat's 0.6 an alternative.
    code, out, err = run(capsys, "catalog", "sulfate")
    assert code == 0 and not err
    section = out.split("Complexes with several published values")[1].split("UV cut-off")[0]
    assert "CoSO4 (Co): log β 2.3 ± 0.1" in section
    assert "* 2.3 " in section and "x 0.0436 " in section
    assert "rejected (not used, not in the spread): 2.26 log units below" in section
    assert "        0.6 " in section  # NaSO4- / KSO4-: phreeqc.dat's value, blank mark: an alternative
    assert "Complexes with several" not in run(capsys, "catalog", "tris")[1]


def test_one_system_json_and_csv_carry_the_complexes_values(capsys):
    code, out, _ = run(capsys, "catalog", "sulfate", "--json")
    rows = {c["complex_id"]: c for c in json.loads(out)["complex_values"]}
    co = rows["CoSO4"]
    assert (co["log_beta"]["value"], co["uncertainty"], co["uncertainty_rule"]) == (2.3, 0.1, "default")
    assert [(v["value"], v["used"], v["rejected"]) for v in co["values"]] == [(2.3, True, False),
                                                                              (0.0436, False, True)]
    assert co["values"][1]["why"] and co["values"][1]["source_key"] == "llnl"
    assert [(v["value"], v["used"]) for v in rows["NaSO4-"]["values"]] == [(0.73, True), (0.6, False)]
    assert "llnl" in json.loads(out)["sources"]
    code, out, _ = run(capsys, "catalog", "sulfate", "--csv")
    table = [r for r in csv.DictReader(io.StringIO(out)) if r["section"] == "complex_value"]
    assert {(r["item"], r["value"], r["used"]) for r in table} >= {("CoSO4", "2.3", "true"),
                                                                   ("CoSO4", "0.0436", "false")}
    assert [r["why"] for r in table if r["value"] == "0.0436"][0].startswith("rejected: ")
