"""Metals as components: complexes of Ca²⁺, Mg²⁺, Zn²⁺ … with buffers and chelators.

Checks, like a lab notebook:

* without a complexing metal the multicomponent solver gives the acid–base solver's pH and
  β (same equations, another algorithm: agreement to 1e-9 pH);
* every solution closes its mass balances (metal, ligand) and its charge balance;
* against PHREEQC with minteq.v4.dat (NIST SRD 46 constants, the catalog's source for the
  complexes): Ca–EDTA, Mg–EDTA, Zn–NTA, Ca–citrate and more, within 0.05 pH and 0.1 in
  log free metal.  Why not closer: PHREEQC's minteq.v4.dat gives most species
  ``-gamma 0 0`` (the Debye–Hückel limiting law, log γ = −A z² √I) where poise uses Davies;
  for EDTA⁴⁻ (z² = 16) at I = 0.01 the two differ by 0.1 in log γ.  PHREEQC also carries
  chloride complexes (ZnCl⁺, CaCl⁺ …) that the catalog does not; compositions are kept at
  I ≤ 0.03 mol/L where these matter least.  Measured on the 11 cases at 10, 25 and 37 °C:
  largest |ΔpH| 0.022, largest |Δ log free metal| 0.041.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from catalog import CatalogError, load_catalog, read_catalog
from selector.chemistry.arrays import complex_arrays, engine_tables
from selector.chemistry.complex_equilibrium import solve_complexation
from selector.chemistry.equilibrium import molal_to_molar, solve_equilibrium
from selector.chemistry.speciation import solve_speciation
from tests.test_catalog_loader import edit


def test_without_metals_the_acid_base_solver_is_reproduced():
    # Random phosphate / tris / citrate / acetate mixtures with NaOH or HCl, 5-45 °C.
    tables = engine_tables()
    ids = ("phosphate", "tris", "citrate", "acetate")
    systems = tables.systems.subset([tables.system_index(s) for s in ids])
    rng = np.random.default_rng(7)
    n = 300
    totals = rng.uniform(0.0, 0.1, (n, len(ids)))
    strong = rng.uniform(-0.15, 0.25, n)
    ionic = np.abs(strong) / 2 + rng.uniform(0.0, 0.2, n)
    temperature = rng.uniform(5, 45, n)
    reference = solve_speciation(totals, strong, ionic, temperature, systems)
    no_metals = complex_arrays(load_catalog(), (), systems.system_ids)
    ours = solve_complexation(totals, np.zeros((n, 0)), strong, ionic, temperature, systems, no_metals)
    both = reference.converged & ours.converged
    assert both.sum() > 0.95 * n
    assert np.max(np.abs(ours.ph[both] - reference.ph[both])) < 1e-9
    assert np.allclose(ours.capacity_mol_l_per_ph[both], reference.capacity_mol_l_per_ph[both], rtol=1e-7)
    assert np.allclose(ours.ionic_strength_mol_l[both], reference.ionic_strength_mol_l[both], rtol=1e-9)
    # γ held at a given ionic strength: the same again.
    held = solve_speciation(totals, strong, ionic, temperature, systems, fixed_ionic_strength_mol_l=0.1)
    ours_held = solve_complexation(totals, np.zeros((n, 0)), strong, ionic, temperature, systems, no_metals,
                                   fixed_ionic_strength_mol_l=0.1)
    both = held.converged & ours_held.converged
    assert both.sum() > 0.95 * n
    assert np.max(np.abs(ours_held.ph[both] - held.ph[both])) < 1e-9


def test_balances_close_for_a_batch_and_match_single_solutions():
    ids = ["cacl2", "mgcl2_6h2o", "na2h2edta_2h2o", "tris", "hcl"]
    rng = np.random.default_rng(3)
    amounts = np.column_stack([rng.uniform(0, 3e-3, 40), rng.uniform(0, 3e-3, 40), rng.uniform(0, 4e-3, 40),
                               np.full(40, 0.02), rng.uniform(0, 0.01, 40)])
    amounts[0, 0] = 0.0  # one solution without calcium
    eq = solve_equilibrium(ids, amounts, 25.0)
    metals = eq.speciation.metals
    assert metals is not None and set(metals.metal_ids) == {"Ca", "Mg", "Na"}
    bound = metals.complex_mol_l @ metals.complex_metal_count
    assert np.allclose(metals.free_mol_l + bound, metals.totals_mol_l, rtol=1e-8, atol=1e-25)
    edta = list(eq.system_ids).index("edta")
    free_edta = eq.speciation.totals_mol_l[:, edta] * eq.speciation.fractions[:, edta].sum(axis=1)
    bound_edta = metals.complex_mol_l @ metals.complex_ligand_count[:, edta]
    assert np.allclose(free_edta + bound_edta, eq.speciation.totals_mol_l[:, edta], rtol=1e-8)
    charge = np.einsum("nk,k->n", eq.species_mol_l, eq.species_charge)
    assert np.max(np.abs(charge)) < 1e-9 * 0.05
    assert metals.free_mol_l[0, metals.metal_ids.index("Ca")] == 0.0
    single = solve_equilibrium(ids, amounts[5], 25.0)
    assert single.ph[0] == pytest.approx(eq.ph[5], abs=1e-9)


def test_random_metal_buffer_mixtures_all_converge_and_close():
    # 300 random mixtures of five metals, three chelators, phosphate, carbonate, tris, strong
    # acid/base and NaCl (I up to about 0.7 mol/L), 5-45 °C: every one converges (the
    # coupled iteration, else bisection on I) and closes its metal and charge balances.
    # Measured on 8000 such mixtures (two seeds, with and without ion pairs): all converged.
    ids = ["cacl2", "mgcl2_6h2o", "znso4_7h2o", "cuso4_5h2o", "mncl2_4h2o", "na2h2edta_2h2o", "nta",
           "na3_citrate_2h2o", "kh2po4", "na2hpo4", "nahco3", "tris", "hcl", "naoh", "nacl"]
    high = np.array([5e-3, 5e-3, 2e-3, 2e-3, 2e-3, 5e-3, 5e-3, 0.05, 0.05, 0.05, 0.05, 0.1, 0.1, 0.1, 0.3])
    rng = np.random.default_rng(11)
    amounts = rng.uniform(0, 1, (300, len(ids))) * high * (rng.uniform(0, 1, (300, len(ids))) < 0.4)
    amounts[:, 0] = np.maximum(amounts[:, 0], 1e-6)
    eq = solve_equilibrium(ids, amounts, rng.uniform(5, 45, 300), strict=False)
    assert (eq.status == 0).all()
    metals = eq.speciation.metals
    bound = metals.complex_mol_l @ metals.complex_metal_count
    present = metals.totals_mol_l > 0
    relative = np.abs(metals.free_mol_l + bound - metals.totals_mol_l)[present] / metals.totals_mol_l[present]
    assert relative.max() < 1e-9
    assert np.abs(np.einsum("nk,k->n", eq.species_mol_l, eq.species_charge)).max() < 1e-9


def test_edta_lowers_ph_when_it_takes_up_calcium():
    # Chelation releases protons: Na2H2EDTA with and without an equal amount of CaCl2.
    alone = solve_equilibrium(["na2h2edta_2h2o"], [2e-3]).ph[0]
    with_ca = solve_equilibrium(["na2h2edta_2h2o", "cacl2"], [2e-3, 2e-3]).ph[0]
    assert with_ca < alone - 0.5


phreeqpython = pytest.importorskip("phreeqpython")
DATABASES = Path(__import__("phreeqc").__file__).parent / "databases"

CASES = [
    # name, poise reagents (mol/kg), PHREEQC totals (mmol/kgw), metal
    ("Ca-EDTA", {"cacl2": 1e-3, "na2h2edta_2h2o": 2e-3, "naoh": 3e-3}, {"Ca": 1, "Cl": 2, "Na": 7, "Edta": 2}, "Ca"),
    ("Ca-EDTA, Ca in excess", {"cacl2": 3e-3, "na2h2edta_2h2o": 2e-3, "naoh": 2e-3},
     {"Ca": 3, "Cl": 6, "Na": 6, "Edta": 2}, "Ca"),
    ("Mg-EDTA", {"mgcl2_6h2o": 1e-3, "na2h2edta_2h2o": 1.5e-3, "naoh": 2.5e-3},
     {"Mg": 1, "Cl": 2, "Na": 5.5, "Edta": 1.5}, "Mg"),
    ("Zn-NTA", {"zncl2": 0.5e-3, "nta": 1e-3, "naoh": 2.5e-3}, {"Zn": 0.5, "Cl": 1, "Na": 2.5, "Nta": 1}, "Zn"),
    ("Ca-citrate", {"cacl2": 2e-3, "na3_citrate_2h2o": 5e-3}, {"Ca": 2, "Cl": 4, "Na": 15, "Citrate": 5}, "Ca"),
    ("Mg-citrate", {"mgcl2_6h2o": 2e-3, "na3_citrate_2h2o": 5e-3, "hcl": 4e-3},
     {"Mg": 2, "Cl": 8, "Na": 15, "Citrate": 5}, "Mg"),
    ("Cu-EDTA", {"cuso4_5h2o": 1e-3, "na2h2edta_2h2o": 1.2e-3, "naoh": 2e-3},
     {"Cu": 1, "S(6)": 1, "Na": 4.4, "Edta": 1.2}, "Cu"),
    ("Mn-NTA", {"mncl2_4h2o": 1e-3, "nta": 2e-3, "naoh": 4e-3}, {"Mn": 1, "Cl": 2, "Na": 4, "Nta": 2}, "Mn"),
    ("Ni-NTA", {"niso4_6h2o": 1e-3, "nta": 1.5e-3, "naoh": 3e-3}, {"Ni": 1, "S(6)": 1, "Na": 3, "Nta": 1.5}, "Ni"),
    ("Co-EDTA", {"cocl2_6h2o": 1e-3, "na2h2edta_2h2o": 1.5e-3, "naoh": 1e-3},
     {"Co": 1, "Cl": 2, "Na": 4, "Edta": 1.5}, "Co"),
    ("Zn-citrate", {"zncl2": 1e-3, "na3_citrate_2h2o": 5e-3}, {"Zn": 1, "Cl": 2, "Na": 15, "Citrate": 5}, "Zn"),
]


@pytest.fixture(scope="module")
def minteq():
    return phreeqpython.PhreeqPython(database="minteq.v4.dat", database_directory=DATABASES)


@pytest.mark.parametrize("name, ours, theirs, metal", CASES, ids=[c[0] for c in CASES])
@pytest.mark.parametrize("temperature_c", [10.0, 25.0, 37.0])
def test_free_metal_and_ph_agree_with_phreeqc_minteq(minteq, name, ours, theirs, metal, temperature_c):
    solution = minteq.add_solution({"units": "mmol/kgw", "temp": temperature_c, **theirs, "pH": "7 charge"})
    ids = list(ours)
    eq = solve_equilibrium(ids, [float(molal_to_molar(ours[i], temperature_c)) for i in ids], temperature_c)
    metals = eq.speciation.metals
    free_mol_kg = metals.free_mol_l[0, metals.metal_ids.index(metal)] / float(molal_to_molar(1.0, temperature_c))
    theirs_free = solution.species_molalities[f"{metal}+2"]
    assert eq.ph[0] == pytest.approx(solution.pH, abs=0.05), name
    assert np.log10(free_mol_kg) == pytest.approx(np.log10(theirs_free), abs=0.1), name
    solution.forget()


def test_complex_rows_are_checked(catalog_copy):
    line = edit(catalog_copy, "complexes.csv", {"complex_id": "CaOH+"}, {"protons": "1"})
    dh_line = edit(catalog_copy, "complexes.csv", {"complex_id": "Ca(Edta)-2"}, {"dh_kj_mol": "0"})
    metal_line = edit(catalog_copy, "complexes.csv", {"complex_id": "Mg(Edta)-2"}, {"metal": "Xx"})
    kind_line = edit(catalog_copy, "complexes.csv", {"complex_id": "Zn(Edta)-2"}, {"kind": "pair"})
    with pytest.raises(CatalogError) as caught:
        read_catalog(catalog_copy)
    problems = "\n".join(caught.value.problems)
    assert f"complexes.csv:{line}: protons: expected a negative number" in problems
    assert f"complexes.csv:{dh_line}: dh_kj_mol: expected a published enthalpy or an empty cell" in problems
    assert f"complexes.csv:{metal_line}: metal: expected a cation of ions.csv, got 'Xx'" in problems
    assert f"complexes.csv:{kind_line}: kind: expected one of complex, ion_pair, got 'pair'" in problems


def test_every_complex_is_the_one_minteq_v4_carries():
    # complexes.csv copies minteq.v4.dat (NIST SRD 46 entries tagged NIST46, others as the
    # file gives them): same log β at 25 °C, I = 0, same ΔH (empty where the file has 0).
    from tests.phreeqc_db import read_solution_species

    entries = read_solution_species(DATABASES / "minteq.v4.dat")
    catalog = load_catalog()
    for c in catalog.complexes:
        if c.log_beta.source != "minteq4":  # read in another compilation: tests/test_catalog_nist46.py
            continue
        entry = entries[c.complex_id]
        assert c.log_beta.value == pytest.approx(entry["log_k"], abs=1e-9), c.complex_id
        assert (c.dh_kj_mol or 0.0) == pytest.approx(entry["delta_h"] or 0.0, abs=1e-3), c.complex_id
        assert c.log_beta.source_kind == ("measured-review" if entry["tags"].get("log K source", "").startswith(
            "NIST46") else "handbook"), c.complex_id
    # EDTA and NTA protonation: the catalog's stepwise pKa are differences of the file's log β.
    edta = [s.pka_25c.value for s in catalog.systems["edta"].steps]
    assert edta == pytest.approx([24 - 22.5, 22.5 - 20.34, 20.34 - 17.221, 17.221 - 10.948, 10.948], abs=1e-9)


def test_ion_pairs_are_taken_only_when_asked_for():
    # Na⁺/K⁺ pairs with HPO4²⁻ (NaHPO4⁻ log β 13.445 on PO4³⁻, NIST SRD 46 via minteq.v4.dat)
    # take up part of the base form: the 1:1 phosphate standard comes out more acidic.
    ids, amounts = ["kh2po4", "na2hpo4"], [0.025, 0.025]
    plain = solve_equilibrium(ids, amounts)
    paired = solve_equilibrium(ids, amounts, ion_pairs=True)
    assert plain.speciation.metals is None
    assert "NaHPO4-" in paired.species_ids and "KHPO4-" in paired.species_ids
    assert -0.1 < paired.ph[0] - plain.ph[0] < -0.01


def test_binding_rows_serve_where_the_complex_table_has_none(catalog_copy, tmp_path):
    # Without the Ca-phosphate rows of complexes.csv, the metal_binding.csv constants of
    # CaHPO4 (log K 2.66 on HPO4²⁻) and CaPO4⁻ (6.46 on PO4³⁻), NIST SRD 46 / ThermoChimie
    # values given on the ligand species they bind, take their place.  Compared with the
    # table holding the same two complexes on the PO4³⁻ basis (CaHPO4 log β 15.035 =
    # 2.66 + pKa3 12.375): the same free Ca²⁺ within 0.01 in log.
    import shutil

    from tests.test_catalog_loader import delete_rows

    same_two = tmp_path / "same_two"
    shutil.copytree(catalog_copy, same_two)
    delete_rows(same_two, "complexes.csv", {"complex_id": "CaH2PO4+"})
    delete_rows(catalog_copy, "complexes.csv", {"metal": "Ca", "system_id": "phosphate"})
    ids, amounts = ["cacl2", "kh2po4", "na2hpo4"], [2e-3, 0.01, 0.01]
    table = solve_equilibrium(ids, amounts, 37.0, catalog=read_catalog(same_two)).speciation.metals
    rows = solve_equilibrium(ids, amounts, 37.0, catalog=read_catalog(catalog_copy)).speciation.metals
    assert {"Ca-phosphate(0)", "Ca-phosphate(-1)"} <= set(rows.complex_ids)
    ca_table = table.free_mol_l[0, table.metal_ids.index("Ca")]
    ca_rows = rows.free_mol_l[0, rows.metal_ids.index("Ca")]
    assert np.log10(ca_rows) == pytest.approx(np.log10(ca_table), abs=0.01)
    assert ca_table < 1.9e-3  # part of the calcium is bound


PAIR_CASES = [
    # name, poise reagents (mol/kg), PHREEQC totals (mmol/kgw)
    ("phosphate 1:1 in 0.1 NaCl", {"kh2po4": 0.025, "na2hpo4": 0.025, "nacl": 0.1},
     {"K": 25, "Na": 150, "P": 50, "Cl": 100}),
    ("phosphate in 0.45 NaCl", {"kh2po4": 0.02, "na2hpo4": 0.03, "nacl": 0.45}, {"K": 20, "Na": 510, "P": 50, "Cl": 450}),
    ("bicarbonate/carbonate in 0.2 NaCl", {"nahco3": 0.03, "na2co3": 0.01, "nacl": 0.2},
     {"Na": 250, "C(4)": 40, "Cl": 200}),
    ("carbonate in 0.45 NaCl", {"nahco3": 0.02, "na2co3": 0.02, "nacl": 0.45}, {"Na": 510, "C(4)": 40, "Cl": 450}),
]


@pytest.mark.parametrize("name, ours, theirs", PAIR_CASES, ids=[c[0] for c in PAIR_CASES])
def test_ion_pairs_agree_with_phreeqc_minteq_up_to_half_molar(minteq, name, ours, theirs):
    # With the NIST SRD 46 Na⁺/K⁺ pairs (ion_pairs=True) poise follows PHREEQC/minteq.v4.dat,
    # which carries the same pairs, up to I ≈ 0.55 mol/kg: measured on 58 random phosphate and
    # carbonate buffers in NaCl, median |ΔpH| 0.017, largest 0.060 (tolerance 0.07).  Without
    # the pairs the same comparison gives median 0.38: the pairs, not the activity model, make
    # that difference.
    solution = minteq.add_solution({"units": "mmol/kgw", "temp": 25.0, **theirs, "pH": "7 charge"})
    ids = list(ours)
    ph = solve_equilibrium(ids, [float(molal_to_molar(ours[i], 25.0)) for i in ids], 25.0, ion_pairs=True).ph[0]
    assert ph == pytest.approx(solution.pH, abs=0.07), name
    solution.forget()


def test_complexes_without_enthalpy_are_named_away_from_25_c():
    # Cu(Citrate)⁻ has no ΔH in minteq.v4.dat (line 6544: delta_h 0, no value): at 37 °C its
    # 25 °C log β is used, and the warning says so; at 25 °C there is nothing to say.
    ids, amounts = ["cuso4_5h2o", "na3_citrate_2h2o", "mes"], [1e-3, 5e-3, 0.02]
    warm = solve_equilibrium(ids, amounts, 37.0)
    assert any("Cu(Citrate)-" in w and "37 °C" in w for w in warm.warnings_for(0))
    assert not any("enthalpy" in w for w in solve_equilibrium(ids, amounts, 25.0).warnings_for(0))


def test_recalled_binding_constants_are_named_where_they_matter():
    # Zn-imidazole (metal_binding.csv: log K 2.5 at I = 0.1, from memory) holds most of the
    # zinc in 20 mM imidazole buffer: the warning names it.
    eq = solve_equilibrium(["znso4_7h2o", "imidazole", "hcl"], [1e-3, 0.02, 0.01])
    assert any("Zn-imidazole(+2)" in w and "from memory" in w for w in eq.warnings_for(0))
    assert not any("from memory" in w for w in solve_equilibrium(["cacl2", "na2h2edta_2h2o"], [1e-3, 2e-3])
                   .warnings_for(0))
